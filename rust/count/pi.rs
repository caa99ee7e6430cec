//! One p orbital per atom normal to the plane of a planar structure.

use super::apply;
use super::atoms::count_unshifted;

/// Characters of one p orbital per atom perpendicular to the plane of a planar structure.
///
/// `normal` is the plane normal (normalised here). Each unshifted atom contributes (R n)·n,
/// which is ±1 for an operation of the planar structure; the sum is the number of unshifted
/// atoms times that value. A zero or non-finite normal gives NaN characters.
pub fn pi_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    normal: [f64; 3],
    tol: f64,
) -> Vec<f64> {
    let norm = (normal[0] * normal[0] + normal[1] * normal[1] + normal[2] * normal[2]).sqrt();
    let n = [normal[0] / norm, normal[1] / norm, normal[2] / norm];
    let counts = count_unshifted(positions, center, ops, tol);
    ops.iter()
        .zip(counts)
        .map(|(r, c)| {
            let rn = apply(r, n);
            c as f64 * (rn[0] * n[0] + rn[1] * n[1] + rn[2] * n[2])
        })
        .collect()
}
