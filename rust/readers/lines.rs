//! Lines and whitespace-separated tokens of XYZ text, on raw bytes.

/// Position of the first b'\n' at or after `from` (memchr), or `None`.
#[inline]
pub(super) fn find_newline(data: &[u8], from: usize) -> Option<usize> {
    memchr::memchr(b'\n', data.get(from..)?).map(|p| from + p)
}

/// The line starting at `pos` (without "\n" or "\r\n") and the start of the next line, or
/// `None` at the end of the data.
#[inline]
pub(super) fn read_line(data: &[u8], pos: usize) -> Option<(&[u8], usize)> {
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
pub(super) fn is_space(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\r' | b'\x0b' | b'\x0c')
}

/// Index of the first byte at or after `i` that is not a space or tab (or \r, \v, \f),
/// eight bytes at a time over runs of spaces.
#[inline]
pub(super) fn skip_spaces(data: &[u8], mut i: usize) -> usize {
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
pub(super) fn token_end(data: &[u8], mut i: usize) -> usize {
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

pub(super) fn trim(mut s: &[u8]) -> &[u8] {
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

pub(super) fn is_blank(s: &[u8]) -> bool {
    s.iter().all(|&b| is_space(b) || b == b'\n')
}

/// Shown in messages: at most 40 characters of a line.
pub(super) fn show(s: &[u8]) -> String {
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
pub(super) fn tokens<'a>(line: &'a [u8], out: &mut [&'a [u8]], limit: usize) -> usize {
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
