//! Characters of reducible representations by counting what an operation leaves in place.
//!
//! DESIGN.md §2: the character of a representation built on atoms (or bonds) under an
//! operation R depends only on the atoms (bonds) that R leaves unshifted and on the type of R,
//! so every function here counts; no matrix of a representation is ever formed.
//!
//! Conventions shared by every function:
//! - `ops[k]` is a 3×3 matrix, row-major (`ops[k][row][col]`), acting on centred coordinates
//!   `x - center`. `proper[k]` and `angle_deg[k]` say what it is: R = C(θ) when proper,
//!   R = σh·C(θ) when improper, θ in degrees (normally in [0, 180]; the formulas are even and
//!   periodic, so any finite θ gives the character of that rotation).
//! - Atom i is unshifted by R when |R(x_i - c) - (x_i - c)| <= tol (Å).
//! - A NaN coordinate (or a NaN in an operation, or a NaN/negative `tol`) never compares
//!   `<= tol`, so such an atom is never unshifted and contributes 0; nothing panics. Callers
//!   validate coordinates beforehand (structure.rs) when they want an error instead.
//! - Work is split into fixed chunks of [`CHUNK`] items. Above [`PARALLEL_THRESHOLD`] items the
//!   chunks run on the current rayon pool (wrap a call in `ThreadPool::install` to choose the
//!   thread count); counts are integers and float partial sums are added in chunk order, so
//!   every result is bit-identical for any number of threads.

use crate::error::{Error, Result};
use nalgebra::{DMatrix, Matrix3, Vector3, SVD};
use rayon::prelude::*;
use std::collections::HashMap;
use std::ops::Range;

/// Above this many atoms (or bonds) the kernels run their chunks in parallel.
pub const PARALLEL_THRESHOLD: usize = 20_000;

/// Items per chunk. Fixed, so float partial sums never depend on the thread count.
pub const CHUNK: usize = 4096;

/// Relative residual above which a per-atom vector set is not mapped into its own span.
pub const SPAN_RESIDUAL: f64 = 1e-6;

/// A point operation as a row-major 3×3 matrix.
type Op = [[f64; 3]; 3];

/// Runs `f` on consecutive chunks of `0..n`, in parallel above the threshold; results in
/// chunk order.
fn map_chunks<T, F>(n: usize, f: F) -> Vec<T>
where
    T: Send,
    F: Fn(Range<usize>) -> T + Sync + Send,
{
    let n_chunks = n.div_ceil(CHUNK);
    let range = |c: usize| c * CHUNK..((c + 1) * CHUNK).min(n);
    if n > PARALLEL_THRESHOLD {
        (0..n_chunks).into_par_iter().map(|c| f(range(c))).collect()
    } else {
        (0..n_chunks).map(|c| f(range(c))).collect()
    }
}

#[inline]
fn apply(r: &Op, d: [f64; 3]) -> [f64; 3] {
    [
        r[0][0] * d[0] + r[0][1] * d[1] + r[0][2] * d[2],
        r[1][0] * d[0] + r[1][1] * d[1] + r[1][2] * d[2],
        r[2][0] * d[0] + r[2][1] * d[1] + r[2][2] * d[2],
    ]
}

#[inline]
fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// True when |a - b|² <= tol2. NaN anywhere gives false.
#[inline]
fn close(a: [f64; 3], b: [f64; 3], tol2: f64) -> bool {
    let d = sub(a, b);
    d[0] * d[0] + d[1] * d[1] + d[2] * d[2] <= tol2
}

/// tol², or a negative number (nothing is ever close) for a negative or NaN tolerance.
#[inline]
fn tol_squared(tol: f64) -> f64 {
    if tol >= 0.0 {
        tol * tol
    } else {
        -1.0
    }
}

fn invalid(name: &str, reason: String) -> Error {
    Error::InvalidArgument {
        name: name.to_string(),
        reason,
    }
}

fn check_op_lengths(n_ops: usize, proper: &[bool], angle_deg: &[f64]) -> Result<()> {
    if proper.len() != n_ops {
        return Err(invalid(
            "proper",
            format!(
                "{} flags for {} operations: they must match",
                proper.len(),
                n_ops
            ),
        ));
    }
    if angle_deg.len() != n_ops {
        return Err(invalid(
            "angle_deg",
            format!(
                "{} angles for {} operations: they must match",
                angle_deg.len(),
                n_ops
            ),
        ));
    }
    if let Some(k) = angle_deg.iter().position(|a| !a.is_finite()) {
        return Err(invalid(
            "angle_deg",
            format!(
                "operation {k} has angle {}, not a finite number of degrees",
                angle_deg[k]
            ),
        ));
    }
    Ok(())
}

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

/// Per-operation sums of `weight(i)` over the atoms unshifted by each operation.
fn count_weighted<W>(
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

/// Pairs of atoms bonded by distance: d_ij <= scale·(r_i + r_j), as `[i, j]` with i < j,
/// sorted. Uses a cell grid (cell edge = scale·2·max radius): a dense grid filled by
/// counting sort (O(N)) when the occupied box has at most 8N+64 cells, else a hash map of
/// the occupied cells (sparse, far-apart atoms). No O(N²) step for molecular densities.
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
    let cutoff = scale * 2.0 * max_r;
    // A larger cell stays correct (only slower); zero radii still need a positive edge.
    let cell = if cutoff > 0.0 && cutoff.is_finite() {
        cutoff
    } else {
        1.0
    };
    let mut lo = positions[0];
    for p in positions {
        for a in 0..3 {
            lo[a] = lo[a].min(p[a]);
        }
    }
    // `as i64` saturates; saturated cells only merge cells, which stays correct.
    let key = |p: &[f64; 3]| -> [i64; 3] {
        [
            ((p[0] - lo[0]) / cell).floor() as i64,
            ((p[1] - lo[1]) / cell).floor() as i64,
            ((p[2] - lo[2]) / cell).floor() as i64,
        ]
    };
    let keys: Vec<[i64; 3]> = positions.iter().map(key).collect();
    let grid = CellGrid::new(&keys);
    let per_chunk = map_chunks(n, |range| {
        let mut out: Vec<[u32; 2]> = Vec::new();
        let mut mine: Vec<u32> = Vec::new();
        for i in range {
            mine.clear();
            let k = keys[i];
            for dx in -1i64..=1 {
                for dy in -1i64..=1 {
                    for dz in -1i64..=1 {
                        let nk = [
                            k[0].saturating_add(dx),
                            k[1].saturating_add(dy),
                            k[2].saturating_add(dz),
                        ];
                        for &j in grid.atoms(nk) {
                            let ju = j as usize;
                            if ju <= i {
                                continue;
                            }
                            let lim = scale * (radii[i] + radii[ju]);
                            let d = sub(positions[i], positions[ju]);
                            if d[0] * d[0] + d[1] * d[1] + d[2] * d[2] <= lim * lim {
                                mine.push(j);
                            }
                        }
                    }
                }
            }
            mine.sort_unstable();
            mine.dedup();
            out.extend(mine.iter().map(|&j| [i as u32, j]));
        }
        out
    });
    Ok(per_chunk.concat())
}

