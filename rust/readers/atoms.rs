//! Atom lines: the layout of each frame and the parse of its atom lines (run in parallel
//! over units of work).

use super::extxyz::{layout_from_properties, parse_info, Layout, STANDARD};
use super::lines::{find_newline, show, skip_spaces, token_end};
use super::numbers::parse_f64;
use super::scan::Span;
use super::ToNumber;
use crate::error::Error;

/// A run of atom lines of one frame, parsed as one piece.
#[derive(Debug, Clone, Copy)]
pub(super) struct Segment {
    pub(super) frame: usize,
    pub(super) start: usize,
    pub(super) n_lines: usize,
    pub(super) first_atom: usize,
    pub(super) first_line: usize,
}

/// Where a unit of work writes its atoms: its own stretch of the output arrays, filled in
/// file order (a frame that fails leaves its stretch to be dropped when the frames are
/// assembled).
pub(super) struct Sink<'a> {
    pub(super) positions: &'a mut [[f64; 3]],
    pub(super) numbers: &'a mut [i64],
    /// Empty until an atom of the unit has a mass of its own; from then on parallel to
    /// `positions` (NaN = the standard atomic weight).
    pub(super) masses: Vec<f64>,
    /// Index of the next atom.
    pub(super) at: usize,
}

impl Sink<'_> {
    /// One atom: position, atomic number and mass (NaN = the standard atomic weight).
    #[inline]
    fn push(&mut self, xyz: [f64; 3], z: i64, mass: f64) {
        if !mass.is_nan() {
            if self.masses.is_empty() {
                self.masses = vec![f64::NAN; self.positions.len()];
            }
            self.masses[self.at] = mass;
        }
        self.positions[self.at] = xyz;
        self.numbers[self.at] = z;
        self.at += 1;
    }
}

/// The column layout a frame's comment line gives (`Properties`), or the error that makes
/// the frame a bad one (reported on the comment line).
pub(super) fn frame_layout(
    comment: &str,
    span: &Span,
    frame: usize,
    source: &str,
) -> std::result::Result<Layout, Error> {
    // a list of key=value pairs has at least one '='
    if !comment.contains('=') {
        return Ok(STANDARD);
    }
    let info = parse_info(comment).unwrap_or_default();
    match info
        .iter()
        .find(|(k, _)| k.eq_ignore_ascii_case("properties"))
    {
        None => Ok(STANDARD),
        Some((_, v)) => layout_from_properties(v).map_err(|reason| Error::MalformedXyz {
            source: source.to_string(),
            frame,
            line: span.count_line + 1,
            reason,
        }),
    }
}

/// Symbol -> (number, nuclide mass or NaN) with a tiny cache (molecules repeat few elements).
pub(super) struct Elements<'a> {
    to_number: &'a ToNumber,
    /// (symbol packed into a u64, number, mass or NaN); symbols of 1..=8 bytes only.
    cache: Vec<(u64, i64, f64)>,
}

/// A symbol of 1..=8 bytes packed into a u64 (zero-padded), for a cheap cache compare.
#[inline]
pub(super) fn pack(sym: &[u8]) -> Option<u64> {
    if sym.is_empty() || sym.len() > 8 {
        return None;
    }
    let mut b = [0u8; 8];
    b[..sym.len()].copy_from_slice(sym);
    Some(u64::from_le_bytes(b))
}

impl<'a> Elements<'a> {
    pub(super) fn new(to_number: &'a ToNumber) -> Self {
        Elements {
            to_number,
            cache: Vec::new(),
        }
    }

