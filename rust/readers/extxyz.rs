//! Extended XYZ: the `key=value` comment line and the `Properties` column layout.

use super::lines::is_space;

/// `key=value` pairs of an extended-XYZ comment line, or `None` when the line is not such a
/// list (a plain comment). Values may be "quoted" (with \" and \\ escapes) or {braced}.
pub(super) fn parse_info(comment: &str) -> Option<Vec<(String, String)>> {
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

/// Which columns of an atom line hold the element, the position and (optionally) the mass.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Layout {
    pub(super) species: usize,
    pub(super) pos: usize,
    pub(super) masses: Option<usize>,
    /// Columns an atom line must have.
    pub(super) needed: usize,
    pub(super) extended: bool,
}

pub(super) const STANDARD: Layout = Layout {
    species: 0,
    pos: 1,
    masses: None,
    needed: 4,
    extended: false,
};

/// The layout a `Properties` value describes.
pub(super) fn layout_from_properties(value: &str) -> std::result::Result<Layout, String> {
    let bad = || format!("Properties '{value}' is not a list of name:type:count triples");
    let mut col = 0usize;
    let (mut species, mut z, mut pos, mut masses) = (None, None, None, None);
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
            ("masses", 1) if kind.eq_ignore_ascii_case("R") => masses = Some(col),
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
        masses,
        needed: col
            .max(species + 1)
            .max(pos + 3)
            .max(masses.map_or(0, |m| m + 1)),
        extended: true,
    })
}