/// Atoms grouped by cell: a dense array of cells (counting sort, O(N)) when the occupied
/// box is small enough, else a hash map of the occupied cells.
enum CellGrid {
    Dense {
        dims: [i64; 3],
        /// Cell c holds `order[start[c]..start[c + 1]]`.
        start: Vec<u32>,
        order: Vec<u32>,
    },
    Sparse {
        cells: HashMap<[i64; 3], (usize, usize)>,
        order: Vec<u32>,
    },
}

impl CellGrid {
    /// `keys` are non-negative cell indices (relative to the lowest corner).
    fn new(keys: &[[i64; 3]]) -> CellGrid {
        let n = keys.len();
        let mut dims = [1i64; 3];
        for k in keys {
            for a in 0..3 {
                dims[a] = dims[a].max(k[a].saturating_add(1));
            }
        }
        let n_cells = dims[0]
            .checked_mul(dims[1])
            .and_then(|v| v.checked_mul(dims[2]))
            .and_then(|v| usize::try_from(v).ok());
        if let Some(n_cells) = n_cells.filter(|&c| c <= 8 * n + 64) {
            let id = |k: &[i64; 3]| ((k[0] * dims[1] + k[1]) * dims[2] + k[2]) as usize;
            let mut start = vec![0u32; n_cells + 1];
            for k in keys {
                start[id(k) + 1] += 1;
            }
            for c in 0..n_cells {
                start[c + 1] += start[c];
            }
            let mut fill = start.clone();
            let mut order = vec![0u32; n];
            for (i, k) in keys.iter().enumerate() {
                let c = id(k);
                order[fill[c] as usize] = i as u32;
                fill[c] += 1;
            }
            return CellGrid::Dense { dims, start, order };
        }
        let mut order: Vec<u32> = (0..n as u32).collect();
        order.sort_unstable_by_key(|&i| keys[i as usize]);
        let mut cells = HashMap::new();
        let mut s = 0;
        while s < n {
            let k = keys[order[s] as usize];
            let mut e = s + 1;
            while e < n && keys[order[e] as usize] == k {
                e += 1;
            }
            cells.insert(k, (s, e));
            s = e;
        }
        CellGrid::Sparse { cells, order }
    }

