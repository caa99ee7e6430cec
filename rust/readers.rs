//! Fast multi-frame XYZ reader: standard XYZ and extended XYZ.
//!
//! A frame is a count line (a lone whole number n), a comment line, and n atom lines
//! `Symbol x y z [extra columns]` in Å. In extended XYZ the comment line holds `key=value`
//! pairs (values may be quoted "…" or braced {…}); `Properties=species:S:1:pos:R:3:…` says
//! which columns hold the element and the position, and is honoured. The element column may
//! also hold an atomic number ("6"); a `Z:I:1` property stands in for a missing `species`.
//!
//! How it is fast: one serial pass finds the frames by jumping over atom lines with a
//! word-at-a-time newline search (no tokenising); then the atom lines are parsed in parallel
//! in units of about [`CHUNK_LINES`] lines (many small frames per unit, or one chunk of a big
//! frame), on the current rayon pool (wrap a call in `ThreadPool::install` to choose the
//! thread count). Results are in file order and identical for any thread count.
//!
//! Errors never stop the read: each bad frame gets zero atoms and an
//! `Error::MalformedXyz { frame, line, reason }`, and reading resumes. When a frame's line
//! structure is intact the next frame starts where the count line says; when the count line
//! was wrong (or a line is not a count where one should be), the reader scans forward for
//! the next line that is a lone positive whole number followed by a comment line and
//! plausible atom lines. Trailing blank lines are fine; blank lines elsewhere are errors.

use crate::error::{Error, Result};
use rayon::prelude::*;
use std::ops::Range;

/// Atom lines per parallel work unit.
pub const CHUNK_LINES: usize = 16_384;

/// Element lookup injected by the caller: symbol -> atomic number.
pub type ToNumber = dyn Fn(&str) -> Option<i64> + Sync;

/// All frames of an XYZ file, flattened.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct XyzFrames {
    /// Positions of all atoms of all frames, Å, frame after frame.
    pub positions: Vec<[f64; 3]>,
    /// Atomic numbers, parallel to `positions`.
    pub numbers: Vec<i64>,
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

// ---------- lines ----------

/// Position of the first b'\n' at or after `from`, eight bytes at a time.
fn find_newline(data: &[u8], from: usize) -> Option<usize> {
    const LO: u64 = 0x0101_0101_0101_0101;
    const HI: u64 = 0x8080_8080_8080_8080;
    const NL: u64 = 0x0a0a_0a0a_0a0a_0a0a;
    let rest = data.get(from..)?;
    let mut chunks = rest.chunks_exact(8);
    let mut base = from;
    for c in &mut chunks {
        if let Ok(bytes) = <[u8; 8]>::try_from(c) {
            let x = u64::from_le_bytes(bytes) ^ NL;
            // The lowest set bit marks the first zero byte of x exactly.
            let t = x.wrapping_sub(LO) & !x & HI;
            if t != 0 {
                return Some(base + (t.trailing_zeros() / 8) as usize);
            }
        }
        base += 8;
    }
    chunks
        .remainder()
        .iter()
        .position(|&b| b == b'\n')
        .map(|p| base + p)
}

/// The line starting at `pos` (without "\n" or "\r\n") and the start of the next line, or
/// `None` at the end of the data.
#[inline]
fn read_line(data: &[u8], pos: usize) -> Option<(&[u8], usize)> {
    if pos >= data.len() {
        return None;
    }
    let (end, next) = match find_newline(data, pos) {
        Some(e) => (e, e + 1),
        None => (data.len(), data.len()),
    };
    let mut line = &data[pos..end];
    if let [head @ .., b'\r'] = line {
        line = head;
    }
    Some((line, next))
}

#[inline]
fn is_space(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\r' | b'\x0b' | b'\x0c')
}

/// Index of the first byte at or after `i` that is not a space or tab (or \r, \v, \f),
/// eight bytes at a time over runs of spaces.
#[inline]
fn skip_spaces(data: &[u8], mut i: usize) -> usize {
    loop {
        if let Some(Ok(bytes)) = data.get(i..i + 8).map(<[u8; 8]>::try_from) {
            let t = u64::from_le_bytes(bytes) ^ 0x2020_2020_2020_2020;
            if t == 0 {
                i += 8;
                continue;
            }
            i += (t.trailing_zeros() / 8) as usize;
        }
        match data.get(i) {
            Some(&b) if is_space(b) => i += 1,
            _ => return i,
        }
    }
}

/// Index just past the token starting at `i`: the first whitespace byte or line end,
/// eight bytes at a time (a word with no byte <= 0x20 holds no delimiter).
#[inline]
fn token_end(data: &[u8], mut i: usize) -> usize {
    const LIM: u64 = 0x2121_2121_2121_2121;
    const HI: u64 = 0x8080_8080_8080_8080;
    loop {
        if let Some(Ok(bytes)) = data.get(i..i + 8).map(<[u8; 8]>::try_from) {
            let x = u64::from_le_bytes(bytes);
            // The lowest set bit marks the first byte < 0x21 exactly.
            let t = x.wrapping_sub(LIM) & !x & HI;
            if t == 0 {
                i += 8;
                continue;
            }
            i += (t.trailing_zeros() / 8) as usize;
        }
        match data.get(i) {
            Some(&b) if !is_space(b) && b != b'\n' => i += 1,
            _ => return i,
        }
    }
}

