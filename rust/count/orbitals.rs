//! Bases of atomic shells: the character of one shell of angular momentum l, and of a set
//! of shells on the atoms.

use super::atoms::count_weighted;
use super::{check_op_lengths, invalid};
use crate::error::{Error, Result};

/// cos of an angle in degrees, exact at the multiples of 60° and 90°.
fn cos_deg(x: f64) -> f64 {
    let r = x.rem_euclid(360.0);
    if r == 0.0 {
        1.0
    } else if r == 60.0 || r == 300.0 {
        0.5
    } else if r == 90.0 || r == 270.0 {
        0.0
    } else if r == 120.0 || r == 240.0 {
        -0.5
    } else if r == 180.0 {
        -1.0
    } else {
        r.to_radians().cos()
    }
}

/// Character contributed by one shell of angular momentum `l` on one unshifted atom.
///
/// Proper C(θ): χ_l(θ) = sin((l+½)θ)/sin(θ/2), evaluated as the Chebyshev sum
/// Σ_{m=-l..l} cos(mθ) (so θ = 0 gives 2l+1 exactly). Improper σh·C(θ):
/// (−1)^l χ_l(θ+180°) = (−1)^l Σ_m (−1)^m cos(mθ) (DESIGN.md §2). `angle_deg` in degrees.
pub fn orbital_character(l: usize, proper: bool, angle_deg: f64) -> f64 {
    let mut sum = 1.0;
    for m in 1..=l {
        let c = 2.0 * cos_deg(m as f64 * angle_deg);
        sum += if !proper && m % 2 == 1 { -c } else { c };
    }
    if !proper && l % 2 == 1 {
        -sum
    } else {
        sum
    }
}

/// [`orbital_character`] of one shell of angular momentum `l` for every operation
/// (`proper[k]`, `angle_deg[k]`): the contribution of one unshifted atom. Multiplied by
/// [`count_unshifted`] it gives the character when every atom carries the same shell.
///
/// # Errors
/// `InvalidArgument` when `proper` and `angle_deg` differ in length.
pub fn orbital_contributions(proper: &[bool], angle_deg: &[f64], l: usize) -> Result<Vec<f64>> {
    if proper.len() != angle_deg.len() {
        return Err(Error::InvalidArgument {
            name: "angle".into(),
            reason: format!(
                "{} angles for {} proper/improper flags",
                angle_deg.len(),
                proper.len()
            ),
        });
    }
    Ok(proper
        .iter()
        .zip(angle_deg)
        .map(|(&p, &a)| orbital_character(l, p, a))
        .collect())
}

/// Characters of a basis of atomic shells: atom i carries `shell_counts[i * n_l + l]` shells
/// of angular momentum l (l = 0..n_l-1), each spanning the 2l+1 real spherical harmonics.
///
/// Per operation, the number of unshifted shells of each l is counted (an integer) and then
/// combined as Σ_l count_l · [`orbital_character`]`(l, proper, θ)`. Atom positions are one s
/// shell per atom; Cartesian displacements one p shell per atom.
///
/// # Errors
/// `InvalidArgument` when `proper`/`angle_deg` lengths differ from `ops`, an angle is not
/// finite, or `shell_counts` is not `n_atoms × n_l`.
#[allow(clippy::too_many_arguments)]
pub fn shell_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    proper: &[bool],
    angle_deg: &[f64],
    shell_counts: &[u32],
    n_l: usize,
    tol: f64,
) -> Result<Vec<f64>> {
    check_op_lengths(ops.len(), proper, angle_deg)?;
    let expected = positions.len().checked_mul(n_l);
    if expected != Some(shell_counts.len()) {
        return Err(invalid(
            "shell_counts",
            format!(
                "{} entries, expected n_atoms × n_l = {} × {}",
                shell_counts.len(),
                positions.len(),
                n_l
            ),
        ));
    }
    if n_l == 0 {
        return Ok(vec![0.0; ops.len()]);
    }
    let counts = count_weighted(positions, center, ops, tol, n_l, |i, slot| {
        for (l, s) in slot.iter_mut().enumerate() {
            *s += u64::from(shell_counts[i * n_l + l]);
        }
    });
    Ok((0..ops.len())
        .map(|k| {
            (0..n_l)
                .map(|l| counts[k * n_l + l] as f64 * orbital_character(l, proper[k], angle_deg[k]))
                .sum()
        })
        .collect())
}
