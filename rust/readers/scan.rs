//! The serial scan: finds each frame's count, comment and atom lines by jumping over atom
//! lines, keeps the comment lines, and resynchronises after a malformed frame.

use super::lines::{is_blank, read_line, show, tokens};
use super::numbers::{parse_count, parse_f64};
use super::{Comments, CHUNK_LINES};
use crate::error::Error;

/// Where a frame's atom lines are: the scan's one record per frame (24 bytes).
#[derive(Debug, Clone, Copy)]
pub(super) struct Span {
    /// One-based line number of the count line.
    pub(super) count_line: usize,
    /// Byte offset of the first atom line; [`Span::BAD`] marks a bad frame.
    pub(super) atoms_start: usize,
    pub(super) n_atoms: usize,
}

impl Span {
    const BAD: Span = Span {
        count_line: 0,
        atoms_start: usize::MAX,
        n_atoms: 0,
    };

    /// A frame whose count, comment and atom lines were all found.
    #[inline]
    pub(super) fn is_good(&self) -> bool {
        self.atoms_start != usize::MAX
    }

    /// Atoms the frame takes in the output before the atom lines are parsed (0 when bad).
    #[inline]
    pub(super) fn slots(&self) -> usize {
        if self.is_good() {
            self.n_atoms
        } else {
            0
        }
    }
}

/// What the scan found. Only the spans and the comment offsets grow with the number of
/// frames; errors and chunks are kept for the frames that have them.
#[derive(Debug)]
pub(super) struct Scan {
    /// One per frame, good or bad.
    pub(super) spans: Vec<Span>,
    /// The errors of the frames the scan found bad, by frame.
    pub(super) bad: Vec<(usize, Error)>,
    /// The comment line of each frame (empty for a bad frame).
    pub(super) comments: Comments,
    /// (frame, byte start, first atom) of each further run of [`CHUNK_LINES`] atom lines of
    /// a frame with more atoms than that, by frame.
    pub(super) chunks: Vec<(usize, usize, usize)>,
    /// Byte end of the last frame while it is a good one.
    last_end: Option<usize>,
}

impl Scan {
    fn push_good(&mut self, span: Span, comment: &[u8], end: usize) {
        self.spans.push(span);
        self.comments.push(comment);
        self.last_end = Some(end);
    }

    fn push_bad(&mut self, error: Error) {
        self.bad.push((self.spans.len(), error));
        self.spans.push(Span::BAD);
        self.comments.push(b"");
        self.last_end = None;
    }

    /// The last frame, found good, turns out bad.
    fn make_last_bad(&mut self, error: Error) {
        let frame = self.spans.len() - 1;
        self.spans[frame] = Span::BAD;
        self.comments.clear_last();
        while matches!(self.chunks.last(), Some(&(f, _, _)) if f == frame) {
            self.chunks.pop();
        }
        self.bad.push((frame, error));
        self.last_end = None;
    }
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
    pub(super) fn scan(&self) -> Scan {
        let data = self.data;
        let mut out = Scan {
            spans: Vec::new(),
            bad: Vec::new(),
            comments: Comments::default(),
            chunks: Vec::new(),
            last_end: None,
        };
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
                    match self.recover(&mut out, pos, line, reason, text) {
                        Some((p, l)) => (pos, line) = (p, l),
                        None => break,
                    }
                    continue;
                }
            };
            let frame = out.spans.len();
            let Some((comment, atoms_start)) = read_line(data, next) else {
                out.push_bad(self.error(
                    frame,
                    line + 1,
                    "file ends before the comment line".to_string(),
                ));
                break;
            };
            let chunks_before = out.chunks.len();
            let mut p = atoms_start;
            let mut present = 0usize;
            let mut blank_run = 0usize;
            while present < n {
                if present > 0 && present.is_multiple_of(CHUNK_LINES) {
                    out.chunks.push((frame, p, present));
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
                out.chunks.truncate(chunks_before);
                let k = present - blank_run;
                // A count claiming more atoms than the file holds must not swallow the good
                // frames after it: resume at the next plausible frame, if there is one.
                if let Some((q, lq)) = self.resync(atoms_start, line + 2) {
                    out.push_bad(self.error(
                        frame,
                        line,
                        format!(
                            "the count line says {n} atoms, but the file ends first; the next \
                             frame starts at line {lq}"
                        ),
                    ));
                    (pos, line) = (q, lq);
                    continue;
                }
                out.push_bad(self.error(
                    frame,
                    line + 2 + k,
                    format!("file ends after {k} of {n} atoms"),
                ));
                break;
            }
            let span = Span {
                count_line: line,
                atoms_start,
                n_atoms: n,
            };
            out.push_good(span, comment, p);
            pos = p;
            line += n + 2;
        }
        out
    }

    /// The line at `pos` is not a count line. Decides whether the previous frame's count
    /// was wrong or this is stray text, records the error, and returns where to resume.
    pub(super) fn recover(
        &self,
        out: &mut Scan,
        pos: usize,
        line: usize,
        reason: String,
        text: &[u8],
    ) -> Option<(usize, usize)> {
        // A previous frame ending exactly here may have claimed too many or too few atoms.
        let prev = match (out.spans.last(), out.last_end) {
            (Some(s), Some(end)) if end == pos => Some((s.count_line, s.atoms_start, s.n_atoms)),
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
            let frame = out.spans.len() - 1;
            if q < pos {
                out.make_last_bad(self.error(
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
                out.make_last_bad(self.error(
                    frame,
                    cl,
                    format!(
                        "the count line says {n} atoms, but atom lines continue at line {line}"
                    ),
                ));
                return Some((q, lq));
            }
        }
        let frame = out.spans.len();
        let after_last = found.is_none() && !out.spans.is_empty() && {
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
        out.push_bad(self.error(frame, line, reason));
        found
    }
}
