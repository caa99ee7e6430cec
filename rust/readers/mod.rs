//! Fast multi-frame XYZ reader: standard XYZ and extended XYZ.
//!
//! A frame is a count line (a lone whole number n), a comment line, and n atom lines
//! `Symbol x y z [extra columns]` in Å. In extended XYZ the comment line holds `key=value`
//! pairs (values may be quoted "…" or braced {…}); `Properties=species:S:1:pos:R:3:…` says
//! which columns hold the element and the position, and is honoured. The element column may
//! also hold an atomic number ("6"); a `Z:I:1` property stands in for a missing `species`.
//! Isotopes: the symbols `D` and `T` (hydrogen-2 and -3, through the caller's symbol lookup)
//! and a `masses:R:1` column (u; it wins over the symbol) give atoms their own masses.
//!
//! How it is fast: one serial pass finds the frames by jumping over atom lines with a
//! vectorised newline search (memchr; no tokenising); then the atom lines are parsed in parallel
//! in units of about [`CHUNK_LINES`] lines (many small frames per unit, or one chunk of a big
//! frame), on the current rayon pool (wrap a call in `parallel::install` to choose the
//! thread count). Results are in file order and identical for any thread count.
//!
//! Errors never stop the read: each bad frame gets zero atoms and an
//! `Error::MalformedXyz { frame, line, reason }`, and reading resumes. When a frame's line
//! structure is intact the next frame starts where the count line says; when the count line
//! was wrong (or a line is not a count where one should be), the reader scans forward for
//! the next line that is a lone positive whole number followed by a comment line and
//! plausible atom lines. Trailing blank lines are fine; blank lines elsewhere are errors.
//!
//! Files by job: `lines` (line and token scanning), `numbers` (counts and coordinates),
//! `extxyz` (comment line and `Properties`), `scan` (the serial frame scan), `atoms`
//! (headers and the parallel parse of atom lines), `file` (memory-mapped files).

mod atoms;
mod extxyz;
mod file;
mod lines;
mod numbers;
mod scan;
#[cfg(test)]
mod tests;

use crate::error::Error;
use crate::parallel;
use atoms::{parse_header, parse_segment, Elements, Header, Segment, UnitOut};
use scan::{Scanned, Scanner};

pub use file::read_xyz_path;

/// Atom lines per parallel work unit.
pub const CHUNK_LINES: usize = 16_384;

/// Element lookup injected by the caller: symbol -> (atomic number, the mass in u when the
/// symbol names one nuclide such as `D`, else `None`).
pub type ToNumber = dyn Fn(&str) -> Option<(i64, Option<f64>)> + Sync;

/// All frames of an XYZ file, flattened.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct XyzFrames {
    /// Positions of all atoms of all frames, Å, frame after frame.
    pub positions: Vec<[f64; 3]>,
    /// Atomic numbers, parallel to `positions`.
    pub numbers: Vec<i64>,
    /// Masses in u parallel to `positions`, NaN where the file gives none (the standard
    /// atomic weight applies); empty when no atom of the file has a mass of its own (a
    /// `masses` column or a nuclide symbol such as `D`).
    pub masses: Vec<f64>,
    /// n_frames + 1 offsets into `positions`: frame f is `offsets[f]..offsets[f + 1]`.
    /// A bad frame has zero atoms.
    pub offsets: Vec<usize>,
    /// The comment line of each frame (without the line end; empty for a frame whose count
    /// line was bad).
    pub comments: Vec<String>,
    /// `key=value` pairs of each comment line (extended XYZ; a bare key has value "T");
    /// empty when the comment line is not a list of such pairs.
    pub info: Vec<Vec<(String, String)>>,
    /// Per frame: `None`, or the `Error::MalformedXyz` that made it a bad frame.
    pub errors: Vec<Option<Error>>,
}

impl XyzFrames {
    /// Number of frames (good and bad).
    pub fn n_frames(&self) -> usize {
        self.errors.len()
    }
}

