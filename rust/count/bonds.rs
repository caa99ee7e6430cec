//! Bonds: finding them by covalent radii on the shared cell grid (grid.rs), and the
//! characters of bond stretches and of vectors along bonds.

use super::{apply, close, invalid, map_chunks, sub, tol_squared};
use crate::error::{Error, Result};
use crate::grid::{CellEdge, CellGrid};

/// Pairs of atoms bonded by distance: d_ij <= scale·(r_i + r_j), as `[i, j]` with i < j,
/// sorted. Uses the cell grid of grid.rs with a cell edge of scale·2·max radius (dense or
/// hashed cells, O(N) to build): no O(N²) step for molecular densities.
///
/// `radii` in Å, one per atom (for example covalent radii); `scale` a positive factor.
///
/// # Errors
/// `InvalidArgument` for a radii length mismatch, a negative or non-finite radius, a
/// non-positive or non-finite scale, or more atoms than `u32` indices hold;
/// `NonFiniteCoordinate` for a NaN or infinite coordinate.
pub fn find_bonds(positions: &[[f64; 3]], radii: &[f64], scale: f64) -> Result<Vec<[u32; 2]>> {
    let n = positions.len();
    if radii.len() != n {
        return Err(invalid(
            "radii",
            format!("{} radii for {} atoms: they must match", radii.len(), n),
        ));
    }
    if u32::try_from(n).is_err() {
        return Err(invalid(
            "positions",
            format!("{n} atoms exceed the limit of 2^32 - 1"),
        ));
    }
    if !(scale.is_finite() && scale > 0.0) {
        return Err(invalid(
            "scale",
            format!("must be a positive finite factor, got {scale}"),
        ));
    }
    if let Some(i) = radii.iter().position(|r| !(r.is_finite() && *r >= 0.0)) {
        return Err(invalid(
            "radii",
            format!(
                "atom {i} has radius {}, not a non-negative finite length",
                radii[i]
            ),
        ));
    }
    if let Some(atom) = positions
        .iter()
        .position(|p| !p.iter().all(|v| v.is_finite()))
    {
        return Err(Error::NonFiniteCoordinate { atom });
    }
    if n < 2 {
        return Ok(Vec::new());
    }
    let max_r = radii.iter().fold(0.0f64, |a, &b| a.max(b));
    // Cells as large as the longest possible bond: each search touches at most 3 cells
    // per axis. (A zero cutoff becomes a 1 Å cell in the grid.)
    let cutoff = scale * 2.0 * max_r;
    let elements = vec![0i64; n];
    let grid = CellGrid::build(positions, &elements, CellEdge::Fixed(cutoff))?;
    let input_index = grid.atoms_in_cell_order();
    let per_chunk = map_chunks(n, |range| {
        let mut out: Vec<[u32; 2]> = Vec::new();
        let mut mine: Vec<u32> = Vec::new();
        for i in range {
            mine.clear();
            // Slightly wider than the longest bond of atom i, so that rounding in the cell
            // bounds never drops a partner that sits exactly at the limit.
            let reach = scale * (radii[i] + max_r) * (1.0 + 1e-9);
            grid.scan(&positions[i], reach, |s, d2| {
                let j = input_index[s];
                let ju = j as usize;
                if ju > i {
                    let lim = scale * (radii[i] + radii[ju]);
                    if d2 <= lim * lim {
                        mine.push(j);
                    }
                }
            });
            mine.sort_unstable();
            out.extend(mine.iter().map(|&j| [i as u32, j]));
        }
        out
    });
    Ok(per_chunk.concat())
}

fn check_bonds(bonds: &[[u32; 2]], n_atoms: usize) -> Result<()> {
    for (b, &[i, j]) in bonds.iter().enumerate() {
        for atom in [i, j] {
            if atom as usize >= n_atoms {
                return Err(invalid(
                    "bonds",
                    format!("bond {b} names atom {atom}, but there are only {n_atoms} atoms"),
                ));
            }
        }
        if i == j {
            return Err(invalid(
                "bonds",
                format!("bond {b} joins atom {i} to itself"),
            ));
        }
    }
    Ok(())
}

/// Characters of a bond basis. Unoriented (a bond stretch): +1 per bond that R maps onto
/// itself either way round. Oriented (a vector along the bond): +1 when both ends are
/// unshifted, −1 when R swaps the ends.
///
/// Ends are compared directly: R(x_i-c) ≈ x_i-c, or R(x_i-c) ≈ x_j-c and R(x_j-c) ≈ x_i-c,
/// within `tol` Å.
///
/// # Errors
/// `InvalidArgument` naming the bond and atom when a bond names a missing atom or joins an
/// atom to itself.
pub fn bond_characters(
    positions: &[[f64; 3]],
    center: [f64; 3],
    ops: &[[[f64; 3]; 3]],
    bonds: &[[u32; 2]],
    oriented: bool,
    tol: f64,
) -> Result<Vec<f64>> {
    check_bonds(bonds, positions.len())?;
    let tol2 = tol_squared(tol);
    let n_ops = ops.len();
    let partials = map_chunks(bonds.len(), |range| {
        let mut acc = vec![0i64; n_ops];
        for (k, r) in ops.iter().enumerate() {
            for &[i, j] in &bonds[range.clone()] {
                let di = sub(positions[i as usize], center);
                let dj = sub(positions[j as usize], center);
                let (ri, rj) = (apply(r, di), apply(r, dj));
                if close(ri, di, tol2) && close(rj, dj, tol2) {
                    acc[k] += 1;
                } else if close(ri, dj, tol2) && close(rj, di, tol2) {
                    acc[k] += if oriented { -1 } else { 1 };
                }
            }
        }
        acc
    });
    let mut total = vec![0i64; n_ops];
    for p in partials {
        for (t, v) in total.iter_mut().zip(p) {
            *t += v;
        }
    }
    Ok(total.into_iter().map(|v| v as f64).collect())
}
