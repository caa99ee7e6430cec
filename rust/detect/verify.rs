//! Verification of a group's ideal operations against the atoms (step 5 of the module doc),
//! at the cost of a streaming pass per operation instead of a lookup per atom.
//!
//! The generators are mapped with the nearest-atom lookup. Every other operation is
//! g·op_j for a generator g and an operation j verified before it (the breadth-first words
//! of [`canonical::GroupData`]), so its candidate permutation is π_g ∘ π_j; each atom i is
//! then checked directly against its candidate image. When that image lies within tol/2 of
//! R·x_i it *is* the lookup's answer: every other atom is more than tol away from it (no two
//! atoms lie within tol), hence more than tol/2 from R·x_i. Any atom beyond tol/2 is looked up
//! as the lookup would, and any failure repeats the plain verification (every operation
//! mapped by the lookup, in index order), so the permutations, `max_deviation` and errors are
//! those of mapping every operation by lookup, bit for bit. The composed operations are
//! checked all together, chunk by chunk of atoms (a chunk's atoms stay in cache across the
//! operations; chunks run in parallel from `PARALLEL_WORK` checks); the generators are
//! mapped side by side for large structures. Neither changes any result.

use super::canonical::GroupData;
use super::Ctx;
use crate::error::Result;
use crate::lookup::{map_atoms, PARALLEL_MIN_ATOMS};
use crate::ops::{mat_mul, mat_vec, Mat3, PointOp, Vec3};
use crate::parallel;

/// Atom × operation checks above which verification spreads over the pool's threads.
const PARALLEL_WORK: usize = 1 << 16;

/// Operations checked against all atoms, their permutations and the largest image distance.
pub(super) struct Verified {
    /// Indices of the verified operations: E first, then all others or the generators.
    pub verified: Vec<usize>,
    /// One permutation per entry of `verified`.
    pub permutations: Vec<Vec<u32>>,
    /// Largest image distance of each entry of `verified`, Å (0 for E).
    pub deviations: Vec<f64>,
    /// Largest image distance over the verified operations, Å.
    pub max_deviation: f64,
}

/// Verify E and the generators, or every operation when `all`: the permutations and errors of
/// mapping each of them with [`map_atoms`] (see the module notes).
pub(super) fn verify(ctx: &Ctx, ops: &[PointOp], data: &GroupData, all: bool) -> Result<Verified> {
    let verified: Vec<usize> = if all {
        (0..ops.len()).collect()
    } else {
        std::iter::once(0)
            .chain(data.generators.iter().copied())
            .collect()
    };
    match composed(ctx, ops, data, all) {
        Some((mut perms, devs)) => {
            let permutations = verified
                .iter()
                .map(|&k| std::mem::take(&mut perms[k]))
                .collect();
            let deviations: Vec<f64> = verified.iter().map(|&k| devs[k]).collect();
            let max_deviation = deviations.iter().copied().fold(0.0, f64::max);
            Ok(Verified {
                verified,
                permutations,
                deviations,
                max_deviation,
            })
        }
        None => plain(ctx, ops, verified),
    }
}

/// Every listed operation mapped by lookup, in order: the first failure is the error.
fn plain(ctx: &Ctx, ops: &[PointOp], verified: Vec<usize>) -> Result<Verified> {
    let n = ctx.x.len();
    let mut permutations = Vec::with_capacity(verified.len());
    let mut deviations = Vec::with_capacity(verified.len());
    let mut max_deviation = 0.0_f64;
    for &k in &verified {
        if k == 0 {
            // E maps every atom onto itself at distance 0.
            permutations.push((0..n as u32).collect());
            deviations.push(0.0);
            continue;
        }
        let grid = ctx.grid()?;
        let (perm, dev) = map_atoms(grid, &ctx.x, ctx.species, &ops[k].matrix, ctx.tol)?;
        max_deviation = max_deviation.max(dev);
        permutations.push(perm);
        deviations.push(dev);
    }
    Ok(Verified {
        verified,
        permutations,
        deviations,
        max_deviation,
    })
}