/// Reads every frame of XYZ text held in memory.
///
/// `source` names the input in error messages; `to_number` maps an element symbol to its
/// atomic number (the caller's periodic table). Never fails as a whole: each bad frame has
/// zero atoms and its error in `errors` (see the module notes). Empty input gives zero frames.
pub fn read_xyz_bytes(data: &[u8], source: &str, to_number: &ToNumber) -> XyzFrames {
    // A UTF-8 byte-order mark (written by some editors) is not part of the first line.
    let data = data.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(data);
    let scanned = Scanner { data, source }.scan();
    let headers: Vec<Option<Header>> = parallel::map_items(&scanned, 1, |f, s| match s {
        Scanned::Good(span) => Some(parse_header(data, span, f, source)),
        Scanned::Bad(_) => None,
    });

    // Work units of about CHUNK_LINES atom lines, in file order.
    let mut units: Vec<Vec<Segment>> = Vec::new();
    let mut current: Vec<Segment> = Vec::new();
    let mut lines_in_current = 0usize;
    for (f, s) in scanned.iter().enumerate() {
        let (Scanned::Good(span), Some(Header { layout: Ok(_), .. })) = (s, &headers[f]) else {
            continue;
        };
        let first = std::iter::once((span.atoms_start, 0usize));
        for (c, (start, first_atom)) in first.chain(span.chunks.iter().copied()).enumerate() {
            let stop = span.chunks.get(c).map_or(span.n_atoms, |x| x.1);
            let n_lines = stop - first_atom;
            current.push(Segment {
                frame: f,
                start,
                n_lines,
                first_atom,
                first_line: span.count_line + 2 + first_atom,
            });
            lines_in_current += n_lines.max(1);
            if lines_in_current >= CHUNK_LINES {
                units.push(std::mem::take(&mut current));
                lines_in_current = 0;
            }
        }
    }
    if !current.is_empty() {
        units.push(current);
    }

    let outs: Vec<UnitOut> = parallel::map_items(&units, 1, |_, segs| {
        let mut out = UnitOut::default();
        let n_lines: usize = segs.iter().map(|s| s.n_lines).sum();
        out.positions.reserve(n_lines);
        out.numbers.reserve(n_lines);
        let mut elements = Elements::new(to_number);
        for seg in segs {
            let (n_atoms, layout) = match (&scanned[seg.frame], &headers[seg.frame]) {
                (Scanned::Good(span), Some(Header { layout: Ok(l), .. })) => (span.n_atoms, *l),
                _ => continue,
            };
            let before = out.positions.len();
            let e = parse_segment(data, seg, n_atoms, &layout, &mut elements, &mut out, source);
            out.results
                .push((seg.frame, out.positions.len() - before, e));
        }
        out
    });

    // Assembly: the first error of each frame wins (segments are in line order).
    let n_frames = scanned.len();
    let mut errors: Vec<Option<Error>> = Vec::with_capacity(n_frames);
    let mut comments = Vec::with_capacity(n_frames);
    let mut info = Vec::with_capacity(n_frames);
    for (s, h) in scanned.into_iter().zip(headers) {
        match (s, h) {
            (Scanned::Bad(e), _) => {
                errors.push(Some(e));
                comments.push(String::new());
                info.push(Vec::new());
            }
            (Scanned::Good(_), Some(h)) => {
                errors.push(h.layout.err());
                comments.push(h.comment);
                info.push(h.info);
            }
            (Scanned::Good(_), None) => {
                errors.push(None);
                comments.push(String::new());
                info.push(Vec::new());
            }
        }
    }
    for out in &outs {
        for (f, _, e) in &out.results {
            if errors[*f].is_none() {
                errors[*f] = e.clone();
            }
        }
    }
    let mut counts = vec![0usize; n_frames];
    for out in &outs {
        for &(f, len, _) in &out.results {
            if errors[f].is_none() {
                counts[f] += len;
            }
        }
    }
    let total: usize = counts.iter().sum();
    let mut positions = Vec::with_capacity(total);
    let mut numbers = Vec::with_capacity(total);
    let any_mass = outs.iter().any(|o| !o.masses.is_empty());
    let mut masses = Vec::with_capacity(if any_mass { total } else { 0 });
    for out in &outs {
        let mut at = 0usize;
        for &(f, len, _) in &out.results {
            if errors[f].is_none() {
                positions.extend_from_slice(&out.positions[at..at + len]);
                numbers.extend_from_slice(&out.numbers[at..at + len]);
                if any_mass {
                    if out.masses.is_empty() {
                        masses.resize(masses.len() + len, f64::NAN);
                    } else {
                        masses.extend_from_slice(&out.masses[at..at + len]);
                    }
                }
            }
            at += len;
        }
    }
    let mut offsets = Vec::with_capacity(n_frames + 1);
    offsets.push(0);
    for c in counts {
        offsets.push(offsets[offsets.len() - 1] + c);
    }
    XyzFrames {
        positions,
        numbers,
        masses,
        offsets,
        comments,
        info,
        errors,
    }
}
