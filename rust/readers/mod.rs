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
use atoms::{frame_layout, parse_segment, Elements, Segment, Sink};
use scan::{Scan, Scanner, Span};
use std::ops::Range;

pub use file::read_xyz_path;

/// Atom lines per parallel work unit.
pub const CHUNK_LINES: usize = 16_384;

/// Element lookup injected by the caller: symbol -> (atomic number, the mass in u when the
/// symbol names one nuclide such as `D`, else `None`).
pub type ToNumber = dyn Fn(&str) -> Option<(i64, Option<f64>)> + Sync;

/// The comment lines of all frames in one buffer (no allocation per frame): frame k's is
/// `text[ends[k]..ends[k + 1]]`, without the line end.
#[derive(Debug, Clone, PartialEq)]
pub struct Comments {
    text: String,
    /// n_frames + 1 byte offsets into `text`.
    ends: Vec<usize>,
}

impl Default for Comments {
    fn default() -> Self {
        Comments {
            text: String::new(),
            ends: vec![0],
        }
    }
}

impl Comments {
    /// Number of frames.
    pub fn len(&self) -> usize {
        self.ends.len() - 1
    }

    /// No frames at all.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The comment line of frame `k`, or `None` past the last frame.
    pub fn get(&self, k: usize) -> Option<&str> {
        let (&a, &b) = (self.ends.get(k)?, self.ends.get(k + 1)?);
        Some(&self.text[a..b])
    }

    /// The comment lines in frame order.
    pub fn iter(&self) -> impl Iterator<Item = &str> + '_ {
        self.ends.windows(2).map(|w| &self.text[w[0]..w[1]])
    }

    /// Appends a frame's comment line (bytes that are not UTF-8 become U+FFFD).
    fn push(&mut self, line: &[u8]) {
        match std::str::from_utf8(line) {
            Ok(text) => self.text.push_str(text),
            Err(_) => self.text.push_str(&String::from_utf8_lossy(line)),
        }
        self.ends.push(self.text.len());
    }

    /// Empties the last frame's comment line.
    fn clear_last(&mut self) {
        let n = self.ends.len();
        if n >= 2 {
            self.text.truncate(self.ends[n - 2]);
            self.ends[n - 1] = self.ends[n - 2];
        }
    }
}

/// All frames of an XYZ file, flattened. Per frame the reader keeps two offsets (atoms and
/// comment); errors are kept for the bad frames only, and the `key=value` pairs of a comment
/// line are parsed when asked for ([`XyzFrames::info`]).
#[derive(Debug, Clone, PartialEq)]
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
    /// The comment line of each frame (empty for a frame whose count line was bad).
    pub comments: Comments,
    /// The bad frames, in frame order: (frame, the `Error::MalformedXyz` that made it bad).
    /// Every other frame was read.
    pub errors: Vec<(usize, Error)>,
}

impl XyzFrames {
    /// Number of frames (good and bad).
    pub fn n_frames(&self) -> usize {
        self.offsets.len() - 1
    }

    /// The error of frame `k`, or `None` when it was read.
    pub fn error(&self, k: usize) -> Option<&Error> {
        let i = self.errors.binary_search_by_key(&k, |(f, _)| *f).ok()?;
        Some(&self.errors[i].1)
    }

    /// `key=value` pairs of frame `k`'s comment line (extended XYZ; a bare key has value
    /// "T"); empty when the comment line is not a list of such pairs. Parsed on each call.
    pub fn info(&self, k: usize) -> Vec<(String, String)> {
        self.comments.get(k).map(comment_info).unwrap_or_default()
    }
}

/// `key=value` pairs of an (extended-XYZ) comment line, as [`XyzFrames::info`] gives them:
/// empty when the line is not a list of such pairs.
pub fn comment_info(comment: &str) -> Vec<(String, String)> {
    extxyz::parse_info(comment).unwrap_or_default()
}

/// A unit of parallel work: whole frames (`frames`, bad ones skipped) or, for a frame of
/// more than [`CHUNK_LINES`] atoms, one run of its atom lines; `atoms` is where its atoms
/// go in the output (frames that fail are dropped later).
struct Unit {
    frames: Range<usize>,
    /// (byte start, first atom, lines) of a run of atom lines of frame `frames.start`.
    part: Option<(usize, usize, usize)>,
    atoms: Range<usize>,
}