fn trim(mut s: &[u8]) -> &[u8] {
    while let [first, rest @ ..] = s {
        if !is_space(*first) {
            break;
        }
        s = rest;
    }
    while let [rest @ .., last] = s {
        if !is_space(*last) {
            break;
        }
        s = rest;
    }
    s
}

fn is_blank(s: &[u8]) -> bool {
    s.iter().all(|&b| is_space(b) || b == b'\n')
}

/// Shown in messages: at most 40 characters of a line.
fn show(s: &[u8]) -> String {
    let t = String::from_utf8_lossy(trim(s));
    if t.chars().count() > 40 {
        format!("{}…", t.chars().take(40).collect::<String>())
    } else {
        t.into_owned()
    }
}

/// Splits on spaces and tabs; fills `out` with up to `out.len()` tokens, returns how many
/// tokens the line has (counting beyond the first `out.len()` only up to `limit`).
#[inline]
fn tokens<'a>(line: &'a [u8], out: &mut [&'a [u8]], limit: usize) -> usize {
    let mut n = 0;
    let mut i = 0;
    let len = line.len();
    while i < len && n < limit {
        while i < len && is_space(line[i]) {
            i += 1;
        }
        if i == len {
            break;
        }
        let s = i;
        while i < len && !is_space(line[i]) {
            i += 1;
        }
        if n < out.len() {
            out[n] = &line[s..i];
        }
        n += 1;
    }
    n
}

// ---------- numbers ----------

/// Whole-number count line: Ok(n) or the reason it is not one.
fn parse_count(line: &[u8]) -> std::result::Result<usize, String> {
    let t = trim(line);
    if t.is_empty() {
        return Err("blank line where an atom count was expected".to_string());
    }
    if t.iter().all(u8::is_ascii_digit) {
        return std::str::from_utf8(t)
            .ok()
            .and_then(|s| s.parse::<usize>().ok())
            .ok_or_else(|| format!("atom count '{}' is too large", show(t)));
    }
    if let [b'-', digits @ ..] = t {
        if !digits.is_empty() && digits.iter().all(u8::is_ascii_digit) {
            return Err(format!("atom count '{}' is negative", show(t)));
        }
    }
    Err(format!("atom count '{}' is not a whole number", show(t)))
}

const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// The value of eight ASCII digits at `tok[i..i + 8]`, or `None` if any is not a digit
/// (Lemire's word-at-a-time conversion).
#[inline]
fn eight_digits(tok: &[u8], i: usize) -> Option<u64> {
    let bytes: [u8; 8] = tok.get(i..i + 8)?.try_into().ok()?;
    let v = u64::from_le_bytes(bytes);
    let all_digits = (v & 0xF0F0_F0F0_F0F0_F0F0)
        | ((v.wrapping_add(0x0606_0606_0606_0606) & 0xF0F0_F0F0_F0F0_F0F0) >> 4)
        == 0x3333_3333_3333_3333;
    if !all_digits {
        return None;
    }
    let v = (v & 0x0F0F_0F0F_0F0F_0F0F).wrapping_mul(2561) >> 8;
    let v = (v & 0x00FF_00FF_00FF_00FF).wrapping_mul(6_553_601) >> 16;
    Some((v & 0x0000_FFFF_0000_FFFF).wrapping_mul(42_949_672_960_001) >> 32)
}

/// Accumulates decimal digits from `tok[*i..]` into `mant` (at most 19 digits in all);
/// returns how many digits were read and whether some did not fit.
#[inline]
fn read_digits(tok: &[u8], i: &mut usize, mant: &mut u64, n_acc: &mut u32) -> (u32, bool) {
    let mut read = 0u32;
    let mut overflow = false;
    while *n_acc + 8 <= 19 {
        match eight_digits(tok, *i) {
            Some(v) => {
                *mant = *mant * 100_000_000 + v;
                *n_acc += 8;
                *i += 8;
                read += 8;
            }
            None => break,
        }
    }
    while let Some(&c) = tok.get(*i) {
        if !c.is_ascii_digit() {
            break;
        }
        if *n_acc < 19 {
            *mant = *mant * 10 + u64::from(c - b'0');
            *n_acc += 1;
        } else {
            overflow = true;
        }
        *i += 1;
        read += 1;
    }
    (read, overflow)
}