/// Permutations of the generators (and of every operation when `all`) with the largest image
/// distance of each (indexed by operation; 0 where not verified), or `None` when any check
/// fails (the caller then maps by lookup for the error).
fn composed(
    ctx: &Ctx,
    ops: &[PointOp],
    data: &GroupData,
    all: bool,
) -> Option<(Vec<Vec<u32>>, Vec<f64>)> {
    let n = ctx.x.len();
    let h = ops.len();
    let mut perms: Vec<Vec<u32>> = vec![Vec::new(); h];
    perms[0] = (0..n as u32).collect();
    let mut dev = vec![0.0_f64; h];
    // The generators by lookup, side by side for large structures.
    let mut gens: Vec<usize> = data.generators.clone();
    gens.sort_unstable();
    gens.dedup();
    gens.retain(|&g| g != 0);
    // With the inversion and a rotation of odd order among them, one lookup (of their
    // product) serves both.
    let merged = if (MERGE_MIN_ATOMS..=MERGE_MAX_ATOMS).contains(&n) {
        merge_inversion(data, &gens)
    } else {
        None
    };
    let lookups: Vec<usize> = match &merged {
        Some(m) => gens
            .iter()
            .copied()
            .filter(|&g| g != m.inversion && g != m.odd)
            .chain(std::iter::once(m.powers[0]))
            .collect(),
        None => gens.clone(),
    };
    let threshold = if n >= PARALLEL_WORK / 16 && lookups.len() > 1 {
        1
    } else {
        usize::MAX
    };
    let mapped = parallel::map_items(&lookups, threshold, |_, &g| {
        map_nearest(ctx, &ops[g].matrix)
    });
    for (&g, m) in lookups.iter().zip(mapped) {
        let (perm, d) = m?;
        perms[g] = perm;
        dev[g] = d;
    }
    if let Some(m) = &merged {
        // s^k = s·s^(k-1), composed and checked: up to s^m = i and s^(m+1) = the rotation.
        let s = m.powers[0];
        for w in m.powers.windows(2) {
            let (prev, k) = (w[0], w[1]);
            let (perm, d) = check_composed(ctx, &ops[k].matrix, &perms[s], &perms[prev])?;
            dev[k] = d;
            perms[k] = perm;
        }
    }
    if all {
        if let Some(devs) = compose_all(ctx, ops, data, &mut perms) {
            for (k, d) in devs {
                dev[k] = d;
            }
            return Some((perms, dev));
        }
        // Some atom lies beyond tol/2 of its composed image: operation by operation, each
        // composed from permutations that `check` has settled.
        for &k in &data.word_order[1..] {
            if !perms[k].is_empty() && !gens.contains(&k) {
                perms[k] = Vec::new();
            }
        }
        for &k in &data.word_order[1..] {
            if !perms[k].is_empty() {
                continue;
            }
            let (g, j) = data.words[k];
            let (perm, d) = check_composed(ctx, &ops[k].matrix, &perms[g], &perms[j])?;
            dev[k] = d;
            perms[k] = perm;
        }
    }
    Some((perms, dev))
}

/// From this many atoms the lookup saved by [`merge_inversion`] is worth its composed checks
/// (small structures map by brute force without a grid, which an atom beyond tol/2 of its
/// composed image would then build) ...
const MERGE_MIN_ATOMS: usize = 256;
/// ... and up to this many: beyond, the checks' gathers (two random reads per atom) leave
/// the cache, and three of them cost more than the lookup they save (Oh, 10⁶ atoms).
const MERGE_MAX_ATOMS: usize = 1 << 17;

/// The inversion and a rotation among the generators that one element generates.
struct Merged {
    /// Index of the inversion i.
    inversion: usize,
    /// Index of the rotation g, of odd order m.
    odd: usize,
    /// Indices of s = i·g, s², …, s^(m+1): s^m = i and s^(m+1) = g (i commutes with g,
    /// i^m = i and g^(m+1) = g).
    powers: Vec<usize>,
}

/// When the generators hold the inversion i and a rotation g of odd order m, the element
/// s = i·g generates both: one lookup (of s) and m composed checks (streaming passes, each
/// giving the lookup's own answers, see the module notes) instead of two lookups. `None`
/// when there is no such pair (or an index is not found, which would be a bug of the
/// group tables: the plain path then runs).
fn merge_inversion(data: &GroupData, gens: &[usize]) -> Option<Merged> {
    let same =
        |a: &Mat3, b: &Mat3| (0..3).all(|r| (0..3).all(|c| (a[r][c] - b[r][c]).abs() < 1e-6));
    let find = |m: &Mat3| data.ops.iter().position(|o| same(o, m));
    let e = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
    let minus_e = [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]];
    let inversion = gens
        .iter()
        .copied()
        .find(|&g| same(&data.ops[g], &minus_e))?;
    let order = |g: usize| {
        let mut p = data.ops[g];
        for k in 1..=data.ops.len() {
            if same(&p, &e) {
                return k;
            }
            p = mat_mul(&data.ops[g], &p);
        }
        0
    };
    let (odd, m) = gens
        .iter()
        .copied()
        .filter(|&g| g != inversion)
        .map(|g| (g, order(g)))
        .find(|&(_, m)| m > 1 && m % 2 == 1)?;
    let s_matrix = mat_mul(&data.ops[inversion], &data.ops[odd]);
    let mut powers = vec![find(&s_matrix)?];
    let mut p = s_matrix;
    for _ in 1..=m {
        p = mat_mul(&s_matrix, &p);
        powers.push(find(&p)?);
    }
    (powers[m - 1] == inversion && powers[m] == odd).then_some(Merged {
        inversion,
        odd,
        powers,
    })
}

