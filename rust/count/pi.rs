//! One p orbital per π centre, along that centre's own normal.

use super::{apply, close, invalid, map_chunks, sub, tol_squared};
use crate::error::Result;

/// Smallest |(R n̂)·n̂| accepted at a centre that R leaves unshifted: R must send the p
/// orbital onto plus or minus itself (0.9 allows the normal of a slightly uneven fragment to
/// turn by up to about 25°).
pub const PI_ALIGNMENT: f64 = 0.9;

/// Characters of one p orbital at each π centre, the orbital of atom i along `normals[i]`.
///
/// `normals` has one row per atom; a zero row means the atom carries no p orbital. Each π
/// centre that R leaves unshifted contributes the sign of (R n̂_i)·n̂_i (n̂_i the unit
/// normal): +1 when R keeps the orbital, −1 when it turns it over. A planar structure has
/// the same normal everywhere; a π fragment of a non-planar structure has its local ones.
///
/// # Errors
/// `InvalidArgument` when `normals` does not have one row per atom, a row is not finite,
/// or R leaves a centre unshifted but turns its orbital away from ±itself
/// (|(R n̂)·n̂| < [`PI_ALIGNMENT`]; names the atom and the operation, the first in atom order).
pub fn pi_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    normals: &[[f64; 3]],
    tol: f64,
) -> Result<Vec<f64>> {
    let n = positions.len();
    if normals.len() != n {
        return Err(invalid(
            "normals",
            format!("{} rows for {n} atoms: they must match", normals.len()),
        ));
    }
    let tol2 = tol_squared(tol);
    let n_ops = ops.len();
    let partials = map_chunks(n, |range| -> Result<Vec<f64>> {
        let mut acc = vec![0.0; n_ops];
        for i in range {
            let v = normals[i];
            if !v.iter().all(|x| x.is_finite()) {
                return Err(invalid(
                    "normals",
                    format!("atom {i} has a NaN or infinite normal"),
                ));
            }
            let norm = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
            if norm == 0.0 {
                continue;
            }
            let u = [v[0] / norm, v[1] / norm, v[2] / norm];
            let d = sub(positions[i], center);
            for (k, r) in ops.iter().enumerate() {
                if !close(apply(r, d), d, tol2) {
                    continue;
                }
                let ru = apply(r, u);
                let dot = ru[0] * u[0] + ru[1] * u[1] + ru[2] * u[2];
                if dot.abs() < PI_ALIGNMENT {
                    return Err(invalid(
                        "normals",
                        format!(
                            "operation {k} leaves atom {i} in place but turns its p orbital \
                             away from itself ((R n)·n = {dot:.3}, not ±1)"
                        ),
                    ));
                }
                acc[k] += dot.signum();
            }
        }
        Ok(acc)
    });
    let mut total = vec![0.0; n_ops];
    for p in partials {
        for (t, v) in total.iter_mut().zip(p?) {
            *t += v;
        }
    }
    Ok(total)
}