    /// The atoms in cell `k` (empty outside the grid).
    fn atoms(&self, k: [i64; 3]) -> &[u32] {
        match self {
            CellGrid::Dense { dims, start, order } => {
                if (0..3).any(|a| k[a] < 0 || k[a] >= dims[a]) {
                    return &[];
                }
                let c = ((k[0] * dims[1] + k[1]) * dims[2] + k[2]) as usize;
                &order[start[c] as usize..start[c + 1] as usize]
            }
            CellGrid::Sparse { cells, order } => match cells.get(&k) {
                Some(&(a, b)) => &order[a..b],
                None => &[],
            },
        }
    }
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

fn find_root(parent: &mut [u32], mut a: u32) -> u32 {
    let mut root = a;
    while parent[root as usize] != root {
        root = parent[root as usize];
    }
    while parent[a as usize] != root {
        let next = parent[a as usize];
        parent[a as usize] = root;
        a = next;
    }
    root
}

/// Orbit id of every atom under the group generated by `permutations` (each maps atom i to
/// atom `perm[i]`), by union-find. Ids are numbered in order of first appearance: atom 0 is
/// in orbit 0, the first atom outside it starts orbit 1, and so on.
///
/// # Errors
/// `InvalidArgument` when a permutation has the wrong length, names a missing atom, or maps
/// two atoms onto one.
pub fn orbits(n_atoms: usize, permutations: &[Vec<u32>]) -> Result<Vec<u32>> {
    if u32::try_from(n_atoms).is_err() {
        return Err(invalid(
            "n_atoms",
            format!("{n_atoms} atoms exceed the limit of 2^32 - 1"),
        ));
    }
    let mut seen = vec![usize::MAX; n_atoms];
    for (p, perm) in permutations.iter().enumerate() {
        if perm.len() != n_atoms {
            return Err(invalid(
                "permutations",
                format!(
                    "permutation {p} has {} entries for {n_atoms} atoms",
                    perm.len()
                ),
            ));
        }
        for (i, &j) in perm.iter().enumerate() {
            let ju = j as usize;
            if ju >= n_atoms {
                return Err(invalid(
                    "permutations",
                    format!("permutation {p} maps atom {i} to atom {j}, but there are only {n_atoms} atoms"),
                ));
            }
            if seen[ju] == p {
                return Err(invalid(
                    "permutations",
                    format!("permutation {p} maps two atoms onto atom {j}: not a permutation"),
                ));
            }
            seen[ju] = p;
        }
    }
    let mut parent: Vec<u32> = (0..n_atoms as u32).collect();
    let mut size = vec![1u32; n_atoms];
    for perm in permutations {
        for (i, &j) in perm.iter().enumerate() {
            let (a, b) = (find_root(&mut parent, i as u32), find_root(&mut parent, j));
            if a != b {
                let (big, small) = if size[a as usize] >= size[b as usize] {
                    (a, b)
                } else {
                    (b, a)
                };
                parent[small as usize] = big;
                size[big as usize] += size[small as usize];
            }
        }
    }
    let mut id_of_root = vec![u32::MAX; n_atoms];
    let mut next = 0u32;
    let mut out = Vec::with_capacity(n_atoms);
    for i in 0..n_atoms as u32 {
        let r = find_root(&mut parent, i) as usize;
        if id_of_root[r] == u32::MAX {
            id_of_root[r] = next;
            next += 1;
        }
        out.push(id_of_root[r]);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::SymmetricEigen;

    // ---------- helpers (tests only) ----------

    const EYE: Op = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];

    fn unit(v: [f64; 3]) -> [f64; 3] {
        let n = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        [v[0] / n, v[1] / n, v[2] / n]
    }

    /// Proper rotation by `deg` about `axis` (Rodrigues).
    fn rot(axis: [f64; 3], deg: f64) -> Op {
        let [x, y, z] = unit(axis);
        let (s, c) = deg.to_radians().sin_cos();
        let t = 1.0 - c;
        [
            [c + x * x * t, x * y * t - z * s, x * z * t + y * s],
            [y * x * t + z * s, c + y * y * t, y * z * t - x * s],
            [z * x * t - y * s, z * y * t + x * s, c + z * z * t],
        ]
    }

    /// Reflection through the plane with normal `n`.
    fn refl(n: [f64; 3]) -> Op {
        let n = unit(n);
        let mut r = EYE;
        for a in 0..3 {
            for b in 0..3 {
                r[a][b] -= 2.0 * n[a] * n[b];
            }
        }
        r
    }

    fn mul(a: &Op, b: &Op) -> Op {
        let mut c = [[0.0; 3]; 3];
        for i in 0..3 {
            for j in 0..3 {
                c[i][j] = (0..3).map(|k| a[i][k] * b[k][j]).sum();
            }
        }
        c
    }

    fn transpose(a: &Op) -> Op {
        let mut t = [[0.0; 3]; 3];
        for i in 0..3 {
            for j in 0..3 {
                t[i][j] = a[j][i];
            }
        }
        t
    }

    /// Improper σh·C(deg) about `axis`.
    fn improper(axis: [f64; 3], deg: f64) -> Op {
        mul(&refl(axis), &rot(axis, deg))
    }

    fn det(a: &Op) -> f64 {
        a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
            - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
            + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0])
    }

    /// (proper, θ in degrees) of an orthogonal matrix, from its trace: tr C(θ) = 1 + 2cosθ,
    /// tr σh·C(θ) = −1 + 2cosθ (common practice).
    fn op_type(r: &Op) -> (bool, f64) {
        let tr = r[0][0] + r[1][1] + r[2][2];
        let proper = det(r) > 0.0;
        let c = if proper {
            (tr - 1.0) / 2.0
        } else {
            (tr + 1.0) / 2.0
        };
        (proper, c.clamp(-1.0, 1.0).acos().to_degrees())
    }

    fn same(a: &Op, b: &Op) -> bool {
        (0..3).all(|i| (0..3).all(|j| (a[i][j] - b[i][j]).abs() < 1e-9))
    }

    fn close_group(gens: &[Op]) -> Vec<Op> {
        let mut g = vec![EYE];
        for x in gens {
            if !g.iter().any(|y| same(x, y)) {
                g.push(*x);
            }
        }
        loop {
            let mut added = false;
            let snapshot = g.clone();
            for a in &snapshot {
                for b in &snapshot {
                    let c = mul(a, b);
                    if !g.iter().any(|y| same(&c, y)) {
                        g.push(c);
                        added = true;
                    }
                }
            }
            if !added {
                return g;
            }
        }
    }

    use crate::testutil::Rng;

    /// A symmetric structure: orbits of seeds under `group` (some seeds moved onto fixed
    /// elements of single operations), rotated by a random rotation and shifted to `center`.
    /// Returns (positions, ops in the rotated frame, orbit label of each atom).
    fn symmetric_structure(
        group: &[Op],
        rng: &mut Rng,
        center: [f64; 3],
        with_center_atom: bool,
    ) -> (Vec<[f64; 3]>, Vec<Op>, Vec<u32>) {
        let mut seeds: Vec<[f64; 3]> = vec![rng.point(3.0)];
        for g in group.iter().skip(1).step_by(1 + group.len() / 8).take(4) {
            // Average over the cyclic group <g>: a point fixed by g.
            let p = rng.point(3.0);
            let mut h = *g;
            let mut sum = p;
            let mut m = 1.0;
            while !same(&h, &EYE) {
                let q = apply(&h, p);
                for a in 0..3 {
                    sum[a] += q[a];
                }
                m += 1.0;
                h = mul(&h, g);
            }
            let q = [sum[0] / m, sum[1] / m, sum[2] / m];
            // A seed fixed by i or S2n lands on the centre: keep it only when asked for.
            if q.iter().map(|v| v * v).sum::<f64>() > 0.01 {
                seeds.push(q);
            }
        }
        if with_center_atom {
            seeds.push([0.0; 3]);
        }
        let mut pts: Vec<[f64; 3]> = Vec::new();
        let mut labels = Vec::new();
        let mut label = 0u32;
        for s in seeds {
            let before = pts.len();
            for g in group {
                let q = apply(g, s);
                if !pts.iter().any(|p| close(*p, q, 1e-12)) {
                    pts.push(q);
                }
            }
            if pts.len() > before {
                labels.extend(std::iter::repeat_n(label, pts.len() - before));
                label += 1;
            }
        }
        let qrot = rot(rng.point(1.0), rng.sym(180.0));
        let qt = transpose(&qrot);
        let positions = pts
            .iter()
            .map(|p| {
                let r = apply(&qrot, *p);
                [r[0] + center[0], r[1] + center[1], r[2] + center[2]]
            })
            .collect();
        let ops = group.iter().map(|g| mul(&mul(&qrot, g), &qt)).collect();
        (positions, ops, labels)
    }

    /// Atom permutation of a symmetry operation by brute force: perm[i] = j with R x_i ≈ x_j.
    fn permutation(positions: &[[f64; 3]], center: [f64; 3], r: &Op) -> Vec<usize> {
        positions
            .iter()
            .map(|x| {
                let y = apply(r, sub(*x, center));
                let j = positions
                    .iter()
                    .position(|z| close(sub(*z, center), y, 1e-12));
                j.unwrap_or_else(|| panic!("test structure is not symmetric"))
            })
            .collect()
    }

    fn point_groups() -> Vec<(&'static str, Vec<Op>)> {
        let z = [0.0, 0.0, 1.0];
        let x = [1.0, 0.0, 0.0];
        let phi = (1.0 + 5f64.sqrt()) / 2.0;
        let inv = [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]];
        vec![
            ("C2v", close_group(&[rot(z, 180.0), refl(x)])),
            ("C3v", close_group(&[rot(z, 120.0), refl([0.0, 1.0, 0.0])])),
            ("D3h", close_group(&[rot(z, 120.0), rot(x, 180.0), refl(z)])),
            ("S6", close_group(&[improper(z, 60.0)])),
            ("D2d", close_group(&[improper(z, 90.0), rot(x, 180.0)])),
            ("C5h", close_group(&[rot(z, 72.0), refl(z)])),
            (
                "Td",
                close_group(&[improper(z, 90.0), rot([1.0, 1.0, 1.0], 120.0)]),
            ),
            (
                "Oh",
                close_group(&[rot(z, 90.0), rot([1.0, 1.0, 1.0], 120.0), inv]),
            ),
            (
                "Ih",
                close_group(&[rot([0.0, 1.0, phi], 72.0), rot([1.0, 1.0, 1.0], 120.0), inv]),
            ),
        ]
    }

    // ---------- literal matrices of representations (tests only) ----------

    /// Trace of the full 3N×3N Cartesian-displacement matrix: block (perm i, i) = R.
    fn literal_cartesian(positions: &[[f64; 3]], center: [f64; 3], r: &Op) -> f64 {
        let n = positions.len();
        let perm = permutation(positions, center, r);
        let mut m = DMatrix::<f64>::zeros(3 * n, 3 * n);
        for (i, &j) in perm.iter().enumerate() {
            for a in 0..3 {
                for b in 0..3 {
                    m[(3 * j + a, 3 * i + b)] = r[a][b];
                }
            }
        }
        m.trace()
    }

    /// Monomials x^a y^b z^c of degree l, in a fixed order.
    fn monomials(l: usize) -> Vec<[usize; 3]> {
        let mut v = Vec::new();
        for a in (0..=l).rev() {
            for b in (0..=l - a).rev() {
                v.push([a, b, l - a - b]);
            }
        }
        v
    }

    /// Matrix of f ↦ f∘Rᵀ on homogeneous polynomials of degree l (monomial coefficients).
    fn symmetric_power(r: &Op, l: usize) -> DMatrix<f64> {
        let mons = monomials(l);
        let index: HashMap<[usize; 3], usize> =
            mons.iter().enumerate().map(|(i, m)| (*m, i)).collect();
        let mut s = DMatrix::zeros(mons.len(), mons.len());
        for (col, m) in mons.iter().enumerate() {
            // Substitute x_k -> Σ_j R[j][k] x_j and expand.
            let mut poly: HashMap<[usize; 3], f64> = HashMap::from([([0, 0, 0], 1.0)]);
            for k in 0..3 {
                for _ in 0..m[k] {
                    let mut next: HashMap<[usize; 3], f64> = HashMap::new();
                    for (e, c) in &poly {
                        for j in 0..3 {
                            let mut e2 = *e;
                            e2[j] += 1;
                            *next.entry(e2).or_insert(0.0) += c * r[j][k];
                        }
                    }
                    poly = next;
                }
            }
            for (e, c) in poly {
                s[(index[&e], col)] += c;
            }
        }
        s
    }

    /// Orthonormal basis (columns) of the harmonic polynomials of degree l: the kernel of
    /// the Laplacian, which is the 2l+1 real spherical harmonics up to a change of basis.
    fn harmonic_basis(l: usize) -> DMatrix<f64> {
        let mons = monomials(l);
        if l < 2 {
            return DMatrix::identity(mons.len(), mons.len());
        }
        let lower = monomials(l - 2);
        let index: HashMap<[usize; 3], usize> =
            lower.iter().enumerate().map(|(i, m)| (*m, i)).collect();
        let mut lap = DMatrix::zeros(lower.len(), mons.len());
        for (col, m) in mons.iter().enumerate() {
            for k in 0..3 {
                if m[k] >= 2 {
                    let mut e = *m;
                    e[k] -= 2;
                    lap[(index[&e], col)] += (m[k] * (m[k] - 1)) as f64;
                }
            }
        }
        let eig: SymmetricEigen<f64, nalgebra::Dyn> = SymmetricEigen::new(lap.transpose() * &lap);
        let cols: Vec<_> = (0..mons.len())
            .filter(|&i| eig.eigenvalues[i].abs() < 1e-9)
            .map(|i| eig.eigenvectors.column(i).into_owned())
            .collect();
        assert_eq!(cols.len(), 2 * l + 1, "harmonic space of l = {l}");
        DMatrix::from_columns(&cols)
    }

    /// The (2l+1)×(2l+1) matrix of R on the harmonics of degree l; checks invariance.
    fn harmonic_matrix(r: &Op, l: usize, basis: &DMatrix<f64>) -> DMatrix<f64> {
        let s = symmetric_power(r, l);
        let d = basis.transpose() * &s * basis;
        let residual = (&s * basis - basis * &d).norm();
        assert!(
            residual < 1e-9,
            "harmonics of l = {l} not invariant: {residual}"
        );
        d
    }

    /// Trace of the full orbital matrix (dimension Σ_i Σ_l shells·(2l+1)).
    fn literal_shells(
        positions: &[[f64; 3]],
        center: [f64; 3],
        r: &Op,
        shells: &[u32],
        n_l: usize,
        bases: &[DMatrix<f64>],
    ) -> f64 {
        let n = positions.len();
        let perm = permutation(positions, center, r);
        let mut offset = vec![0usize; n + 1];
        for i in 0..n {
            offset[i + 1] = offset[i]
                + (0..n_l)
                    .map(|l| shells[i * n_l + l] as usize * (2 * l + 1))
                    .sum::<usize>();
        }
        let blocks: Vec<DMatrix<f64>> =
            (0..n_l).map(|l| harmonic_matrix(r, l, &bases[l])).collect();
        let mut m = DMatrix::<f64>::zeros(offset[n], offset[n]);
        for (i, &j) in perm.iter().enumerate() {
            let (mut oi, mut oj) = (offset[i], offset[j]);
            for l in 0..n_l {
                for _ in 0..shells[i * n_l + l] {
                    m.view_mut((oj, oi), (2 * l + 1, 2 * l + 1))
                        .copy_from(&blocks[l]);
                    oi += 2 * l + 1;
                    oj += 2 * l + 1;
                }
            }
        }
        m.trace()
    }

    // ---------- hand-made molecules (textbook characters) ----------

    /// Water in the yz plane (Mulliken), C2 along z; ops E, C2(z), σ(xz), σ(yz).
    fn water() -> (Vec<[f64; 3]>, Vec<Op>, Vec<bool>, Vec<f64>) {
        let pos = vec![
            [0.0, 0.0, 0.1173],
            [0.0, 0.7572, -0.4692],
            [0.0, -0.7572, -0.4692],
        ];
        let ops = vec![
            EYE,
            rot([0.0, 0.0, 1.0], 180.0),
            refl([0.0, 1.0, 0.0]),
            refl([1.0, 0.0, 0.0]),
        ];
        (
            pos,
            ops,
            vec![true, true, false, false],
            vec![0.0, 180.0, 0.0, 0.0],
        )
    }

    #[test]
    fn water_atom_and_cartesian_characters() {
        let (pos, ops, proper, angle) = water();
        // Source: Cotton, Chemical Applications of Group Theory, H2O Γ3N (from memory; there
        // the molecule lies in xz, here in yz after Mulliken, so σ(xz) and σ(yz) swap).
        assert_eq!(
            count_unshifted(&pos, [0.0; 3], &ops, 1e-3),
            vec![3, 1, 1, 3]
        );
        let chi = cartesian_characters(&pos, [0.0; 3], &ops, &proper, &angle, 1e-3).unwrap();
        assert_eq!(chi, vec![9.0, -1.0, 1.0, 3.0]);
        // One s and one p shell on each atom: Γ_atoms + Γ_3N.
        let chi = shell_characters(
            &pos,
            [0.0; 3],
            &ops,
            &proper,
            &angle,
            &[1, 1, 1, 1, 1, 1],
            2,
            1e-3,
        )
        .unwrap();
        assert_eq!(chi, vec![12.0, 0.0, 2.0, 6.0]);
    }

    #[test]
    fn water_bonds_and_bond_characters() {
        let (pos, ops, _, _) = water();
        // Covalent radii O 0.66, H 0.31 Å (Cordero et al. 2008, Dalton Trans., from memory).
        let bonds = find_bonds(&pos, &[0.66, 0.31, 0.31], 1.2).unwrap();
        assert_eq!(bonds, vec![[0, 1], [0, 2]]);
        // O–H stretches of water: Γ = 2, 0, 0, 2 (A1 + B2). Source: Cotton, H2O stretches
        // (from memory; axes as in the test above).
        assert_eq!(
            bond_characters(&pos, [0.0; 3], &ops, &bonds, false, 1e-3).unwrap(),
            vec![2.0, 0.0, 0.0, 2.0]
        );
        // Vectors along the bonds: no operation reverses an O–H bond, so the same.
        assert_eq!(
            bond_characters(&pos, [0.0; 3], &ops, &bonds, true, 1e-3).unwrap(),
            vec![2.0, 0.0, 0.0, 2.0]
        );
    }

    #[test]
    fn ammonia_characters() {
        let z = [0.0, 0.0, 1.0];
        let mut pos = vec![[0.0, 0.0, 0.38]];
        for k in 0..3 {
            let a = (120.0 * k as f64).to_radians();
            pos.push([0.94 * a.cos(), 0.94 * a.sin(), 0.0]);
        }
        let ops = vec![EYE, rot(z, 120.0), refl([0.0, 1.0, 0.0])];
        let (proper, angle) = (vec![true, true, false], vec![0.0, 120.0, 0.0]);
        // Source: Cotton, NH3 Γ3N = 12, 0, 2 (E, 2C3, 3σv) (from memory); also shared/INTERFACE.md.
        assert_eq!(count_unshifted(&pos, [0.0; 3], &ops, 1e-3), vec![4, 1, 2]);
        assert_eq!(
            cartesian_characters(&pos, [0.0; 3], &ops, &proper, &angle, 1e-3).unwrap(),
            vec![12.0, 0.0, 2.0]
        );
        let bonds = vec![[0, 1], [0, 2], [0, 3]];
        // N–H stretches: 3, 0, 1 = A1 + E (Nakamoto, XY3 pyramidal, from memory).
        assert_eq!(
            bond_characters(&pos, [0.0; 3], &ops, &bonds, false, 1e-3).unwrap(),
            vec![3.0, 0.0, 1.0]
        );
        // Two vectors at N spanning the plane ⊥ C3: χ = 2, 2cos120° = −1, 0.
        let mut vectors = vec![[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]];
        for p in &pos[1..] {
            let r = unit(*p);
            vectors.push(r); // radial at H
            vectors.push([0.0, 0.0, 1.0]); // z at H
        }
        let chi = vector_set_characters(&pos, [0.0; 3], &ops, &vectors, 2, 1e-3).unwrap();
        // H atoms: E 3·2; σv fixes H1 whose plane (radial, z) lies in the mirror: +2.
        let want = [2.0 + 6.0, -1.0, 0.0 + 2.0];
        for (c, w) in chi.iter().zip(want) {
            assert!((c - w).abs() < 1e-12, "{chi:?}");
        }
    }

    #[test]
    fn methane_with_s4() {
        let s = 0.629;
        let pos = vec![[0.0; 3], [s, s, s], [-s, -s, s], [-s, s, -s], [s, -s, -s]];
        let z = [0.0, 0.0, 1.0];
        let ops = vec![
            EYE,
            rot([1.0, 1.0, 1.0], 120.0),
            rot(z, 180.0),
            improper(z, 90.0),
            refl([1.0, -1.0, 0.0]),
        ];
        let (proper, angle) = (
            vec![true, true, true, false, false],
            vec![0.0, 120.0, 180.0, 90.0, 0.0],
        );
        // Source: Cotton, CH4 Γ3N = 15, 0, −1, −1, 3 (E, 8C3, 3C2, 6S4, 6σd) (from memory).
        assert_eq!(
            count_unshifted(&pos, [0.0; 3], &ops, 1e-3),
            vec![5, 2, 1, 1, 3]
        );
        assert_eq!(
            cartesian_characters(&pos, [0.0; 3], &ops, &proper, &angle, 1e-3).unwrap(),
            vec![15.0, 0.0, -1.0, -1.0, 3.0]
        );
        // C–H stretches: 4, 1, 0, 0, 2 = A1 + T2 (Nakamoto, XY4 tetrahedral, from memory).
        let bonds = find_bonds(&pos, &[0.76, 0.31, 0.31, 0.31, 0.31], 1.2).unwrap();
        assert_eq!(bonds, vec![[0, 1], [0, 2], [0, 3], [0, 4]]);
        assert_eq!(
            bond_characters(&pos, [0.0; 3], &ops, &bonds, false, 1e-3).unwrap(),
            vec![4.0, 1.0, 0.0, 0.0, 2.0]
        );
    }

    #[test]
    fn benzene_pi_characters() {
        let z = [0.0, 0.0, 1.0];
        let pos: Vec<[f64; 3]> = (0..6)
            .map(|k| {
                let a = (60.0 * k as f64).to_radians();
                [1.39 * a.cos() + 5.0, 1.39 * a.sin() - 2.0, 7.0]
            })
            .collect();
        let c = [5.0, -2.0, 7.0];
        let along = [1.0, 0.0, 0.0]; // through atoms 0 and 3
        let between = [30f64.to_radians().cos(), 30f64.to_radians().sin(), 0.0];
        let ops = vec![
            EYE,
            rot(z, 60.0),
            rot(z, 120.0),
            rot(z, 180.0),
            rot(along, 180.0),
            rot(between, 180.0),
            improper(z, 180.0),
            improper(z, 120.0),
            improper(z, 60.0),
            refl(z),
            refl([0.0, 1.0, 0.0]), // plane containing z and atoms 0, 3
            refl([-between[1], between[0], 0.0]), // plane containing z, between atoms
        ];
        // Source: Cotton, benzene π orbitals, Γπ = 6 0 0 0 −2 0 0 0 0 −6 (mirror through
        // atoms 2, between atoms 0) = A2u + B2g + E1g + E2u (from memory).
        let want = [6.0, 0.0, 0.0, 0.0, -2.0, 0.0, 0.0, 0.0, 0.0, -6.0, 2.0, 0.0];
        let chi = pi_characters(&pos, c, &ops, [0.0, 0.0, 2.0], 1e-3);
        for (k, (a, b)) in chi.iter().zip(want).enumerate() {
            assert!((a - b).abs() < 1e-12, "op {k}: {chi:?}");
        }
    }

    // ---------- the formula against literal traces ----------

    #[test]
    fn orbital_character_matches_harmonic_traces() {
        let bases: Vec<_> = (0..5).map(harmonic_basis).collect();
        let mut rng = Rng(7);
        let axis = rng.point(1.0);
        for proper in [true, false] {
            for theta in [0.0, 36.0, 45.0, 60.0, 72.0, 90.0, 120.0, 137.5, 180.0] {
                let r = if proper {
                    rot(axis, theta)
                } else {
                    improper(axis, theta)
                };
                for (l, basis) in bases.iter().enumerate() {
                    let t = harmonic_matrix(&r, l, basis).trace();
                    let chi = orbital_character(l, proper, theta);
                    assert!(
                        (t - chi).abs() < 1e-9,
                        "l={l} proper={proper} θ={theta}: {t} vs {chi}"
                    );
                }
            }
        }
        // Exact limits: E gives 2l+1; i gives (−1)^l (2l+1); σ gives (−1)^l χ_l(180°) = 1
        // (l+1 harmonics even, l odd under a mirror; common practice).
        for l in 0..6 {
            let d = (2 * l + 1) as f64;
            assert_eq!(orbital_character(l, true, 0.0), d);
            assert_eq!(
                orbital_character(l, false, 180.0),
                if l % 2 == 0 { d } else { -d }
            );
            assert_eq!(orbital_character(l, false, 0.0), 1.0);
        }
        // Cartesian columns of DESIGN.md §2: 1 + 2cosθ and −1 + 2cosθ.
        for theta in [0.0f64, 60.0, 90.0, 120.0, 180.0, 51.4] {
            let c = 2.0 * theta.to_radians().cos();
            assert!((orbital_character(1, true, theta) - (1.0 + c)).abs() < 1e-12);
            assert!((orbital_character(1, false, theta) - (-1.0 + c)).abs() < 1e-12);
        }
        // The ratio sin((l+½)θ)/sin(θ/2) away from its removable singularity.
        for l in 0..5 {
            let theta: f64 = 100.0;
            let ratio =
                ((l as f64 + 0.5) * theta.to_radians()).sin() / (theta.to_radians() / 2.0).sin();
            assert!((orbital_character(l, true, theta) - ratio).abs() < 1e-12);
        }
    }

    #[test]
    fn counted_characters_match_literal_traces() {
        let bases: Vec<_> = (0..4).map(harmonic_basis).collect();
        let mut rng = Rng(2024);
        for (name, group) in point_groups() {
            let center = [1.5, -0.5, 2.0];
            let (pos, ops, labels) = symmetric_structure(&group, &mut rng, center, true);
            let kinds: Vec<(bool, f64)> = ops.iter().map(op_type).collect();
            let proper: Vec<bool> = kinds.iter().map(|k| k.0).collect();
            let angle: Vec<f64> = kinds.iter().map(|k| k.1).collect();
            let n_l = 4;
            // Random shells per orbit: symmetry-equivalent atoms carry the same basis.
            let per_orbit: Vec<u32> = (0..(labels[labels.len() - 1] as usize + 1) * n_l)
                .map(|_| (rng.next() * 2.0) as u32)
                .collect();
            let shells: Vec<u32> = labels
                .iter()
                .flat_map(|&o| per_orbit[o as usize * n_l..(o as usize + 1) * n_l].to_vec())
                .collect();
            let chi_cart = cartesian_characters(&pos, center, &ops, &proper, &angle, 1e-6).unwrap();
            let chi_shell =
                shell_characters(&pos, center, &ops, &proper, &angle, &shells, n_l, 1e-6).unwrap();
            let counts = count_unshifted(&pos, center, &ops, 1e-6);
            let dim: u32 = (0..pos.len() * n_l)
                .map(|x| shells[x] * (2 * (x % n_l) as u32 + 1))
                .sum();
            assert!(dim > 0, "{name}: empty orbital basis");
            for (k, r) in ops.iter().enumerate() {
                let perm = permutation(&pos, center, r);
                let fixed = perm.iter().enumerate().filter(|(i, j)| i == *j).count();
                assert_eq!(counts[k] as usize, fixed, "{name} op {k}");
                let lit = literal_cartesian(&pos, center, r);
                assert!(
                    (lit - chi_cart[k]).abs() < 1e-8,
                    "{name} op {k}: {lit} vs {}",
                    chi_cart[k]
                );
                let lit = literal_shells(&pos, center, r, &shells, n_l, &bases);
                assert!(
                    (lit - chi_shell[k]).abs() < 1e-7,
                    "{name} op {k}: {lit} vs {}",
                    chi_shell[k]
                );
            }
        }
    }

    #[test]
    fn bond_and_vector_characters_match_literal_traces() {
        let mut rng = Rng(99);
        for (name, group) in point_groups() {
            let center = [0.3, 0.2, -4.0];
            let (pos, ops, _) = symmetric_structure(&group, &mut rng, center, false);
            let n = pos.len();
            // All pairs closer than a cutoff: a symmetric bond set.
            let radii = vec![0.9; n];
            let bonds = find_bonds(&pos, &radii, 1.0).unwrap();
            let unoriented = bond_characters(&pos, center, &ops, &bonds, false, 1e-6).unwrap();
            let oriented = bond_characters(&pos, center, &ops, &bonds, true, 1e-6).unwrap();
            // Tangent planes: two vectors ⊥ (x_i − c) at each atom.
            let mut vectors = Vec::new();
            for p in &pos {
                let d = unit(sub(*p, center));
                let t = if d[0].abs() < 0.9 {
                    [1.0, 0.0, 0.0]
                } else {
                    [0.0, 1.0, 0.0]
                };
                let u = unit([
                    d[1] * t[2] - d[2] * t[1],
                    d[2] * t[0] - d[0] * t[2],
                    d[0] * t[1] - d[1] * t[0],
                ]);
                let w = [
                    d[1] * u[2] - d[2] * u[1],
                    d[2] * u[0] - d[0] * u[2],
                    d[0] * u[1] - d[1] * u[0],
                ];
                vectors.push([2.0 * u[0] + w[0], 2.0 * u[1] + w[1], 2.0 * u[2] + w[2]]);
                vectors.push(w);
            }
            let tangent = vector_set_characters(&pos, center, &ops, &vectors, 2, 1e-6).unwrap();
            let index: HashMap<[u32; 2], usize> =
                bonds.iter().enumerate().map(|(b, &p)| (p, b)).collect();
            for (k, r) in ops.iter().enumerate() {
                let perm = permutation(&pos, center, r);
                // Literal bond matrices: bond b -> bond b' (with sign for orientation).
                let nb = bonds.len();
                let (mut mu, mut mo) =
                    (DMatrix::<f64>::zeros(nb, nb), DMatrix::<f64>::zeros(nb, nb));
                for (b, &[i, j]) in bonds.iter().enumerate() {
                    let (pi, pj) = (perm[i as usize] as u32, perm[j as usize] as u32);
                    let key = [pi.min(pj), pi.max(pj)];
                    let b2 = index[&key];
                    mu[(b2, b)] = 1.0;
                    mo[(b2, b)] = if pi < pj { 1.0 } else { -1.0 };
                }
                assert_eq!(mu.trace(), unoriented[k], "{name} op {k}");
                assert_eq!(mo.trace(), oriented[k], "{name} op {k}");
                // Literal vector-set matrix: block (perm i, i) = V_j⁺ R V_i.
                let mut mv = DMatrix::<f64>::zeros(2 * n, 2 * n);
                let rm = Matrix3::from_fn(|a, b| r[a][b]);
                for (i, &j) in perm.iter().enumerate() {
                    let vi = DMatrix::from_fn(3, 2, |a, c| vectors[2 * i + c][a]);
                    let vj = DMatrix::from_fn(3, 2, |a, c| vectors[2 * j + c][a]);
                    let pinv = vj.pseudo_inverse(1e-12).unwrap();
                    let rv = DMatrix::from_fn(3, 3, |a, b| rm[(a, b)]) * vi;
                    mv.view_mut((2 * j, 2 * i), (2, 2)).copy_from(&(pinv * rv));
                }
                assert!(
                    (mv.trace() - tangent[k]).abs() < 1e-8,
                    "{name} op {k}: {} vs {}",
                    mv.trace(),
                    tangent[k]
                );
            }
        }
    }

    #[test]
    fn orbits_of_symmetric_structures_match_construction() {
        let mut rng = Rng(5);
        for (name, group) in point_groups() {
            let (pos, ops, labels) = symmetric_structure(&group, &mut rng, [0.0; 3], true);
            let perms: Vec<Vec<u32>> = ops
                .iter()
                .map(|r| {
                    permutation(&pos, [0.0; 3], r)
                        .into_iter()
                        .map(|j| j as u32)
                        .collect()
                })
                .collect();
            assert_eq!(orbits(pos.len(), &perms).unwrap(), labels, "{name}");
        }
    }

    // ---------- edge cases ----------

    #[test]
    fn zero_and_one_atom() {
        let ops = vec![EYE, refl([0.0, 0.0, 1.0])];
        let (proper, angle) = (vec![true, false], vec![0.0, 0.0]);
        assert_eq!(count_unshifted(&[], [0.0; 3], &ops, 0.01), vec![0, 0]);
        assert_eq!(
            shell_characters(&[], [0.0; 3], &ops, &proper, &angle, &[], 3, 0.01).unwrap(),
            vec![0.0, 0.0]
        );
        assert_eq!(find_bonds(&[], &[], 1.2).unwrap(), Vec::<[u32; 2]>::new());
        assert_eq!(orbits(0, &[vec![]]).unwrap(), Vec::<u32>::new());
        assert_eq!(
            pi_characters(&[], [0.0; 3], &ops, [0.0, 0.0, 1.0], 0.01),
            vec![0.0, 0.0]
        );
        let one = [[1.0, 2.0, 3.0]];
        // A lone atom at the centre: d shell under σ gives (+1) χ_2(180°) = 1 − 2 + 2 = 1.
        let chi = shell_characters(
            &one,
            [1.0, 2.0, 3.0],
            &ops,
            &proper,
            &angle,
            &[0, 0, 1],
            3,
            0.01,
        )
        .unwrap();
        assert_eq!(chi, vec![5.0, 1.0]);
        assert_eq!(
            find_bonds(&one, &[1.0], 1.2).unwrap(),
            Vec::<[u32; 2]>::new()
        );
        assert_eq!(orbits(1, &[vec![0]]).unwrap(), vec![0]);
        assert_eq!(
            count_unshifted(&one, [0.0; 3], &[], 0.01),
            Vec::<u64>::new()
        );
    }

    #[test]
    fn nan_coordinates_are_never_unshifted() {
        let pos = [[f64::NAN, 0.0, 0.0], [0.0, 0.0, 0.0]];
        let ops = vec![EYE];
        assert_eq!(count_unshifted(&pos, [0.0; 3], &ops, 0.01), vec![1]);
        assert_eq!(
            count_unshifted(&pos, [f64::NAN, 0.0, 0.0], &ops, 0.01),
            vec![0]
        );
        assert_eq!(
            count_unshifted(&pos[1..], [0.0; 3], &ops, f64::NAN),
            vec![0]
        );
        assert_eq!(count_unshifted(&pos[1..], [0.0; 3], &ops, -1.0), vec![0]);
        assert_eq!(
            find_bonds(&pos, &[1.0, 1.0], 1.2),
            Err(Error::NonFiniteCoordinate { atom: 0 })
        );
        let vectors = [[1.0, 0.0, 0.0], [f64::NAN, 0.0, 0.0]];
        let err = vector_set_characters(&pos, [0.0; 3], &ops, &vectors, 1, 0.01).unwrap_err();
        assert!(err.to_string().contains("atom 1"), "{err}");
        let err = shell_characters(&pos, [0.0; 3], &ops, &[true], &[f64::NAN], &[1, 1], 1, 0.01)
            .unwrap_err();
        assert!(err.to_string().contains("operation 0"), "{err}");
    }

    #[test]
    fn huge_coordinates() {
        let z = [0.0, 0.0, 1.0];
        let pos = [
            [0.0, 0.0, 1e5],
            [0.0, 0.0, -1e5],
            [1e5, 0.0, 0.0],
            [-1e5, 0.0, 0.0],
            [0.0, 1e300, 0.0],
        ];
        let ops = vec![EYE, rot(z, 180.0)];
        // E leaves the atom at 1e300 Å exactly in place; under C2 its |Rd − d|² overflows to
        // infinity: not unshifted, and no panic.
        assert_eq!(count_unshifted(&pos, [0.0; 3], &ops, 1e-3), vec![5, 2]);
        let bonds = find_bonds(&pos, &[1.0; 5], 1.2).unwrap();
        assert!(bonds.is_empty());
        let close_pair = [
            [1e15, 1e15, 1e15],
            [1e15, 1e15, 1e15 + 0.5],
            [-1e15, 0.0, 0.0],
        ];
        assert_eq!(
            find_bonds(&close_pair, &[0.5; 3], 1.0).unwrap(),
            vec![[0, 1]]
        );
    }

    #[test]
    fn find_bonds_matches_brute_force() {
        let mut rng = Rng(11);
        let n = 600;
        let pos: Vec<[f64; 3]> = (0..n).map(|_| rng.point(6.0)).collect();
        let radii: Vec<f64> = (0..n).map(|_| 0.3 + 0.5 * rng.next()).collect();
        let brute = |pos: &[[f64; 3]]| {
            let mut out = Vec::new();
            for i in 0..n {
                for j in i + 1..n {
                    let d = sub(pos[i], pos[j]);
                    if (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt()
                        <= 1.1 * (radii[i] + radii[j])
                    {
                        out.push([i as u32, j as u32]);
                    }
                }
            }
            out
        };
        let want = brute(&pos);
        assert!(!want.is_empty());
        assert_eq!(find_bonds(&pos, &radii, 1.1).unwrap(), want);
        // Two clusters 1e4 Å apart: the occupied box is too big for a dense grid.
        let mut far = pos.clone();
        for p in far.iter_mut().skip(n / 2) {
            p[0] += 1e4;
        }
        let want = brute(&far);
        assert!(!want.is_empty());
        assert_eq!(find_bonds(&far, &radii, 1.1).unwrap(), want);
        // Zero radii: only coincident atoms bond.
        let pts = [[0.0; 3], [0.0; 3], [1.0, 0.0, 0.0]];
        assert_eq!(find_bonds(&pts, &[0.0; 3], 1.0).unwrap(), vec![[0, 1]]);
    }

    #[test]
    fn argument_errors_name_the_culprit() {
        let (pos, ops, proper, angle) = water();
        let err =
            bond_characters(&pos, [0.0; 3], &ops, &[[0, 1], [1, 5]], false, 0.01).unwrap_err();
        assert!(err.to_string().contains("bond 1 names atom 5"), "{err}");
        let err = bond_characters(&pos, [0.0; 3], &ops, &[[2, 2]], true, 0.01).unwrap_err();
        assert!(
            err.to_string().contains("bond 0 joins atom 2 to itself"),
            "{err}"
        );
        let err =
            shell_characters(&pos, [0.0; 3], &ops, &proper, &angle, &[1, 1], 1, 0.01).unwrap_err();
        assert!(err.to_string().contains("shell_counts"), "{err}");
        assert!(
            shell_characters(&pos, [0.0; 3], &ops, &proper[..2], &angle, &[1; 3], 1, 0.01).is_err()
        );
        assert!(cartesian_characters(&pos, [0.0; 3], &ops, &proper, &angle[..1], 0.01).is_err());
        assert!(find_bonds(&pos, &[1.0], 1.2).is_err());
        assert!(find_bonds(&pos, &[1.0, -1.0, 1.0], 1.2).is_err());
        assert!(find_bonds(&pos, &[1.0; 3], 0.0).is_err());
        assert!(vector_set_characters(&pos, [0.0; 3], &ops, &[[1.0; 3]; 5], 2, 0.01).is_err());
        assert!(orbits(3, &[vec![0, 1]]).is_err());
        let err = orbits(3, &[vec![0, 1, 3]]).unwrap_err();
        assert!(err.to_string().contains("atom 2 to atom 3"), "{err}");
        let err = orbits(3, &[vec![0, 1, 2], vec![1, 1, 2]]).unwrap_err();
        assert!(err.to_string().contains("permutation 1"), "{err}");
    }

    #[test]
    fn vector_set_out_of_span_is_an_error() {
        let (pos, ops, _, _) = water();
        // A vector along x + z at O is sent to −x + z by C2(z): out of its span.
        let mut vectors = vec![[1.0, 0.0, 1.0], [1.0, 0.0, 0.0], [1.0, 0.0, 0.0]];
        let err = vector_set_characters(&pos, [0.0; 3], &ops, &vectors, 1, 1e-3).unwrap_err();
        let text = err.to_string();
        assert!(
            text.contains("operation 1") && text.contains("atom 0"),
            "{text}"
        );
        vectors[0] = [1.0, 0.0, 0.0];
        // x vectors: E 3, C2 −1 (O only), σ(xz) normal y: x kept at O → 1, σ(yz): x → −x at all 3 → −3.
        let chi = vector_set_characters(&pos, [0.0; 3], &ops, &vectors, 1, 1e-3).unwrap();
        assert_eq!(chi, vec![3.0, -1.0, 1.0, -3.0]);
        // Zero vectors span nothing and contribute nothing.
        let chi = vector_set_characters(&pos, [0.0; 3], &ops, &[[0.0; 3]; 3], 1, 1e-3).unwrap();
        assert_eq!(chi, vec![0.0; 4]);
        // Four dependent vectors at each atom span 3D: same as Cartesian.
        let four: Vec<[f64; 3]> = (0..3)
            .flat_map(|_| {
                [
                    [1.0, 0.0, 0.0],
                    [0.0, 1.0, 0.0],
                    [0.0, 0.0, 1.0],
                    [1.0, 1.0, 1.0],
                ]
            })
            .collect();
        let chi = vector_set_characters(&pos, [0.0; 3], &ops, &four, 4, 1e-3).unwrap();
        for (a, b) in chi.iter().zip([9.0, -1.0, 1.0, 3.0]) {
            assert!((a - b).abs() < 1e-12, "{chi:?}");
        }
    }

    // ---------- parallel path ----------

    fn big_structure() -> (Vec<[f64; 3]>, Vec<Op>) {
        // A D3h cluster repeated along z: ~30k atoms, so every kernel takes its parallel path.
        let mut rng = Rng(3);
        let group = close_group(&[
            rot([0.0, 0.0, 1.0], 120.0),
            rot([1.0, 0.0, 0.0], 180.0),
            refl([0.0, 0.0, 1.0]),
        ]);
        let mut pos = Vec::new();
        while pos.len() < 30_000 {
            let mut s = rng.point(40.0);
            match pos.len() % 4 {
                0 => s[2] = 0.0,
                1 => s = [s[0], 0.0, 0.0],
                _ => {}
            }
            for g in &group {
                let q = apply(g, s);
                if !pos[pos.len().saturating_sub(12)..]
                    .iter()
                    .any(|p| close(*p, q, 1e-12))
                {
                    pos.push(q);
                }
            }
        }
        (pos, group)
    }

    fn with_threads<T: Send>(n: usize, f: impl FnOnce() -> T + Send) -> T {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
            .install(f)
    }

    #[test]
    fn parallel_results_equal_serial_results() {
        let (pos, ops) = big_structure();
        assert!(pos.len() > PARALLEL_THRESHOLD);
        let kinds: Vec<(bool, f64)> = ops.iter().map(op_type).collect();
        let proper: Vec<bool> = kinds.iter().map(|k| k.0).collect();
        let angle: Vec<f64> = kinds.iter().map(|k| k.1).collect();
        let shells: Vec<u32> = (0..pos.len() * 3).map(|i| (i % 3) as u32).collect();
        let radii = vec![0.4; pos.len()];
        let vectors: Vec<[f64; 3]> = pos.iter().map(|p| [p[0], p[1], p[2]]).collect();
        let run = || {
            let bonds = find_bonds(&pos, &radii, 1.0).unwrap();
            (
                count_unshifted(&pos, [0.0; 3], &ops, 1e-6),
                shell_characters(&pos, [0.0; 3], &ops, &proper, &angle, &shells, 3, 1e-6).unwrap(),
                bond_characters(&pos, [0.0; 3], &ops, &bonds, true, 1e-6).unwrap(),
                vector_set_characters(&pos, [0.0; 3], &ops, &vectors, 1, 1e-6).unwrap(),
                bonds,
            )
        };
        let one = with_threads(1, run);
        let two = with_threads(2, run);
        let three = with_threads(3, run);
        assert_eq!(one, two);
        assert_eq!(one, three);
        // Against the serial path: the same counts from pieces below the threshold.
        let (a, b) = pos.split_at(pos.len() / 2);
        let ca = count_unshifted(a, [0.0; 3], &ops, 1e-6);
        let cb = count_unshifted(b, [0.0; 3], &ops, 1e-6);
        let sum: Vec<u64> = ca.iter().zip(&cb).map(|(x, y)| x + y).collect();
        assert_eq!(one.0, sum);
        assert!(
            one.0.iter().skip(1).any(|&c| c > 0),
            "some non-identity op fixes atoms"
        );
        let bonds = &one.4;
        let half = bonds.len() / 2;
        let ba = bond_characters(&pos, [0.0; 3], &ops, &bonds[..half], true, 1e-6).unwrap();
        let bb = bond_characters(&pos, [0.0; 3], &ops, &bonds[half..], true, 1e-6).unwrap();
        let sum: Vec<f64> = ba.iter().zip(&bb).map(|(x, y)| x + y).collect();
        assert_eq!(one.2, sum);
    }
}
