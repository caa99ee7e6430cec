//! Unshifted atoms: the atom-position (permutation) and Cartesian-displacement
//! representations.

use super::orbitals::orbital_character;
use super::{apply, check_op_lengths, close, invalid, map_chunks, sub, tol_squared, Op};
use crate::error::Result;

/// Per-operation sums of `weight(i)` over the atoms unshifted by each operation.
pub(super) fn count_weighted<W>(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[Op],
    tol: f64,
    width: usize,
    weight: W,
) -> Vec<u64>
where
    W: Fn(usize, &mut [u64]) + Sync + Send,
{
    let tol2 = tol_squared(tol);
    let n_ops = ops.len();
    let partials = map_chunks(positions.len(), |range| {
        let mut acc = vec![0u64; n_ops * width];
        for (k, r) in ops.iter().enumerate() {
            let slot = &mut acc[k * width..(k + 1) * width];
            for i in range.clone() {
                let d = sub(positions[i], center);
                if close(apply(r, d), d, tol2) {
                    weight(i, slot);
                }
            }
        }
        acc
    });
    let mut total = vec![0u64; n_ops * width];
    for p in partials {
        for (t, v) in total.iter_mut().zip(p) {
            *t += v;
        }
    }
    total
}

/// Number of atoms each operation leaves unshifted: the character of the atom-position
/// (permutation) representation.
///
/// `positions` in Å, `center` the point the operations fix, `ops` row-major matrices acting
/// on `x - center`, `tol` in Å. Returns one count per operation. NaN coordinates are never
/// counted (see the module notes).
pub fn count_unshifted(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    tol: f64,
) -> Vec<u64> {
    count_weighted(positions, center, ops, tol, 1, |_, slot| slot[0] += 1)
}

/// Atoms each operation of a group leaves unshifted, counted once per class when
/// `per_class`: the first operation of each class is counted and stands for its class (huge
/// structures, where detection verified only the generators, as verification stands on
/// them); otherwise every operation is counted. `class_of[k]` names the class of operation
/// k by its first operation's index (the core's convention: the smallest index in the
/// class), so the first operation of each class is the one with `class_of[k] == k`.
///
/// # Errors
/// `InvalidArgument` when `class_of` does not have one entry per operation or names an
/// operation that is not the first of its class.
pub fn count_unshifted_by_class(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    class_of: &[usize],
    per_class: bool,
    tol: f64,
) -> Result<Vec<u64>> {
    if !per_class {
        return Ok(count_unshifted(positions, center, ops, tol));
    }
    if class_of.len() != ops.len() {
        return Err(invalid(
            "class_of",
            format!("{} entries for {} operations", class_of.len(), ops.len()),
        ));
    }
    let firsts: Vec<usize> = (0..ops.len()).filter(|&k| class_of[k] == k).collect();
    let mats: Vec<[[f64; 3]; 3]> = firsts.iter().map(|&k| ops[k]).collect();
    let counts = count_unshifted(positions, center, &mats, tol);
    let mut by_first = vec![None; ops.len()];
    for (&k, &n) in firsts.iter().zip(&counts) {
        by_first[k] = Some(n);
    }
    class_of
        .iter()
        .map(|&c| {
            by_first.get(c).copied().flatten().ok_or_else(|| {
                invalid(
                    "class_of",
                    format!("operation {c} is not the first of a class"),
                )
            })
        })
        .collect()
}

/// Characters of the Cartesian-displacement representation (3 per atom): the number of
/// unshifted atoms times 1 + 2cosθ (proper) or −1 + 2cosθ (improper).
///
/// # Errors
/// `InvalidArgument` when `proper` or `angle_deg` do not have one entry per operation or an
/// angle is not finite.
pub fn cartesian_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    proper: &[bool],
    angle_deg: &[f64],
    tol: f64,
) -> Result<Vec<f64>> {
    check_op_lengths(ops.len(), proper, angle_deg)?;
    let counts = count_unshifted(positions, center, ops, tol);
    Ok(counts
        .iter()
        .enumerate()
        .map(|(k, &c)| c as f64 * orbital_character(1, proper[k], angle_deg[k]))
        .collect())
}