    /// Atomic number and nuclide mass (NaN for an element symbol or an atomic number).
    pub(super) fn number(&mut self, sym: &[u8]) -> std::result::Result<(i64, f64), String> {
        let key = pack(sym);
        if let Some(key) = key {
            if let Some((_, z, m)) = self.cache.iter().find(|(s, _, _)| *s == key) {
                return Ok((*z, *m));
            }
        }
        let z = if sym.iter().all(u8::is_ascii_digit) {
            let z: i64 = std::str::from_utf8(sym)
                .ok()
                .and_then(|s| s.parse().ok())
                .unwrap_or(0);
            if !(1..=118).contains(&z) {
                return Err(format!("atomic number '{}' is outside 1..118", show(sym)));
            }
            (z, f64::NAN)
        } else {
            let s = std::str::from_utf8(sym).ok();
            match s.and_then(|s| (self.to_number)(s)) {
                Some((z, m)) => (z, m.unwrap_or(f64::NAN)),
                None => return Err(format!("unknown element symbol '{}'", show(sym))),
            }
        };
        if let (Some(key), true) = (key, self.cache.len() < 16) {
            self.cache.push((key, z.0, z.1));
        }
        Ok(z)
    }
}

pub(super) fn parse_segment(
    data: &[u8],
    seg: &Segment,
    n_atoms: usize,
    layout: &Layout,
    elements: &mut Elements,
    out: &mut Sink,
    source: &str,
) -> Option<Error> {
    let mut pos = seg.start;
    let len = data.len();
    let err = |k: usize, reason: String| Error::MalformedXyz {
        source: source.to_string(),
        frame: seg.frame,
        line: seg.first_line + k,
        reason,
    };
    for k in 0..seg.n_lines {
        // One pass over the line: keep the element and position columns, count columns
        // up to `needed`, then jump to the next line past any extra columns.
        let mut sym: &[u8] = &[];
        let mut mass: &[u8] = &[];
        let mut coord: [&[u8]; 3] = [&[]; 3];
        let mut n = 0usize;
        let mut i = pos;
        while n < layout.needed {
            i = skip_spaces(data, i);
            if i >= len || data[i] == b'\n' {
                break;
            }
            let start = i;
            i = token_end(data, i);
            let t = &data[start..i];
            if n == layout.species {
                sym = t;
            } else if n >= layout.pos && n < layout.pos + 3 {
                coord[n - layout.pos] = t;
            } else if Some(n) == layout.masses {
                mass = t;
            }
            n += 1;
        }
        pos = match find_newline(data, i) {
            Some(e) => e + 1,
            None => len,
        };
        if n == 0 {
            return Some(err(
                k,
                format!(
                    "blank line where atom {} of {n_atoms} was expected",
                    seg.first_atom + k + 1
                ),
            ));
        }
        if n < layout.needed {
            let reason = if layout.extended {
                format!(
                    "expected {} columns (from Properties), found {n}",
                    layout.needed
                )
            } else if n == 3
                && parse_f64(sym).is_some()
                && sym.iter().any(|b| matches!(b, b'.' | b'e' | b'E'))
            {
                // three numbers, the first written as a real (not an atomic number): the
                // element symbol is missing
                "the element symbol is missing: expected 'Symbol x y z', found 3 numbers"
                    .to_string()
            } else {
                format!("expected 3 coordinates, found {}", n - 1)
            };
            return Some(err(k, reason));
        }
        let mut xyz = [0.0; 3];
        for (a, v) in xyz.iter_mut().enumerate() {
            let t = coord[a];
            match parse_f64(t) {
                Some(x) if x.is_finite() => *v = x,
                Some(x) if x.is_nan() => return Some(err(k, "NaN coordinate".to_string())),
                Some(_) => return Some(err(k, "infinite coordinate".to_string())),
                None => {
                    return Some(err(k, format!("coordinate '{}' is not a number", show(t))));
                }
            }
        }
        let (z, mut m) = match elements.number(sym) {
            Ok(found) => found,
            Err(reason) => return Some(err(k, reason)),
        };
        if layout.masses.is_some() {
            m = match parse_f64(mass) {
                Some(v) if v.is_finite() && v > 0.0 => v,
                _ => {
                    return Some(err(
                        k,
                        format!("mass '{}' is not a positive number of u", show(mass)),
                    ))
                }
            };
        }
        out.push(xyz, z, m);
    }
    None
}