/// Every operation that is not E or a generator composed along its word (π_k = π_g ∘ π_j)
/// and checked, all of them chunk by chunk of atoms (in parallel for large structures: the
/// atoms of a chunk stay in cache across the operations). The largest image distance of
/// each such operation, or `None` when some atom lies beyond tol/2 of its composed image
/// (or is NaN): the caller then checks operation by operation.
fn compose_all(
    ctx: &Ctx,
    ops: &[PointOp],
    data: &GroupData,
    perms: &mut [Vec<u32>],
) -> Option<Vec<(usize, f64)>> {
    let n = ctx.x.len();
    let half2 = 0.25 * ctx.tol * ctx.tol;
    let x = &ctx.x;
    // Operations to compose, in word order; the others (E, generators) are complete.
    let todo: Vec<usize> = data.word_order[1..]
        .iter()
        .copied()
        .filter(|&k| perms[k].is_empty())
        .collect();
    if todo.is_empty() {
        return Some(Vec::new());
    }
    let mut slot = vec![usize::MAX; perms.len()];
    for (t, &k) in todo.iter().enumerate() {
        slot[k] = t;
    }
    let mut out: Vec<Vec<u32>> = todo.iter().map(|_| vec![0u32; n]).collect();
    // Per chunk of atoms, the chunk of every output permutation.
    // Chunks of at most `parallel::CHUNK` atoms, at least 8 of them (of ≥ 256 atoms) once
    // the work is worth spreading (no result depends on the chunks).
    let wide = n * todo.len() >= PARALLEL_WORK;
    let chunk = if wide {
        n.div_ceil(8).clamp(256, parallel::CHUNK)
    } else {
        parallel::CHUNK
    };
    let n_chunks = n.div_ceil(chunk);
    let mut parts: Vec<Vec<&mut [u32]>> = (0..n_chunks).map(|_| Vec::new()).collect();
    for perm in out.iter_mut() {
        for (c, piece) in perm.chunks_mut(chunk).enumerate() {
            parts[c].push(piece);
        }
    }
    let done: &[Vec<u32>] = perms;
    // Chunks side by side once the work is worth a thread (results do not depend on it).
    let threshold = if wide { 1 } else { usize::MAX };
    let slot = &slot;
    let todo = &todo;
    let results = parallel::map_items_mut(&mut parts, threshold, |c, mine| {
        let start = c * chunk;
        let mut worst_of = vec![0.0_f64; todo.len()];
        let mut far = false;
        for (t, &k) in todo.iter().enumerate() {
            let mut worst = 0.0_f64;
            let (g, j) = data.words[k];
            let m = &ops[k].matrix;
            let pg = &done[g][..];
            let dst = std::mem::take(&mut mine[t]);
            let xs = &x[start..start + dst.len()];
            let src: &[u32] = if slot[j] == usize::MAX {
                &done[j][start..start + dst.len()]
            } else {
                &mine[slot[j]][..]
            };
            for ((out, &via), p) in dst.iter_mut().zip(src).zip(xs) {
                let img = pg[via as usize];
                *out = img;
                let d2 = dist2(m, p, &x[img as usize]);
                // (a NaN sets `far`: the plain comparison for the largest is then exact)
                far |= d2.is_nan() | (d2 > half2);
                worst = if d2 > worst { d2 } else { worst };
            }
            mine[t] = dst;
            if far {
                return None;
            }
            worst_of[t] = worst;
        }
        Some(worst_of)
    });
    let mut worst = vec![0.0_f64; todo.len()];
    for r in results {
        for (w, v) in worst.iter_mut().zip(r?) {
            *w = w.max(v);
        }
    }
    for (&k, perm) in todo.iter().zip(out) {
        perms[k] = perm;
    }
    Some(
        todo.iter()
            .zip(worst)
            .map(|(&k, w)| (k, w.sqrt()))
            .collect(),
    )
}

