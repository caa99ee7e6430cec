//! The serial scan: finds each frame's count, comment and atom lines by jumping over atom
//! lines, and resynchronises after a malformed frame.

use super::lines::{is_blank, read_line, show, tokens};
use super::numbers::{parse_count, parse_f64};
use super::CHUNK_LINES;
use crate::error::Error;
use std::ops::Range;

/// A frame found by the scan.
#[derive(Debug)]
pub(super) struct Span {
    pub(super) count_line: usize,
    pub(super) comment: Range<usize>,
    pub(super) atoms_start: usize,
    pub(super) n_atoms: usize,
    /// (byte start, first atom index) of each chunk of atom lines after the first
    /// (empty, so unallocated, for frames of at most CHUNK_LINES atoms).
    pub(super) chunks: Vec<(usize, usize)>,
    pub(super) end: usize,
}

#[derive(Debug)]
pub(super) enum Scanned {
    Good(Span),
    Bad(Error),
}

pub(super) struct Scanner<'a> {
    pub(super) data: &'a [u8],
    pub(super) source: &'a str,
}

impl Scanner<'_> {
    pub(super) fn error(&self, frame: usize, line: usize, reason: String) -> Error {
        Error::MalformedXyz {
            source: self.source.to_string(),
            frame,
            line,
            reason,
        }
    }

    /// A line that could be an atom line: at least four columns, three of them numbers.
    pub(super) fn plausible_atom(line: &[u8]) -> bool {
        let mut toks: [&[u8]; 8] = [&[]; 8];
        let n = tokens(line, &mut toks, 8);
        n >= 4
            && toks[..n.min(8)]
                .iter()
                .filter(|t| parse_f64(t).is_some())
                .count()
                >= 3
    }

    /// The first plausible frame start at or after `pos` (line `line`): a lone positive
    /// whole number, a comment line, then plausible atom lines (up to three checked).
    pub(super) fn resync(&self, mut pos: usize, mut line: usize) -> Option<(usize, usize)> {
        while let Some((text, next)) = read_line(self.data, pos) {
            if let Ok(n) = parse_count(text) {
                if n > 0 && self.plausible_frame(next, n) {
                    return Some((pos, line));
                }
            }
            pos = next;
            line += 1;
        }
        None
    }

    pub(super) fn plausible_frame(&self, after_count: usize, n: usize) -> bool {
        let Some((_, mut p)) = read_line(self.data, after_count) else {
            return false;
        };
        for _ in 0..n.min(3) {
            match read_line(self.data, p) {
                Some((text, next)) if Self::plausible_atom(text) => p = next,
                _ => return false,
            }
        }
        true
    }

    /// Splits the data into frames.
    pub(super) fn scan(&self) -> Vec<Scanned> {
        let data = self.data;
        let mut frames: Vec<Scanned> = Vec::new();
        let (mut pos, mut line) = (0usize, 1usize);
        while pos < data.len() {
            if is_blank(&data[pos..]) {
                break;
            }
            let Some((text, next)) = read_line(data, pos) else {
                break;
            };
            let n = match parse_count(text) {
                Ok(n) => n,
                Err(reason) => {
                    match self.recover(&mut frames, pos, line, reason, text) {
                        Some((p, l)) => (pos, line) = (p, l),
                        None => break,
                    }
                    continue;
                }
            };
            let frame = frames.len();
            let Some((comment, atoms_start)) = read_line(data, next) else {
                frames.push(Scanned::Bad(self.error(
                    frame,
                    line + 1,
                    "file ends before the comment line".to_string(),
                )));
                break;
            };
            let comment_start = next;
            let comment = comment_start..comment_start + comment.len();
            let mut chunks = Vec::new();
            let mut p = atoms_start;
            let mut present = 0usize;
            let mut blank_run = 0usize;
            while present < n {
                if present > 0 && present.is_multiple_of(CHUNK_LINES) {
                    chunks.push((p, present));
                }
                match read_line(data, p) {
                    Some((t, nx)) => {
                        blank_run = if is_blank(t) { blank_run + 1 } else { 0 };
                        p = nx;
                        present += 1;
                    }
                    None => break,
                }
            }
            if present < n {
                let k = present - blank_run;
                // A count claiming more atoms than the file holds must not swallow the good
                // frames after it: resume at the next plausible frame, if there is one.
                if let Some((q, lq)) = self.resync(atoms_start, line + 2) {
                    frames.push(Scanned::Bad(self.error(
                        frame,
                        line,
                        format!(
                            "the count line says {n} atoms, but the file ends first; the next \
                             frame starts at line {lq}"
                        ),
                    )));
                    (pos, line) = (q, lq);
                    continue;
                }
                frames.push(Scanned::Bad(self.error(
                    frame,
                    line + 2 + k,
                    format!("file ends after {k} of {n} atoms"),
                )));
                break;
            }
            frames.push(Scanned::Good(Span {
                count_line: line,
                comment,
                atoms_start,
                n_atoms: n,
                chunks,
                end: p,
            }));
            pos = p;
            line += n + 2;
        }
        frames
    }

    /// The line at `pos` is not a count line. Decides whether the previous frame's count
    /// was wrong or this is stray text, records the error, and returns where to resume.
    pub(super) fn recover(
        &self,
        frames: &mut Vec<Scanned>,
        pos: usize,
        line: usize,
        reason: String,
        text: &[u8],
    ) -> Option<(usize, usize)> {
        // A previous frame ending exactly here may have claimed too many or too few atoms.
        let prev = match frames.last() {
            Some(Scanned::Good(s)) if s.end == pos => {
                Some((s.count_line, s.atoms_start, s.n_atoms))
            }
            _ => None,
        };
        let (from, from_line) = match prev {
            Some((cl, start, _)) => (start, cl + 2),
            None => (
                read_line(self.data, pos).map_or(self.data.len(), |(_, nx)| nx),
                line + 1,
            ),
        };
        let found = self.resync(from, from_line);
        if let (Some((cl, _, n)), Some((q, lq))) = (prev, found) {
            let frame = frames.len() - 1;
            if q < pos {
                frames[frame] = Scanned::Bad(self.error(
                    frame,
                    cl,
                    format!(
                        "the count line says {n} atoms, but the next frame starts at line {lq} \
                         after {} atom lines",
                        lq - cl - 2
                    ),
                ));
                return Some((q, lq));
            }
            if Self::plausible_atom(text) {
                frames[frame] = Scanned::Bad(self.error(
                    frame,
                    cl,
                    format!(
                        "the count line says {n} atoms, but atom lines continue at line {line}"
                    ),
                ));
                return Some((q, lq));
            }
        }
        let frame = frames.len();
        let after_last = found.is_none() && !frames.is_empty() && {
            // Stray text unless it looks like a frame with a bad count line.
            let third = read_line(self.data, pos)
                .and_then(|(_, a)| read_line(self.data, a))
                .and_then(|(_, b)| read_line(self.data, b));
            !matches!(third, Some((t, _)) if Self::plausible_atom(t))
        };
        let reason = if after_last && !is_blank(text) {
            format!("unexpected text after the last frame: '{}'", show(text))
        } else {
            reason
        };
        frames.push(Scanned::Bad(self.error(frame, line, reason)));
        found
    }
}