/// Parses a decimal number, Fortran 'D' exponents included. Plain decimals with at most 19
/// digits take an exact fast path (mantissa <= 2^53 and |exponent| <= 22 give a correctly
/// rounded result, Clinger 1990); everything else goes to the standard parser.
#[inline]
fn parse_f64(tok: &[u8]) -> Option<f64> {
    let len = tok.len();
    let (neg, mut i) = match tok.first() {
        Some(b'-') => (true, 1),
        Some(b'+') => (false, 1),
        _ => (false, 0),
    };
    let mut mant: u64 = 0;
    let mut n_acc = 0u32;
    let (int_digits, mut slow) = read_digits(tok, &mut i, &mut mant, &mut n_acc);
    let mut exp10: i64 = 0;
    let mut frac_digits = 0;
    if i < len && tok[i] == b'.' {
        i += 1;
        let before = n_acc;
        let (read, overflow) = read_digits(tok, &mut i, &mut mant, &mut n_acc);
        frac_digits = read;
        slow |= overflow;
        exp10 -= i64::from(n_acc - before);
    }
    if int_digits + frac_digits == 0 {
        return parse_f64_slow(tok);
    }
    if i < len && matches!(tok[i], b'e' | b'E' | b'd' | b'D') {
        i += 1;
        let eneg = match tok.get(i) {
            Some(b'-') => {
                i += 1;
                true
            }
            Some(b'+') => {
                i += 1;
                false
            }
            _ => false,
        };
        let start = i;
        let mut e: i64 = 0;
        while i < len && tok[i].is_ascii_digit() {
            if e < 100_000 {
                e = e * 10 + i64::from(tok[i] - b'0');
            }
            i += 1;
        }
        if i == start {
            return None;
        }
        exp10 += if eneg { -e } else { e };
    }
    if i != len {
        return None;
    }
    if mant == 0 && !slow {
        return Some(if neg { -0.0 } else { 0.0 });
    }
    if slow || mant > (1u64 << 53) || !(-22..=22).contains(&exp10) {
        return parse_f64_slow(tok);
    }
    let m = mant as f64;
    let v = if exp10 >= 0 {
        m * POW10[exp10 as usize]
    } else {
        m / POW10[(-exp10) as usize]
    };
    Some(if neg { -v } else { v })
}

fn parse_f64_slow(tok: &[u8]) -> Option<f64> {
    let s = std::str::from_utf8(tok).ok()?;
    if s.bytes().any(|b| b == b'd' || b == b'D') {
        let lower = s.to_ascii_lowercase();
        if lower.contains("nan") || lower.contains("inf") {
            return None;
        }
        return s.replace(['d', 'D'], "e").parse().ok();
    }
    s.parse().ok()
}

// ---------- comment line ----------

/// `key=value` pairs of an extended-XYZ comment line, or `None` when the line is not such a
/// list (a plain comment). Values may be "quoted" (with \" and \\ escapes) or {braced}.
fn parse_info(comment: &str) -> Option<Vec<(String, String)>> {
    let b = comment.as_bytes();
    let mut i = 0;
    let mut out = Vec::new();
    let mut any_pair = false;
    loop {
        while i < b.len() && is_space(b[i]) {
            i += 1;
        }
        if i == b.len() {
            break;
        }
        let ks = i;
        while i < b.len() && !is_space(b[i]) && b[i] != b'=' && b[i] != b'"' {
            i += 1;
        }
        if i == ks {
            return None;
        }
        let key = comment.get(ks..i)?.to_string();
        if i < b.len() && b[i] == b'=' {
            i += 1;
            let value = match b.get(i) {
                Some(b'"') => {
                    i += 1;
                    let mut v = Vec::new();
                    loop {
                        match b.get(i) {
                            None => return None,
                            Some(b'"') => {
                                i += 1;
                                break;
                            }
                            Some(b'\\') if matches!(b.get(i + 1), Some(b'"') | Some(b'\\')) => {
                                v.push(b[i + 1]);
                                i += 2;
                            }
                            Some(&c) => {
                                v.push(c);
                                i += 1;
                            }
                        }
                    }
                    String::from_utf8(v).ok()?
                }
                Some(b'{') => {
                    let vs = i + 1;
                    let close = b[vs..].iter().position(|&c| c == b'}')?;
                    i = vs + close + 1;
                    comment.get(vs..vs + close)?.to_string()
                }
                _ => {
                    let vs = i;
                    while i < b.len() && !is_space(b[i]) {
                        i += 1;
                    }
                    if i == vs {
                        return None;
                    }
                    comment.get(vs..i)?.to_string()
                }
            };
            any_pair = true;
            out.push((key, value));
        } else if i < b.len() && b[i] == b'"' {
            return None;
        } else {
            out.push((key, "T".to_string()));
        }
        if i < b.len() && !is_space(b[i]) {
            return None;
        }
    }
    any_pair.then_some(out)
}

/// Which columns of an atom line hold the element and the position.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Layout {
    species: usize,
    pos: usize,
    /// Columns an atom line must have.
    needed: usize,
    extended: bool,
}

const STANDARD: Layout = Layout {
    species: 0,
    pos: 1,
    needed: 4,
    extended: false,
};

