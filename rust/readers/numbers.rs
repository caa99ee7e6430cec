//! Numbers in XYZ text: atom counts and coordinates (the fast-float2 crate, plus the Fortran
//! `D` exponent).

use super::lines::{show, trim};

/// Whole-number count line: Ok(n) or the reason it is not one.
pub(super) fn parse_count(line: &[u8]) -> std::result::Result<usize, String> {
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

/// Parses a decimal number as Rust's `str::parse::<f64>` does (correctly rounded, by the
/// fast-float2 crate), and also with a Fortran exponent marker `D`/`d` (`1.5D-03`), which
/// quantum-chemistry programs write. Returns `None` for anything else.
#[inline]
pub(super) fn parse_f64(tok: &[u8]) -> Option<f64> {
    match fast_float2::parse::<f64, _>(tok) {
        Ok(v) => Some(v),
        Err(_) => parse_fortran(tok),
    }
}

/// The rare path: a token with a `D`/`d` exponent marker, read with that marker as `e`.
/// Only digits, signs and a point may stand around it, so no spelling of "inf" or "nan"
/// slips through.
#[cold]
fn parse_fortran(tok: &[u8]) -> Option<f64> {
    let at = memchr::memchr2(b'd', b'D', tok)?;
    let plain = |b: &u8| b.is_ascii_digit() || matches!(b, b'+' | b'-' | b'.');
    if !tok[..at].iter().all(plain) || !tok[at + 1..].iter().all(plain) {
        return None;
    }
    let mut buf = [0u8; 64];
    let mut owned;
    let text: &mut [u8] = match buf.get_mut(..tok.len()) {
        Some(b) => b,
        None => {
            owned = vec![0u8; tok.len()];
            &mut owned
        }
    };
    text.copy_from_slice(tok);
    text[at] = b'e';
    fast_float2::parse::<f64, _>(&*text).ok()
}
