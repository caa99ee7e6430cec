//! Multiplicities from unshifted counts through a linear map prepared by the caller.
//!
//! The reduction formula, Γ_3N and Γ_vib are all linear in the counts of one structure's
//! classes, so the Python layer (python/gammatrace/summary.py) composes them once per
//! character table into one matrix and one offset. This module only applies them to many
//! structures at once and rounds: it knows nothing of groups or tables. The rule for a
//! multiplicity is that of `CharacterTable.reduce_rows`: a non-negative integer within the
//! tolerance.

use crate::error::{Error, Result};

/// What [`reduce_counts`] gives for k structures.
#[derive(Debug, Clone, PartialEq)]
pub struct Reduced {
    /// The nearest integers to `counts[first] · map + offset`, row-major `(k, m)`.
    pub mult: Vec<i64>,
    /// Per structure: the counts agree within each class (exactly: they are whole numbers)
    /// and every entry of its row is a non-negative integer within the tolerance.
    pub ok: Vec<bool>,
}

fn invalid(name: &str, reason: String) -> Error {
    Error::InvalidArgument {
        name: name.to_string(),
        reason,
    }
}

/// Apply a prepared linear map to the class counts of k structures of one group.
///
/// - `counts`: row-major `(k, h)`, one count per operation (canonical order).
/// - `class_first`: `(h,)`, for each operation the index of the first operation of its class.
/// - `first`: `(c,)`, the first operation of each class (the table's class order).
/// - `map`: row-major `(c, m)`; `offset`: `(m,)`.
/// - `tol`: how far from an integer an entry may lie.
///
/// # Errors
/// `InvalidArgument` for lengths that do not fit or an operation index out of range.
pub fn reduce_counts(
    counts: &[f64],
    h: usize,
    class_first: &[usize],
    first: &[usize],
    map: &[f64],
    offset: &[f64],
    tol: f64,
) -> Result<Reduced> {
    let m = offset.len();
    let c = first.len();
    if class_first.len() != h {
        return Err(invalid(
            "class_first",
            format!("{} entries for {h} operations", class_first.len()),
        ));
    }
    if map.len() != c * m {
        return Err(invalid(
            "map",
            format!("{} entries, expected {c} classes × {m} columns", map.len()),
        ));
    }
    if h == 0 || !counts.len().is_multiple_of(h) {
        return Err(invalid(
            "counts",
            format!(
                "{} entries are no whole number of rows of {h}",
                counts.len()
            ),
        ));
    }
    if let Some(&bad) = class_first.iter().chain(first).find(|&&i| i >= h) {
        return Err(invalid(
            "class_first/first",
            format!("operation {bad} of {h}"),
        ));
    }
    let k = counts.len() / h;
    let mut mult = vec![0i64; k * m];
    let mut ok = vec![true; k];
    let mut raw = vec![0.0f64; m];
    for (r, row) in counts.chunks_exact(h).enumerate() {
        let mut good = class_first.iter().zip(row).all(|(&f, &x)| row[f] == x);
        raw.copy_from_slice(offset);
        for (cls, &f) in first.iter().enumerate() {
            let x = row[f];
            if x != 0.0 {
                for (acc, &w) in raw.iter_mut().zip(&map[cls * m..(cls + 1) * m]) {
                    *acc += x * w;
                }
            }
        }
        for (out, &v) in mult[r * m..(r + 1) * m].iter_mut().zip(&raw) {
            let n = v.round();
            // NaN fails both comparisons and so the row
            good &= (v - n).abs() <= tol && n >= 0.0;
            *out = if n.is_finite() { n as i64 } else { 0 };
        }
        ok[r] = good;
    }
    Ok(Reduced { mult, ok })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// C2v by hand: classes E, C2, σv, σv′ (one operation each); irreps A1, A2, B1, B2 with
    /// the reduction n_i = Σ_c χ(c) χ_i(c) / 4 (Cotton, Chemical Applications of Group
    /// Theory, C2v table). Water's unshifted atoms 3, 1, 3, 1 give Γ(atoms) = 2A1 + B1 when
    /// the molecule lies in the σv plane (common practice).
    fn c2v_map() -> Vec<f64> {
        let table = [
            [1.0, 1.0, 1.0, 1.0],
            [1.0, 1.0, -1.0, -1.0],
            [1.0, -1.0, 1.0, -1.0],
            [1.0, -1.0, -1.0, 1.0],
        ];
        // map[c][i] = χ_i(c) / 4
        let mut map = vec![0.0; 16];
        for (i, chi) in table.iter().enumerate() {
            for (c, &x) in chi.iter().enumerate() {
                map[c * 4 + i] = x / 4.0;
            }
        }
        map
    }

    #[test]
    fn water_atoms_reduce_to_two_a1_and_b1() {
        let out = reduce_counts(
            &[3.0, 1.0, 3.0, 1.0],
            4,
            &[0, 1, 2, 3],
            &[0, 1, 2, 3],
            &c2v_map(),
            &[0.0; 4],
            1e-6,
        )
        .unwrap();
        assert_eq!(out.mult, vec![2, 0, 1, 0]);
        assert_eq!(out.ok, vec![true]);
    }

    #[test]
    fn rows_that_do_not_reduce_or_disagree_in_a_class_are_flagged() {
        // row 0: counts 3, 0, 0, 0 give 3/4 of each irrep (not integers); row 1: counts
        // 0, 4, 0, 0 give A1 = A2 = 1, B1 = B2 = −1 (negative); row 2: water, fine; row 3:
        // water again, but with operations 2 and 3 put in one class, whose counts differ
        let counts = [
            3.0, 0.0, 0.0, 0.0, //
            0.0, 4.0, 0.0, 0.0, //
            3.0, 1.0, 3.0, 1.0, //
            3.0, 1.0, 3.0, 1.0,
        ];
        let out = reduce_counts(
            &counts,
            4,
            &[0, 1, 2, 3],
            &[0, 1, 2, 3],
            &c2v_map(),
            &[0.0; 4],
            1e-6,
        )
        .unwrap();
        assert_eq!(out.ok, vec![false, false, true, true]);
        assert_eq!(&out.mult[4..8], &[1, 1, -1, -1]);
        let merged = reduce_counts(
            &counts[12..],
            4,
            &[0, 1, 2, 2],
            &[0, 1, 2, 3],
            &c2v_map(),
            &[0.0; 4],
            1e-6,
        )
        .unwrap();
        assert_eq!(merged.ok, vec![false]);
    }

    #[test]
    fn the_offset_is_added_and_nan_fails() {
        let out = reduce_counts(
            &[3.0, 1.0, 3.0, 1.0, f64::NAN, 1.0, 3.0, 1.0],
            4,
            &[0, 1, 2, 3],
            &[0, 1, 2, 3],
            &c2v_map(),
            &[-1.0, 0.0, 0.0, 0.0],
            1e-6,
        )
        .unwrap();
        assert_eq!(&out.mult[..4], &[1, 0, 1, 0]);
        assert_eq!(out.ok, vec![true, false]);
    }

    #[test]
    fn shapes_that_do_not_fit_are_refused() {
        let map = c2v_map();
        let z = [0.0; 4];
        let ids = [0, 1, 2, 3];
        assert!(reduce_counts(&[1.0; 5], 4, &ids, &ids, &map, &z, 1e-6).is_err());
        assert!(reduce_counts(&[1.0; 4], 4, &ids[..3], &ids, &map, &z, 1e-6).is_err());
        assert!(reduce_counts(&[1.0; 4], 4, &ids, &ids, &map[..15], &z, 1e-6).is_err());
        assert!(reduce_counts(&[1.0; 4], 4, &[0, 1, 2, 4], &ids, &map, &z, 1e-6).is_err());
    }
}