/// The permutation π_g ∘ π_j (atom i goes to π_g(π_j(i))) checked as the operation `m`
/// (see [`check`]), composed and checked in one pass; with its largest image distance.
fn check_composed(ctx: &Ctx, m: &Mat3, pg: &[u32], pj: &[u32]) -> Option<(Vec<u32>, f64)> {
    let half2 = 0.25 * ctx.tol * ctx.tol;
    let x = &ctx.x;
    let n = pj.len();
    let mut perm = vec![0u32; n];
    let parts = parallel::map_chunks_mut(&mut perm, PARALLEL_MIN_ATOMS, |start, out| {
        let mut worst = 0.0_f64;
        let mut far = false;
        for (k, slot) in out.iter_mut().enumerate() {
            let i = start + k;
            let j = pg[pj[i] as usize];
            *slot = j;
            let d2 = dist2(m, &x[i], &x[j as usize]);
            far |= d2.is_nan() | (d2 > half2);
            worst = if d2 > worst { d2 } else { worst };
        }
        (worst, far)
    });
    let (mut worst, mut far) = (0.0_f64, false);
    for (w, f) in parts {
        worst = worst.max(w);
        far |= f;
    }
    if !far {
        return Some((perm, worst.sqrt()));
    }
    let d = check(ctx, m, &mut perm)?;
    Some((perm, d))
}

/// Squared distance from R·x_i to atom j, as the lookup measures it.
#[inline]
fn dist2(m: &Mat3, xi: &Vec3, xj: &Vec3) -> f64 {
    let q = mat_vec(m, xi);
    let d = [xj[0] - q[0], xj[1] - q[1], xj[2] - q[2]];
    d[0] * d[0] + d[1] * d[1] + d[2] * d[2]
}

/// Check a candidate permutation of the operation `m` atom by atom (see the module notes);
/// atoms beyond tol/2 take the lookup's answer. The largest image distance, or `None` when an
/// atom has no image or two atoms share one.
fn check(ctx: &Ctx, m: &Mat3, perm: &mut [u32]) -> Option<f64> {
    let half2 = 0.25 * ctx.tol * ctx.tol;
    let x = &ctx.x;
    // Fast pass: the largest squared distance, or the first atom beyond tol/2.
    let scan = |start: usize, chunk: &[u32]| -> (f64, Option<usize>) {
        let mut worst = 0.0_f64;
        for (k, &j) in chunk.iter().enumerate() {
            let i = start + k;
            let d2 = dist2(m, &x[i], &x[j as usize]);
            if d2.is_nan() || d2 > half2 {
                return (worst, Some(i));
            }
            worst = worst.max(d2);
        }
        (worst, None)
    };
    let n = perm.len();
    let parts = parallel::map_chunks(n, PARALLEL_MIN_ATOMS, |range| {
        scan(range.start, &perm[range])
    });
    let mut worst = 0.0_f64;
    let mut slow = false;
    for (w, stop) in parts {
        worst = worst.max(w);
        slow |= stop.is_some();
    }
    if !slow {
        return Some(worst.sqrt());
    }
    // Some atom beyond tol/2: look up every such atom as the lookup would.
    let grid = ctx.grid().ok()?;
    let mut worst = 0.0_f64;
    for (i, slot) in perm.iter_mut().enumerate() {
        let d2 = dist2(m, &x[i], &x[*slot as usize]);
        if d2 <= half2 {
            worst = worst.max(d2.sqrt());
            continue;
        }
        let (j, d) = grid.query_within(&mat_vec(m, &x[i]), ctx.species[i], ctx.tol)?;
        *slot = j as u32;
        worst = worst.max(d);
    }
    // Atoms within tol/2 of their images cannot share one; the others might.
    let mut owner = vec![false; n];
    for &j in perm.iter() {
        if std::mem::replace(&mut owner[j as usize], true) {
            return None;
        }
    }
    Some(worst)
}

/// The permutation of one operation by nearest-atom lookup within tol and its largest image
/// distance; `None` on failure. Small structures without a grid take each atom's nearest
/// image by brute force, checked as any candidate permutation is.
fn map_nearest(ctx: &Ctx, m: &Mat3) -> Option<(Vec<u32>, f64)> {
    if let Some(mut perm) = ctx.brute_map(m) {
        let d = check(ctx, m, &mut perm)?;
        return Some((perm, d));
    }
    let grid = ctx.grid().ok()?;
    map_atoms(grid, &ctx.x, ctx.species, m, ctx.tol).ok()
}