/// The layout a `Properties` value describes.
fn layout_from_properties(value: &str) -> std::result::Result<Layout, String> {
    let bad = || format!("Properties '{value}' is not a list of name:type:count triples");
    let mut col = 0usize;
    let (mut species, mut z, mut pos) = (None, None, None);
    let mut parts = value.split(':');
    while let Some(name) = parts.next() {
        let (Some(kind), Some(count)) = (parts.next(), parts.next()) else {
            return Err(bad());
        };
        let count: usize = count.parse().map_err(|_| bad())?;
        match (name, count) {
            ("species", 1) if kind.eq_ignore_ascii_case("S") => species = Some(col),
            ("Z", 1) if kind.eq_ignore_ascii_case("I") => z = Some(col),
            ("pos", 3) if kind.eq_ignore_ascii_case("R") => pos = Some(col),
            _ => {}
        }
        col = col.checked_add(count).ok_or_else(bad)?;
    }
    let species = species
        .or(z)
        .ok_or_else(|| format!("Properties '{value}' has no species:S:1 (or Z:I:1) column"))?;
    let pos = pos.ok_or_else(|| format!("Properties '{value}' has no pos:R:3 column"))?;
    Ok(Layout {
        species,
        pos,
        needed: col.max(species + 1).max(pos + 3),
        extended: true,
    })
}

// ---------- the serial scan ----------

/// A frame found by the scan.
#[derive(Debug)]
struct Span {
    count_line: usize,
    comment: Range<usize>,
    atoms_start: usize,
    n_atoms: usize,
    /// (byte start, first atom index) of each chunk of atom lines after the first
    /// (empty, so unallocated, for frames of at most CHUNK_LINES atoms).
    chunks: Vec<(usize, usize)>,
    end: usize,
}

#[derive(Debug)]
enum Scanned {
    Good(Span),
    Bad(Error),
}

struct Scanner<'a> {
    data: &'a [u8],
    source: &'a str,
}