/// Units of about CHUNK_LINES atom lines, in file order; their `atoms` ranges tile the
/// output.
fn work_units(spans: &[Span], chunks: &[(usize, usize, usize)]) -> Vec<Unit> {
    let mut units = Vec::new();
    // the open unit of whole frames: frames first.., atoms unit_atom..atom, `lines` lines
    let (mut first, mut unit_atom, mut atom, mut lines) = (0usize, 0usize, 0usize, 0usize);
    let mut c = 0usize;
    for (f, span) in spans.iter().enumerate() {
        if !span.is_good() {
            continue;
        }
        let runs_from = c;
        while c < chunks.len() && chunks[c].0 == f {
            c += 1;
        }
        if c == runs_from {
            lines += span.n_atoms.max(1);
            atom += span.n_atoms;
            if lines >= CHUNK_LINES {
                units.push(Unit {
                    frames: first..f + 1,
                    part: None,
                    atoms: unit_atom..atom,
                });
                (first, unit_atom, lines) = (f + 1, atom, 0);
            }
            continue;
        }
        // a frame of several runs of atom lines: the open unit ends, one unit per run
        if lines > 0 {
            units.push(Unit {
                frames: first..f,
                part: None,
                atoms: unit_atom..atom,
            });
        }
        let starts = std::iter::once((span.atoms_start, 0usize))
            .chain(chunks[runs_from..c].iter().map(|&(_, b, a)| (b, a)));
        let stops = chunks[runs_from..c]
            .iter()
            .map(|&(_, _, a)| a)
            .chain(std::iter::once(span.n_atoms));
        for ((byte, first_atom), stop) in starts.zip(stops) {
            units.push(Unit {
                frames: f..f + 1,
                part: Some((byte, first_atom, stop - first_atom)),
                atoms: atom + first_atom..atom + stop,
            });
        }
        atom += span.n_atoms;
        (first, unit_atom, lines) = (f + 1, atom, 0);
    }
    if lines > 0 {
        units.push(Unit {
            frames: first..spans.len(),
            part: None,
            atoms: unit_atom..atom,
        });
    }
    units
}

/// Parses the atom lines of one unit into its stretch of the output; returns the errors of
/// its frames (at most one per frame, in frame order) and its masses (empty when none).
fn parse_unit(
    data: &[u8],
    scan: &Scan,
    unit: &Unit,
    mut sink: Sink,
    to_number: &ToNumber,
    source: &str,
) -> (Vec<(usize, Error)>, Vec<f64>) {
    let mut errors = Vec::new();
    let mut elements = Elements::new(to_number);
    for f in unit.frames.clone() {
        let span = &scan.spans[f];
        if !span.is_good() {
            continue;
        }
        let (start, first_atom, n_lines) = unit.part.unwrap_or((span.atoms_start, 0, span.n_atoms));
        let at = sink.at;
        let comment = scan.comments.get(f).unwrap_or_default();
        let failed = match frame_layout(comment, span, f, source) {
            Err(e) => Some(e),
            Ok(layout) => {
                let seg = Segment {
                    frame: f,
                    start,
                    n_lines,
                    first_atom,
                    first_line: span.count_line + 2 + first_atom,
                };
                parse_segment(
                    data,
                    &seg,
                    span.n_atoms,
                    &layout,
                    &mut elements,
                    &mut sink,
                    source,
                )
            }
        };
        if let Some(e) = failed {
            errors.push((f, e));
        }
        sink.at = at + n_lines;
    }
    (errors, sink.masses)
}

