//! A user's own set of 3-vectors at every atom.

use super::{apply, close, invalid, map_chunks, sub, tol_squared};
use crate::error::Result;
use nalgebra::{DMatrix, Matrix3, Vector3, SVD};

/// Relative residual above which a per-atom vector set is not mapped into its own span.
pub const SPAN_RESIDUAL: f64 = 1e-6;

/// Projector onto the span of the columns of the 3×k matrix `v` (column a = `cols[a]`),
/// from nalgebra's SVD: V V⁺ = U_r U_rᵀ over singular values above 1e-10·σ_max.
fn span_projector(cols: &[[f64; 3]]) -> Option<Matrix3<f64>> {
    let (u, sigma): (DMatrix<f64>, Vec<f64>) = if cols.len() <= 3 {
        let mut m = Matrix3::zeros();
        for (a, c) in cols.iter().enumerate() {
            m.set_column(a, &Vector3::from(*c));
        }
        let svd = SVD::try_new(m, true, false, f64::EPSILON, 1000)?;
        let u = svd.u?;
        (
            DMatrix::from_iterator(3, 3, u.iter().copied()),
            svd.singular_values.iter().copied().collect(),
        )
    } else {
        let m = DMatrix::from_fn(3, cols.len(), |r, a| cols[a][r]);
        let svd = SVD::try_new(m, true, false, f64::EPSILON, 1000)?;
        let u = svd.u?;
        (u, svd.singular_values.iter().copied().collect())
    };
    let s_max = sigma.iter().fold(0.0f64, |a, &b| a.max(b));
    let mut p = Matrix3::zeros();
    if s_max > 0.0 {
        for (a, &s) in sigma.iter().enumerate() {
            if s > 1e-10 * s_max {
                let ua = Vector3::new(u[(0, a)], u[(1, a)], u[(2, a)]);
                p += ua * ua.transpose();
            }
        }
    }
    Some(p)
}

/// Characters of a user's own set of `per_atom` 3-vectors at every atom (`vectors` holds
/// n_atoms·per_atom rows, atom-major). Under R the character is Σ over unshifted atoms of
/// trace(V_i⁺ R V_i) = trace(R V_i V_i⁺), V_i the 3×per_atom matrix of atom i and V_i⁺ its
/// pseudo-inverse (nalgebra SVD); atoms R moves contribute 0. Linearly dependent vectors
/// count once per dimension of their span.
///
/// # Errors
/// `InvalidArgument` when `vectors` has the wrong length or a non-finite entry (names the
/// atom), or when R V_i leaves the span of V_i (relative residual > [`SPAN_RESIDUAL`]) at
/// an unshifted atom (names the atom and the operation; the first such atom in input order).
pub fn vector_set_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    vectors: &[[f64; 3]],
    per_atom: usize,
    tol: f64,
) -> Result<Vec<f64>> {
    let n = positions.len();
    if n.checked_mul(per_atom) != Some(vectors.len()) {
        return Err(invalid(
            "vectors",
            format!(
                "{} rows, expected n_atoms × per_atom = {} × {}",
                vectors.len(),
                n,
                per_atom
            ),
        ));
    }
    let n_ops = ops.len();
    if per_atom == 0 {
        return Ok(vec![0.0; n_ops]);
    }
    let tol2 = tol_squared(tol);
    let mats: Vec<Matrix3<f64>> = ops
        .iter()
        .map(|r| Matrix3::from_fn(|a, b| r[a][b]))
        .collect();
    let partials = map_chunks(n, |range| -> Result<Vec<f64>> {
        let mut acc = vec![0.0; n_ops];
        for i in range {
            let cols = &vectors[i * per_atom..(i + 1) * per_atom];
            if !cols.iter().all(|c| c.iter().all(|v| v.is_finite())) {
                return Err(invalid(
                    "vectors",
                    format!("atom {i} has a NaN or infinite vector"),
                ));
            }
            let d = sub(positions[i], center);
            let fixed: Vec<usize> = (0..n_ops)
                .filter(|&k| close(apply(&ops[k], d), d, tol2))
                .collect();
            if fixed.is_empty() {
                continue;
            }
            let p = span_projector(cols).ok_or_else(|| {
                invalid(
                    "vectors",
                    format!("the SVD of the vectors at atom {i} did not converge"),
                )
            })?;
            let v_norm2: f64 = cols
                .iter()
                .map(|c| c[0] * c[0] + c[1] * c[1] + c[2] * c[2])
                .sum();
            let q = Matrix3::identity() - p;
            for k in fixed {
                let r = &mats[k];
                let mut res2 = 0.0;
                for c in cols {
                    res2 += (q * (r * Vector3::from(*c))).norm_squared();
                }
                if res2 > SPAN_RESIDUAL * SPAN_RESIDUAL * v_norm2 {
                    return Err(invalid(
                        "vectors",
                        format!(
                            "operation {k} maps the vectors at atom {i} out of their span \
                             (relative residual {:.2e} > {SPAN_RESIDUAL:e})",
                            (res2 / v_norm2).sqrt()
                        ),
                    ));
                }
                acc[k] += (r * p).trace();
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