impl Scanner<'_> {
    fn error(&self, frame: usize, line: usize, reason: String) -> Error {
        Error::MalformedXyz {
            source: self.source.to_string(),
            frame,
            line,
            reason,
        }
    }

    /// A line that could be an atom line: at least four columns, three of them numbers.
    fn plausible_atom(line: &[u8]) -> bool {
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
    fn resync(&self, mut pos: usize, mut line: usize) -> Option<(usize, usize)> {
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

    fn plausible_frame(&self, after_count: usize, n: usize) -> bool {
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
    fn scan(&self) -> Vec<Scanned> {
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
    fn recover(
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

// ---------- parallel parsing ----------

/// A run of atom lines of one frame, parsed as one piece.
#[derive(Debug, Clone, Copy)]
struct Segment {
    frame: usize,
    start: usize,
    n_lines: usize,
    first_atom: usize,
    first_line: usize,
}

#[derive(Default)]
struct UnitOut {
    positions: Vec<[f64; 3]>,
    numbers: Vec<i64>,
    /// Per segment: (frame, atoms pushed, first error).
    results: Vec<(usize, usize, Option<Error>)>,
}

struct Header {
    comment: String,
    info: Vec<(String, String)>,
    layout: std::result::Result<Layout, Error>,
}

fn parse_header(data: &[u8], span: &Span, frame: usize, source: &str) -> Header {
    let bytes = &data[span.comment.clone()];
    let comment = match std::str::from_utf8(bytes) {
        Ok(text) => text.to_owned(),
        Err(_) => String::from_utf8_lossy(bytes).into_owned(),
    };
    let info = parse_info(&comment).unwrap_or_default();
    let props = info
        .iter()
        .find(|(k, _)| k.eq_ignore_ascii_case("properties"));
    let layout = match props {
        None => Ok(STANDARD),
        Some((_, v)) => layout_from_properties(v).map_err(|reason| Error::MalformedXyz {
            source: source.to_string(),
            frame,
            line: span.count_line + 1,
            reason,
        }),
    };
    Header {
        comment,
        info,
        layout,
    }
}

/// Symbol -> number with a tiny cache (molecules repeat few elements).
struct Elements<'a> {
    to_number: &'a ToNumber,
    /// (symbol packed into a u64, number); symbols of 1..=8 bytes only.
    cache: Vec<(u64, i64)>,
}

/// A symbol of 1..=8 bytes packed into a u64 (zero-padded), for a cheap cache compare.
#[inline]
fn pack(sym: &[u8]) -> Option<u64> {
    if sym.is_empty() || sym.len() > 8 {
        return None;
    }
    let mut b = [0u8; 8];
    b[..sym.len()].copy_from_slice(sym);
    Some(u64::from_le_bytes(b))
}

impl Elements<'_> {
    fn number(&mut self, sym: &[u8]) -> std::result::Result<i64, String> {
        let key = pack(sym);
        if let Some(key) = key {
            if let Some((_, z)) = self.cache.iter().find(|(s, _)| *s == key) {
                return Ok(*z);
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
            z
        } else {
            let s = std::str::from_utf8(sym).ok();
            match s.and_then(|s| (self.to_number)(s)) {
                Some(z) => z,
                None => return Err(format!("unknown element symbol '{}'", show(sym))),
            }
        };
        if let (Some(key), true) = (key, self.cache.len() < 16) {
            self.cache.push((key, z));
        }
        Ok(z)
    }
}

fn parse_segment(
    data: &[u8],
    seg: &Segment,
    n_atoms: usize,
    layout: &Layout,
    elements: &mut Elements,
    out: &mut UnitOut,
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
        match elements.number(sym) {
            Ok(z) => {
                out.positions.push(xyz);
                out.numbers.push(z);
            }
            Err(reason) => return Some(err(k, reason)),
        }
    }
    None
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
    let headers: Vec<Option<Header>> = scanned
        .par_iter()
        .enumerate()
        .map(|(f, s)| match s {
            Scanned::Good(span) => Some(parse_header(data, span, f, source)),
            Scanned::Bad(_) => None,
        })
        .collect();

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

    let outs: Vec<UnitOut> = units
        .par_iter()
        .map(|segs| {
            let mut out = UnitOut::default();
            let n_lines: usize = segs.iter().map(|s| s.n_lines).sum();
            out.positions.reserve(n_lines);
            out.numbers.reserve(n_lines);
            let mut elements = Elements {
                to_number,
                cache: Vec::new(),
            };
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
        })
        .collect();

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
    for out in &outs {
        let mut at = 0usize;
        for &(f, len, _) in &out.results {
            if errors[f].is_none() {
                positions.extend_from_slice(&out.positions[at..at + len]);
                numbers.extend_from_slice(&out.numbers[at..at + len]);
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
        offsets,
        comments,
        info,
        errors,
    }
}

/// Reads every frame of an XYZ file, memory-mapped.
///
/// `source` names the file in messages (usually the path as the user gave it). An empty
/// file gives zero frames (the caller decides whether that is an error).
///
/// # Errors
/// `Error::Io` when the file cannot be opened or mapped (missing, a directory, no
/// permission). Malformed frames are not errors of the call: see [`read_xyz_bytes`].
pub fn read_xyz_path(
    path: &std::path::Path,
    source: &str,
    to_number: &ToNumber,
) -> Result<XyzFrames> {
    let io = |e: std::io::Error| Error::Io {
        source: source.to_string(),
        reason: e.to_string(),
    };
    let file = std::fs::File::open(path).map_err(io)?;
    let len = file.metadata().map_err(io)?.len();
    if len == 0 {
        return Ok(read_xyz_bytes(&[], source, to_number));
    }
    // SAFETY: the map is read-only and lives only during this call. Another process
    // truncating the file meanwhile could fault; that is the accepted price of mapping
    // (the same as every memory-mapped reader) and is documented for users.
    let map = unsafe { memmap2::Mmap::map(&file) }.map_err(io)?;
    Ok(read_xyz_bytes(&map, source, to_number))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small periodic table for the tests (symbols and numbers: IUPAC, common practice).
    fn table(s: &str) -> Option<i64> {
        match s {
            "H" => Some(1),
            "C" => Some(6),
            "N" => Some(7),
            "O" => Some(8),
            "Na" => Some(11),
            "Cl" => Some(17),
            "Fe" => Some(26),
            _ => None,
        }
    }

    fn read(text: &str) -> XyzFrames {
        read_xyz_bytes(text.as_bytes(), "test.xyz", &table)
    }

    fn frame_positions(f: &XyzFrames, k: usize) -> &[[f64; 3]] {
        &f.positions[f.offsets[k]..f.offsets[k + 1]]
    }

    fn reason(f: &XyzFrames, k: usize) -> (usize, usize, String) {
        match &f.errors[k] {
            Some(Error::MalformedXyz {
                frame,
                line,
                reason,
                source,
            }) => {
                assert_eq!(source, "test.xyz");
                (*frame, *line, reason.clone())
            }
            other => panic!("frame {k}: expected a MalformedXyz error, got {other:?}"),
        }
    }

    use crate::testutil::Rng;

    const WATER: &str = "3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n";

    #[test]
    fn reads_one_standard_frame() {
        let f = read(WATER);
        assert_eq!(f.n_frames(), 1);
        assert_eq!(f.errors, vec![None]);
        assert_eq!(f.offsets, vec![0, 3]);
        assert_eq!(f.numbers, vec![8, 1, 1]);
        assert_eq!(f.comments, vec!["water".to_string()]);
        assert!(f.info[0].is_empty());
        assert_eq!(f.positions[1], [0.0, 0.7572, -0.4692]);
    }

    #[test]
    fn round_trip_is_exact_for_many_frames() {
        let mut rng = Rng(42);
        let syms = ["H", "C", "N", "O", "Na", "Cl", "Fe"];
        let mut text = String::new();
        let mut want_pos = Vec::new();
        let mut want_num = Vec::new();
        let mut want_off = vec![0];
        for f in 0..200 {
            let n = 1 + (rng.next() * 30.0) as usize;
            text.push_str(&format!("{n}\nframe {f}\n"));
            for _ in 0..n {
                let k = (rng.next() * 7.0) as usize;
                let p = [
                    (rng.next() - 0.5) * 200.0,
                    (rng.next() - 0.5) * 1e-3,
                    (rng.next() - 0.5) * 1e7,
                ];
                // `{}` writes the shortest text that reads back to the same f64.
                text.push_str(&format!("{} {} {:e} {}\n", syms[k], p[0], p[1], p[2]));
                want_pos.push(p);
                want_num.push(table(syms[k]).unwrap());
            }
            want_off.push(want_pos.len());
        }
        let f = read(&text);
        assert!(f.errors.iter().all(Option::is_none));
        assert_eq!(f.positions, want_pos);
        assert_eq!(f.numbers, want_num);
        assert_eq!(f.offsets, want_off);
        assert_eq!(f.comments[199], "frame 199");
    }

    #[test]
    fn tolerates_crlf_tabs_spaces_extra_columns_and_trailing_blanks() {
        let text =
            "  2 \r\ncomment with spaces \r\n\tC\t1.0\t2.0\t3.0\t0.5 extra\r\n   H 1 2 4\r\n\
                    1\n\nO 0 0 0\n\n  \n\t\n";
        let f = read(text);
        assert_eq!(f.errors, vec![None, None]);
        assert_eq!(f.offsets, vec![0, 2, 3]);
        assert_eq!(
            f.positions,
            vec![[1.0, 2.0, 3.0], [1.0, 2.0, 4.0], [0.0; 3]]
        );
        assert_eq!(
            f.comments,
            vec!["comment with spaces ".to_string(), String::new()]
        );
        // No newline at the very end.
        let f = read("1\nx\nH 0 0 1");
        assert_eq!(f.positions, vec![[0.0, 0.0, 1.0]]);
    }

    #[test]
    fn accepts_atomic_numbers_and_fortran_exponents() {
        let f = read("2\n\n6 1.5D+00 -2.0d-1 3E2\n1 0 0 0\n");
        assert_eq!(f.errors, vec![None]);
        assert_eq!(f.numbers, vec![6, 1]);
        assert_eq!(f.positions[0], [1.5, -0.2, 300.0]);
        let f = read("1\n\n0 0 0 0\n");
        let (_, line, why) = reason(&f, 0);
        assert_eq!(
            (line, why.as_str()),
            (3, "atomic number '0' is outside 1..118")
        );
    }

    #[test]
    fn honours_extended_xyz_properties() {
        let text = "2\nLattice=\"10 0 0 0 10 0 0 0 10\" Properties=species:S:1:vel:R:3:pos:R:3 \
                    energy=-1.5 pbc=\"T T T\" label={a b} flag\n\
                    C 9 9 9 1.0 2.0 3.0\nO 9 9 9 4.0 5.0 6.0 extra\n\
                    1\nProperties=Z:I:1:pos:R:3\n8 0.5 0.5 0.5\n";
        let f = read(text);
        assert_eq!(f.errors, vec![None, None]);
        assert_eq!(
            f.positions,
            vec![[1.0, 2.0, 3.0], [4.0, 5.0, 6.0], [0.5; 3]]
        );
        assert_eq!(f.numbers, vec![6, 8, 8]);
        let info: Vec<(&str, &str)> = f.info[0]
            .iter()
            .map(|(k, v)| (k.as_str(), v.as_str()))
            .collect();
        assert_eq!(
            info,
            vec![
                ("Lattice", "10 0 0 0 10 0 0 0 10"),
                ("Properties", "species:S:1:vel:R:3:pos:R:3"),
                ("energy", "-1.5"),
                ("pbc", "T T T"),
                ("label", "a b"),
                ("flag", "T"),
            ]
        );
        // A short extended line names the columns Properties asks for.
        let f = read("1\nProperties=species:S:1:vel:R:3:pos:R:3\nC 9 9 9 1.0 2.0\n");
        let (_, line, why) = reason(&f, 0);
        assert_eq!(
            (line, why.as_str()),
            (3, "expected 7 columns (from Properties), found 6")
        );
        // Properties without positions.
        let f = read("1\nProperties=species:S:1:vel:R:3\nC 9 9 9\n");
        let (_, line, why) = reason(&f, 0);
        assert_eq!(line, 2);
        assert!(why.contains("no pos:R:3 column"), "{why}");
        // A plain comment that merely contains '=' is a comment, not info.
        let f = read("1\nenergy = -76.4 hartree\nH 0 0 0\n");
        assert_eq!(f.errors, vec![None]);
        assert!(f.info[0].is_empty());
    }

    #[test]
    fn reports_each_malformed_case_and_keeps_reading() {
        let cases: &[(&str, usize, &str)] = &[
            (
                "3\nw\nO 0 0 0\nH 0 1\nH 0 -1 0\n",
                4,
                "expected 3 coordinates, found 2",
            ),
            (
                "3\nw\nO 0 0 0\nXx 0 1 0\nH 0 -1 0\n",
                4,
                "unknown element symbol 'Xx'",
            ),
            ("3\nw\nO 0 0 0\nH 0 nan 0\nH 0 -1 0\n", 4, "NaN coordinate"),
            (
                "3\nw\nO 0 0 0\nH 0 inf 0\nH 0 -1 0\n",
                4,
                "infinite coordinate",
            ),
            (
                "3\nw\nO 0 0 0\nH 0 1.2.3 0\nH 0 -1 0\n",
                4,
                "coordinate '1.2.3' is not a number",
            ),
            (
                "3\nw\nO 0 0 0\n\nH 0 -1 0\n",
                4,
                "blank line where atom 2 of 3 was expected",
            ),
        ];
        // `line` is the line within the bad frame; WATER (5 lines) comes first.
        for (bad, line, want) in cases {
            // A good frame before and after: the bad one never stops the rest.
            let text = format!("{WATER}{bad}{WATER}");
            let f = read(&text);
            assert_eq!(f.n_frames(), 3, "{want}");
            assert_eq!(f.errors[0], None);
            assert_eq!(f.errors[2], None, "{want}");
            let (frame, l, why) = reason(&f, 1);
            assert_eq!((frame, l, why.as_str()), (1, line + 5, *want));
            assert_eq!(f.offsets, vec![0, 3, 3, 6], "{want}");
            assert_eq!(frame_positions(&f, 2), frame_positions(&f, 0));
        }
    }

    #[test]
    fn bad_count_lines_resynchronise() {
        // A count that is not a number: reported, then the next frame is found.
        let f = read(&format!(
            "{WATER}abc\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"
        ));
        assert_eq!(f.n_frames(), 3);
        assert_eq!(
            reason(&f, 1),
            (1, 6, "atom count 'abc' is not a whole number".to_string())
        );
        assert_eq!(f.errors[2], None);
        assert_eq!(f.offsets, vec![0, 3, 3, 6]);
        // A negative count.
        let f = read(&format!("-3\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"));
        assert_eq!(
            reason(&f, 0),
            (0, 1, "atom count '-3' is negative".to_string())
        );
        assert_eq!(f.errors[1], None);
        // A count that claims too many atoms: the next frame is not swallowed.
        let f = read(&format!("5\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}{WATER}"));
        assert_eq!(f.n_frames(), 3);
        let (_, line, why) = reason(&f, 0);
        assert_eq!(line, 1);
        assert!(
            why.contains("says 5 atoms") && why.contains("line 6"),
            "{why}"
        );
        assert_eq!(f.errors[1..], [None, None]);
        assert_eq!(f.offsets, vec![0, 0, 3, 6]);
        // A count that claims too few atoms: the frame is bad, the next one is read.
        let f = read(&format!("2\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"));
        assert_eq!(f.n_frames(), 2);
        let (_, line, why) = reason(&f, 0);
        assert_eq!(line, 1);
        assert!(
            why.contains("says 2 atoms") && why.contains("line 5"),
            "{why}"
        );
        assert_eq!(f.errors[1], None);
        assert_eq!(f.offsets, vec![0, 0, 3]);
        // A blank line between frames names its line.
        let f = read(&format!("{WATER}\n{WATER}"));
        assert_eq!(f.n_frames(), 3);
        assert_eq!(
            reason(&f, 1),
            (
                1,
                6,
                "blank line where an atom count was expected".to_string()
            )
        );
        assert_eq!(f.errors[2], None);
        assert_eq!(f.offsets, vec![0, 3, 3, 6]);
    }

    #[test]
    fn truncated_file_and_trailing_text() {
        let f = read(&format!("{WATER}5\nw\nO 0 0 0\nH 0 1 0\n\n"));
        assert_eq!(f.n_frames(), 2);
        assert_eq!(
            reason(&f, 1),
            (1, 10, "file ends after 2 of 5 atoms".to_string())
        );
        assert_eq!(f.offsets, vec![0, 3, 3]);
        let f = read(&format!("{WATER}3\n"));
        assert_eq!(
            reason(&f, 1),
            (1, 7, "file ends before the comment line".to_string())
        );
        let f = read(&format!("{WATER}end of data\n\n"));
        assert_eq!(f.n_frames(), 2);
        assert_eq!(
            reason(&f, 1),
            (
                1,
                6,
                "unexpected text after the last frame: 'end of data'".to_string()
            )
        );
        assert_eq!(f.errors[0], None);
    }

    #[test]
    fn empty_and_blank_inputs_have_no_frames() {
        assert_eq!(read("").n_frames(), 0);
        assert_eq!(read("\n\n  \r\n").n_frames(), 0);
        let f = read("0\nnothing here\n");
        assert_eq!(
            (f.n_frames(), f.offsets.clone(), f.errors.clone()),
            (1, vec![0, 0], vec![None])
        );
    }

    /// A file with one frame bigger than CHUNK_LINES, many small frames and some bad ones.
    fn mixed_text() -> String {
        let mut rng = Rng(9);
        let mut text = String::new();
        let big = CHUNK_LINES * 2 + 123;
        text.push_str(&format!("{big}\nbig\n"));
        for i in 0..big {
            text.push_str(&format!("C {} {} {}\n", i, rng.next(), -rng.next()));
        }
        for f in 0..3000 {
            match f % 500 {
                7 => text.push_str("3\nbad\nO 0 0 0\nH 0 1\nH 0 -1 0\n"),
                8 => text.push_str("x\nbad count\nO 0 0 0\n"),
                _ => {
                    let n = 1 + f % 9;
                    text.push_str(&format!("{n}\nsmall {f}\n"));
                    for a in 0..n {
                        text.push_str(&format!("N {a} {} {}\n", rng.next(), f));
                    }
                }
            }
        }
        text
    }

    #[test]
    fn results_are_identical_for_any_thread_count() {
        let text = mixed_text();
        let run = |n: usize| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(n)
                .build()
                .unwrap()
                .install(|| read(&text))
        };
        let one = run(1);
        assert_eq!(one, run(2));
        assert_eq!(one, run(4));
        // The big frame comes first and in order.
        let big = CHUNK_LINES * 2 + 123;
        assert_eq!(one.offsets[1], big);
        assert!(one.positions[..big]
            .iter()
            .enumerate()
            .all(|(i, p)| p[0] == i as f64));
        let n_bad = one.errors.iter().filter(|e| e.is_some()).count();
        assert_eq!(n_bad, 12);
        assert_eq!(one.n_frames(), 3001);
        // Small frames keep their order: frame k+1 has comment "small k" where good.
        assert_eq!(one.comments[1], "small 0");
        assert_eq!(one.comments[3000], "small 2999");
    }

    #[test]
    fn reads_files_by_path() {
        let dir = std::env::temp_dir().join(format!("gammatrace-readers-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("water.xyz");
        std::fs::write(&path, WATER.repeat(4)).unwrap();
        let f = read_xyz_path(&path, "water.xyz", &table).unwrap();
        assert_eq!((f.n_frames(), f.positions.len()), (4, 12));
        let empty = dir.join("empty.xyz");
        std::fs::write(&empty, "").unwrap();
        assert_eq!(
            read_xyz_path(&empty, "empty.xyz", &table)
                .unwrap()
                .n_frames(),
            0
        );
        let missing = read_xyz_path(&dir.join("missing.xyz"), "missing.xyz", &table).unwrap_err();
        assert!(
            matches!(&missing, Error::Io { source, .. } if source == "missing.xyz"),
            "{missing:?}"
        );
        assert!(read_xyz_path(&dir, "dir", &table).is_err());
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn float_parser_matches_the_standard_parser() {
        let mut rng = Rng(77);
        for _ in 0..20_000 {
            let x = (rng.next() - 0.5) * 10f64.powi((rng.next() * 40.0) as i32 - 20);
            for s in [
                format!("{x}"),
                format!("{x:e}"),
                format!("{x:.3}"),
                format!("{x:.17}"),
                format!("{x:E}"),
            ] {
                let want: f64 = s.parse().unwrap();
                assert_eq!(
                    parse_f64(s.as_bytes()).map(f64::to_bits),
                    Some(want.to_bits()),
                    "{s}"
                );
            }
        }
        for s in [
            "0",
            "-0",
            "+1",
            ".5",
            "5.",
            "1e5",
            "1E-5",
            "123456789012345678901234567890",
            "0.000000000000000000000001234",
            "1e308",
            "4.9e-324",
            "1e400",
        ] {
            let want: f64 = s.parse().unwrap();
            assert_eq!(
                parse_f64(s.as_bytes()).map(f64::to_bits),
                Some(want.to_bits()),
                "{s}"
            );
        }
        assert_eq!(parse_f64(b"1.5D3"), Some(1500.0));
        assert_eq!(parse_f64(b"-2d-2"), Some(-0.02));
        assert!(parse_f64(b"nan").is_some_and(f64::is_nan));
        for bad in ["", "-", ".", "e5", "1e", "1.2.3", "abc", "1x", "--1"] {
            assert_eq!(parse_f64(bad.as_bytes()), None, "{bad}");
        }
    }

    #[test]
    fn word_scans_match_byte_scans() {
        let mut rng = Rng(8);
        let alphabet = b"  \t\r\n\x01ab.9\xc3\xa9";
        let data: Vec<u8> = (0..4000)
            .map(|_| alphabet[(rng.next() * alphabet.len() as f64) as usize])
            .collect();
        for i in 0..=data.len() {
            let mut j = i;
            while j < data.len() && is_space(data[j]) {
                j += 1;
            }
            assert_eq!(skip_spaces(&data, i), j, "skip from {i}");
            let mut j = i;
            while j < data.len() && !is_space(data[j]) && data[j] != b'\n' {
                j += 1;
            }
            assert_eq!(token_end(&data, i), j, "token from {i}");
        }
    }

    #[test]
    fn newline_search_matches_a_plain_scan() {
        let mut rng = Rng(5);
        let data: Vec<u8> = (0..5000)
            .map(|_| {
                if rng.next() < 0.05 {
                    b'\n'
                } else {
                    b'a' + (rng.next() * 20.0) as u8
                }
            })
            .collect();
        for from in 0..data.len() + 2 {
            let want = data
                .get(from..)
                .and_then(|r| r.iter().position(|&b| b == b'\n'))
                .map(|p| p + from);
            assert_eq!(find_newline(&data, from), want, "from {from}");
        }
    }

    #[test]
    fn comment_lines_parse_as_key_value_pairs_or_not_at_all() {
        assert_eq!(
            parse_info("a=1 b=\"x \\\" y\""),
            Some(vec![
                ("a".into(), "1".into()),
                ("b".into(), "x \" y".into())
            ])
        );
        assert_eq!(parse_info("just words"), None);
        assert_eq!(parse_info("a=\"unclosed"), None);
        assert_eq!(parse_info("a= b"), None);
        assert_eq!(parse_info(""), None);
    }
}