/// Reads every frame of XYZ text held in memory.
///
/// `source` names the input in error messages; `to_number` maps an element symbol to its
/// atomic number (the caller's periodic table). Never fails as a whole: each bad frame has
/// zero atoms and its error in `errors` (see the module notes). Empty input gives zero frames.
///
/// Memory: the output arrays are sized once from the scan (atom lines that exist, never a
/// count line's claim) and filled in place by the parallel units; besides them the reader
/// holds 24 bytes per frame while it runs.
pub fn read_xyz_bytes(data: &[u8], source: &str, to_number: &ToNumber) -> XyzFrames {
    // A UTF-8 byte-order mark (written by some editors) is not part of the first line.
    let data = data.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(data);
    let scan = Scanner { data, source }.scan();
    let units = work_units(&scan.spans, &scan.chunks);
    let total = units.last().map_or(0, |u| u.atoms.end);
    let mut positions = vec![[0.0f64; 3]; total];
    let mut numbers = vec![0i64; total];

    // Each unit fills its own stretch of the output, in parallel.
    let mut jobs = Vec::with_capacity(units.len());
    let (mut pos_rest, mut num_rest) = (positions.as_mut_slice(), numbers.as_mut_slice());
    for unit in &units {
        let n = unit.atoms.len();
        let (p, pr) = std::mem::take(&mut pos_rest).split_at_mut(n);
        let (z, zr) = std::mem::take(&mut num_rest).split_at_mut(n);
        (pos_rest, num_rest) = (pr, zr);
        let sink = Sink {
            positions: p,
            numbers: z,
            masses: Vec::new(),
            at: 0,
        };
        jobs.push((unit, sink));
    }
    let outs = parallel::map_owned(jobs, 1, |(unit, sink)| {
        parse_unit(data, &scan, unit, sink, to_number, source)
    });

    // Masses, where any unit has them.
    let mut masses = Vec::new();
    if outs.iter().any(|(_, m)| !m.is_empty()) {
        masses = vec![f64::NAN; total];
        for (unit, (_, m)) in units.iter().zip(&outs) {
            if !m.is_empty() {
                masses[unit.atoms.clone()].copy_from_slice(m);
            }
        }
    }

    // Errors by frame: the scan's and the units' (the first of a frame wins: units are in
    // line order).
    let mut parsed: Vec<(usize, Error)> = Vec::new();
    for (errs, _) in outs {
        for (f, e) in errs {
            if parsed.last().is_none_or(|(g, _)| *g != f) {
                parsed.push((f, e));
            }
        }
    }
    let Scan {
        spans,
        bad,
        comments,
        ..
    } = scan;
    let errors = merge_by_frame(bad, parsed);

    // Offsets; the atoms of frames that failed are dropped (moving the later ones down).
    let mut offsets = Vec::with_capacity(spans.len() + 1);
    offsets.push(0);
    let mut failed = errors.iter().map(|(f, _)| *f).peekable();
    let (mut read, mut write) = (0usize, 0usize);
    for (f, span) in spans.iter().enumerate() {
        let n = span.slots();
        if failed.next_if_eq(&f).is_none() {
            if read != write {
                positions.copy_within(read..read + n, write);
                numbers.copy_within(read..read + n, write);
                if !masses.is_empty() {
                    masses.copy_within(read..read + n, write);
                }
            }
            write += n;
        }
        read += n;
        offsets.push(write);
    }
    drop(spans);
    if write < total {
        positions.truncate(write);
        numbers.truncate(write);
        positions.shrink_to_fit();
        numbers.shrink_to_fit();
        if !masses.is_empty() {
            masses.truncate(write);
            masses.shrink_to_fit();
        }
    }
    XyzFrames {
        positions,
        numbers,
        masses,
        offsets,
        comments,
        errors,
    }
}

/// Two lists sorted by frame, with no frame in both, as one.
fn merge_by_frame(a: Vec<(usize, Error)>, b: Vec<(usize, Error)>) -> Vec<(usize, Error)> {
    if b.is_empty() {
        return a;
    }
    let mut out = Vec::with_capacity(a.len() + b.len());
    let (mut a, mut b) = (a.into_iter().peekable(), b.into_iter().peekable());
    loop {
        let take_a = match (a.peek(), b.peek()) {
            (Some(x), Some(y)) => x.0 < y.0,
            (Some(_), None) => true,
            (None, Some(_)) => false,
            (None, None) => break,
        };
        out.extend(if take_a { a.next() } else { b.next() });
    }
    out
}
