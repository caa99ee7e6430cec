//! The pruned search (step 3 of the module doc, first attempt): the operations found from
//! the fewest candidate pairs, screened on a short probe, the group named from them and then
//! checked as a whole.
//!
//! - The second reference atom b is the one whose distance to a is rarest among the atoms
//!   of its window: an operation sending a to a' sends b to an atom at |ab| from a', so the
//!   candidates number |W(a)| · k · 2 with k that multiplicity (k = 1 for C60: 120
//!   candidates, every one a symmetry; the plain search tries 60 · 60 pairs).
//! - Candidates are screened on a short probe (a subset of the plain search's probe, far
//!   atoms first, so wrong candidates fail at their first or second atom) and are not
//!   refitted or tested on all atoms one by one: orders come from the rotation angles, the
//!   group is named and put in its standard frame from them, and only the group's ideal
//!   operations are verified against all atoms ([`super::finish`]).
//! - The answer is accepted only when the verified group is exactly the set of screened
//!   candidates, matched by the images of a and b. Every true operation passes the probe
//!   (it passes the larger probe of the plain search), so the screened set holds all of
//!   them; a verified group equal to it is the structure's whole group. Anything else (a
//!   false candidate that passed the probe, a name or frame that cannot be built, an
//!   operation that fails) repeats the search with the atom that failed screened first, then
//!   with the full probe, and finally leaves the structure to the plain search.

use super::canonical::{group_data, GroupData};
use super::{
    finish, frame, naming, pair_frame, sub, windows, Ctx, DetectOptions, RawOp, Symmetry, Windows,
};
use crate::error::Error;
use crate::ops::{
    cross, det, dot, mat_mul, mat_vec, norm, rotation_matrix, transpose, Mat3, PointOp, Vec3,
    IDENTITY,
};

/// Probe atoms screened by the first attempt (besides a, b and atoms that failed before).
const SHORT_PROBE: usize = 12;
/// Atoms that failed verification, screened first on the next attempt, at most.
const MAX_RETRIES: usize = 4;
/// Second reference atoms whose multiplicity is measured, at most.
const B_CHOICES: usize = 64;

/// The structure's group by the pruned search, or `None` to leave it to the plain search.
pub(super) fn pruned(ctx: &Ctx, center: Vec3, opts: &DetectOptions) -> Option<Symmetry> {
    let r: Vec<f64> = ctx.x.iter().map(norm).collect();
    let win = windows(ctx, &r, 2.0 * ctx.tol);
    let (a, b) = choose_pair(ctx, &r, &win)?;
    let mut extra: Vec<usize> = Vec::new();
    let mut full = false;
    for _ in 0..=MAX_RETRIES + 1 {
        let probe = probe(ctx, &r, &win, a, b, &extra, full);
        match attempt(ctx, &r, &win, a, b, &probe, center, opts) {
            Ok(sym) => return Some(sym),
            // An atom screened already that fails again: the structure is at the edge of
            // the tolerance, a case for the plain search.
            Err(Some(atom)) if extra.contains(&atom) => return None,
            Err(Some(atom)) if extra.len() < MAX_RETRIES => extra.push(atom),
            Err(_) if !full => full = true,
            Err(_) => return None,
        }
    }
    None
}

fn size(win: &Windows, i: usize) -> usize {
    (win.range[i].1 - win.range[i].0) as usize
}

fn members(win: &Windows, i: usize) -> &[u32] {
    &win.order[win.range[i].0 as usize..win.range[i].1 as usize]
}

/// The reference atoms: a as in the plain search (smallest window among the atoms at ≥ half
/// the largest radius); b among the atoms at ≥ half the largest distance from the line of a,
/// the one with the fewest atoms of its window at its distance from a.
fn choose_pair(ctx: &Ctx, r: &[f64], win: &Windows) -> Option<(usize, usize)> {
    let n = r.len();
    let r_max = r.iter().copied().fold(0.0, f64::max);
    let a = (0..n)
        .filter(|&i| r[i] >= 0.5 * r_max && r[i] > 0.0)
        .min_by(|&i, &j| {
            size(win, i)
                .cmp(&size(win, j))
                .then(r[j].total_cmp(&r[i]))
                .then(i.cmp(&j))
        })?;
    let ua = [ctx.x[a][0] / r[a], ctx.x[a][1] / r[a], ctx.x[a][2] / r[a]];
    let perp: Vec<f64> = ctx
        .x
        .iter()
        .map(|p| {
            let t = dot(p, &ua);
            norm(&[p[0] - t * ua[0], p[1] - t * ua[1], p[2] - t * ua[2]])
        })
        .collect();
    let d_max = perp.iter().copied().fold(0.0, f64::max);
    let eligible: Vec<usize> = (0..n)
        .filter(|&i| perp[i] >= 0.5 * d_max && perp[i] > 0.0)
        .collect();
    // (window size, farthest from the line first, index) as one integer key.
    let mut eligible: Vec<(u32, u64, u32)> = eligible
        .into_iter()
        .map(|i| (size(win, i) as u32, u64::MAX - perp[i].to_bits(), i as u32))
        .collect();
    if eligible.len() > B_CHOICES {
        eligible.select_nth_unstable(B_CHOICES - 1);
        eligible.truncate(B_CHOICES);
    }
    eligible.sort_unstable();
    let eligible = eligible.into_iter().map(|(_, _, i)| i as usize);
    let band = 2.5 * ctx.tol;
    let multiplicity = |b: usize| -> usize {
        let d_ab = norm(&sub(&ctx.x[a], &ctx.x[b]));
        members(win, b)
            .iter()
            .filter(|&&j| (norm(&sub(&ctx.x[a], &ctx.x[j as usize])) - d_ab).abs() <= band)
            .count()
    };
    let mut best: Option<(usize, usize)> = None;
    for b in eligible {
        let k = multiplicity(b);
        if best.is_none_or(|(kb, _)| k < kb) {
            best = Some((k, b));
            if k == 1 {
                break;
            }
        }
    }
    best.map(|(_, b)| (a, b))
}

/// Probe atoms in screening order: atoms that failed before, then far atoms of the plain
/// search's probe (the first `SHORT_PROBE` of them unless `full`), then a and b.
fn probe(
    ctx: &Ctx,
    r: &[f64],
    win: &Windows,
    a: usize,
    b: usize,
    extra: &[usize],
    full: bool,
) -> Vec<usize> {
    let n = ctx.x.len();
    let all: Vec<u32> = (0..n as u32).collect();
    let pool: Vec<usize> = super::spread(members(win, a), 16)
        .chain(super::spread(members(win, b), 16))
        .chain(super::spread(&all, 32))
        .filter(|&i| i != a && i != b && !extra.contains(&i))
        .collect();
    // Far atoms first (radii are ≥ 0: their bits sort as the numbers do), one per window
    // before the second of any: atoms of one shell may share symmetries the rest lacks.
    let mut keyed: Vec<(u64, u32)> = pool
        .iter()
        .map(|&i| (u64::MAX - r[i].to_bits(), i as u32))
        .collect();
    keyed.sort_unstable();
    keyed.dedup();
    let mut seen: Vec<(u32, u32)> = Vec::new();
    let mut ranked: Vec<(u32, u32)> = keyed
        .iter()
        .map(|&(_, i)| {
            let w = win.range[i as usize].0;
            let rank = match seen.iter_mut().find(|(v, _)| *v == w) {
                Some((_, c)) => {
                    *c += 1;
                    *c
                }
                None => {
                    seen.push((w, 0));
                    0
                }
            };
            (rank, i)
        })
        .collect();
    ranked.sort_by_key(|&(rank, _)| rank);
    let mut pool: Vec<usize> = ranked.into_iter().map(|(_, i)| i as usize).collect();
    if !full {
        pool.truncate(SHORT_PROBE);
    }
    let mut out: Vec<usize> = extra.to_vec();
    out.extend(pool);
    out.push(a);
    out.push(b);
    out
}

/// Nearest atom of `element` within `radius` of `q`, where `q` is an image of atom `i` (so
/// at its radius): the atoms of i's element within `radius` of its radius, from the sorted
/// windows when they are few, else the grid (or brute force).
fn nearest_image(
    ctx: &Ctx,
    r: &[f64],
    win: &Windows,
    i: usize,
    q: &Vec3,
    radius: f64,
) -> Option<(usize, f64)> {
    const FEW: usize = 12;
    let z = ctx.species[i];
    let p = win.pos[i] as usize;
    let same = |s: usize| {
        let j = win.order[s] as usize;
        ctx.species[j] == z && (r[j] - r[i]).abs() <= radius
    };
    let mut lo = p;
    while lo > 0 && p - lo < FEW && same(lo - 1) {
        lo -= 1;
    }
    let mut hi = p + 1;
    while hi < win.order.len() && hi - lo < 2 * FEW && same(hi) {
        hi += 1;
    }
    if (lo > 0 && same(lo - 1)) || (hi < win.order.len() && same(hi)) {
        return ctx.nearest(q, z, radius);
    }
    let mut best = (usize::MAX, radius * radius);
    for &j in &win.order[lo..hi] {
        let x = &ctx.x[j as usize];
        let d = [x[0] - q[0], x[1] - q[1], x[2] - q[2]];
        let d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        if d2 <= best.1 {
            best = (j as usize, d2);
        }
    }
    (best.0 != usize::MAX).then(|| (best.0, best.1.sqrt()))
}

/// One pass of the pruned search: `Err(Some(atom))` when verification failed at an atom,
/// `Err(None)` for any other reason.
#[allow(clippy::too_many_arguments)]
fn attempt(
    ctx: &Ctx,
    r: &[f64],
    win: &Windows,
    a: usize,
    b: usize,
    probe: &[usize],
    center: Vec3,
    opts: &DetectOptions,
) -> Result<Symmetry, Option<usize>> {
    let tol = ctx.tol;
    let x = &ctx.x;
    let ref_frame = pair_frame(&x[a], &x[b]).ok_or(None)?;
    let d_ab = norm(&sub(&x[a], &x[b]));
    let radius = 3.0 * tol;
    let (wa, wb) = (members(win, a), members(win, b));
    // Operations are keyed by the images of a and b (members of their windows) and their
    // handedness: slot of (ia, ib, proper) in a dense table.
    let (ra, rb) = (win.range[a].0 as usize, win.range[b].0 as usize);
    let slot = |ia: usize, ib: usize, proper: bool| -> Option<usize> {
        let (pa, pb) = (win.pos[ia] as usize, win.pos[ib] as usize);
        let (ka, kb) = (pa.checked_sub(ra)?, pb.checked_sub(rb)?);
        (ka < wa.len() && kb < wb.len()).then(|| 2 * (ka * wb.len() + kb) + usize::from(proper))
    };
    let mut seen: Vec<u32> = vec![u32::MAX; 2 * wa.len() * wb.len()];
    let mut found: Vec<RawOp> = Vec::new();
    // Largest probe residual: over the lever arm of a (≥ half the largest radius), a bound
    // on the candidates' angular error.
    let mut slack = 0.0_f64;
    let mut screen = |m: &Mat3, proper: bool| -> Option<RawOp> {
        let (mut ia, mut ib) = (usize::MAX, usize::MAX);
        let mut worst = 0.0_f64;
        for &i in probe {
            let q = mat_vec(m, &x[i]);
            let (j, d) = nearest_image(ctx, r, win, i, &q, radius)?;
            worst = worst.max(d);
            if i == a {
                ia = j;
            } else if i == b {
                ib = j;
            }
        }
        slack = slack.max(worst);
        Some(RawOp {
            m: *m,
            proper,
            ia,
            ib,
            op: PointOp::from_matrix(*m),
            order: 0,
        })
    };
    for &ap in wa {
        let ap = ap as usize;
        for &bp in wb {
            let bp = bp as usize;
            if ap == bp {
                continue;
            }
            if (norm(&sub(&x[ap], &x[bp])) - d_ab).abs() > 2.5 * tol {
                continue;
            }
            let Some(img_frame) = pair_frame(&x[ap], &x[bp]) else {
                continue;
            };
            for proper in [true, false] {
                let op = if ap == a && bp == b && proper {
                    Some(RawOp {
                        m: IDENTITY,
                        proper,
                        ia: a,
                        ib: b,
                        op: PointOp::from_matrix(IDENTITY),
                        order: 1,
                    })
                } else {
                    let mut f = img_frame;
                    if !proper {
                        f[2] = [-f[2][0], -f[2][1], -f[2][2]];
                    }
                    screen(&mat_mul(&transpose(&f), &ref_frame), proper)
                };
                if let Some(op) = op {
                    let k = slot(op.ia, op.ib, op.proper).ok_or(None)?;
                    if seen[k] == u32::MAX {
                        seen[k] = found.len() as u32;
                        found.push(op);
                    }
                }
            }
        }
    }
    let h = found.len();
    // Orders from the angles, to within the candidates' accuracy (generous: a wrong order
    // only makes the group fail its checks below).
    let angle_tol = (8.0 * slack / (0.5 * norm(&x[a]))).to_degrees().max(1e-7);
    for o in &mut found {
        o.order = o.op.order_within(h.max(1), angle_tol).ok_or(None)?;
    }
    let elems: Vec<naming::Element> = found
        .iter()
        .map(|o| naming::Element {
            op: o.op,
            order: o.order,
        })
        .collect();
    let fam = naming::name_group(&elems).map_err(|_| None)?;
    let data = group_data(fam).map_err(|_| None)?;
    if data.ops.len() != h {
        return Err(None);
    }
    let mut fr = frame::standard_frame(ctx, fam, &found).map_err(|_| None)?;
    // Exact candidates give an exact frame; otherwise fit it to the atoms.
    if slack > 1e-9 * tol {
        fr = refine_frame(ctx, r, win, fr, &data).ok_or(None)?;
    }
    let sym = finish(ctx, fam, fr, center, opts).map_err(|e| match e {
        Error::NotASymmetry { atom, .. } => Some(atom),
        _ => None,
    })?;
    // The verified group must be the screened set: the images of a and b of every
    // operation, composed through the words when only the generators were verified.
    let mut images: Vec<Option<(usize, usize)>> = vec![None; h];
    for (&k, perm) in sym.verified.iter().zip(&sym.permutations) {
        images[k] = Some((perm[a] as usize, perm[b] as usize));
    }
    for &k in &data.word_order[1..] {
        if images[k].is_none() {
            let (g, j) = data.words[k];
            let pg = sym
                .verified
                .iter()
                .position(|&v| v == g)
                .map(|p| &sym.permutations[p])
                .ok_or(None)?;
            let (ja, jb) = images[j].ok_or(None)?;
            images[k] = Some((pg[ja] as usize, pg[jb] as usize));
        }
    }
    let mut matched = vec![false; h];
    for (k, img) in images.iter().enumerate() {
        let (ia, ib) = img.ok_or(None)?;
        let idx = seen[slot(ia, ib, sym.ops[k].proper).ok_or(None)?];
        if idx == u32::MAX || std::mem::replace(&mut matched[idx as usize], true) {
            return Err(None);
        }
    }
    Ok(sym)
}

/// The frame rotated by a least-squares step (twice) so that the group's ideal generators
/// map the atoms onto their images as closely as possible: for a small rotation ω of the
/// frame an ideal operation M becomes M + [ω]×M − M[ω]×, which moves the image y = M·x by
/// −[y]×(1 − det(M)·M)·ω. Images are found once, within 3·tol.
fn refine_frame(ctx: &Ctx, r: &[f64], win: &Windows, fr: Mat3, data: &GroupData) -> Option<Mat3> {
    let x = &ctx.x;
    let mut fr = fr;
    let ideal = |fr: &Mat3, g: usize| mat_mul(&transpose(fr), &mat_mul(&data.ops[g], fr));
    let mut images: Vec<Vec<u32>> = Vec::with_capacity(data.generators.len());
    for &g in &data.generators {
        let m = ideal(&fr, g);
        let perm = (0..x.len())
            .map(|i| {
                nearest_image(ctx, r, win, i, &mat_vec(&m, &x[i]), 3.0 * ctx.tol)
                    .map(|(j, _)| j as u32)
            })
            .collect::<Option<Vec<u32>>>()?;
        images.push(perm);
    }
    // Σ (|x|² 1 − x xᵀ): rotated by M it is the same sum over the images y = M·x.
    let mut s0 = [[0.0; 3]; 3];
    for p in x {
        let p2 = dot(p, p);
        for i in 0..3 {
            for j in 0..3 {
                s0[i][j] += if i == j { p2 } else { 0.0 } - p[i] * p[j];
            }
        }
    }
    for _ in 0..2 {
        let mut nm = [[0.0; 3]; 3];
        let mut v = [0.0; 3];
        for (&g, perm) in data.generators.iter().zip(&images) {
            let m = ideal(&fr, g);
            let s = det(&m);
            let mut b = m;
            for (i, row) in b.iter_mut().enumerate() {
                for (j, e) in row.iter_mut().enumerate() {
                    *e = if i == j { 1.0 } else { 0.0 } - s * *e;
                }
            }
            let sy = mat_mul(&m, &mat_mul(&s0, &transpose(&m)));
            let mut c = [0.0; 3];
            for (i, &j) in perm.iter().enumerate() {
                let w = cross(&mat_vec(&m, &x[i]), &x[j as usize]);
                c = [c[0] + w[0], c[1] + w[1], c[2] + w[2]];
            }
            let bt = transpose(&b);
            let add = mat_mul(&bt, &mat_mul(&sy, &b));
            let bv = mat_vec(&bt, &c);
            for i in 0..3 {
                v[i] += bv[i];
                for j in 0..3 {
                    nm[i][j] += add[i][j];
                }
            }
        }
        let omega = solve_symmetric(&nm, &v)?;
        let angle = norm(&omega);
        if angle.is_nan() || angle <= 1e-15 {
            break;
        }
        let q = rotation_matrix(
            &[omega[0] / angle, omega[1] / angle, omega[2] / angle],
            angle,
        );
        fr = mat_mul(&fr, &transpose(&q));
    }
    Some(fr)
}

/// Least-squares solution of N·w = v for a symmetric positive semi-definite N, ignoring the
/// directions N does not constrain (eigenvalues below 1e-9 of the largest).
fn solve_symmetric(nm: &Mat3, v: &Vec3) -> Option<Vec3> {
    let m = nalgebra::Matrix3::from_fn(|i, j| nm[i][j]);
    let eig = nalgebra::SymmetricEigen::new(m);
    let top = eig.eigenvalues.iter().copied().fold(0.0, f64::max);
    if !(top > 0.0 && top.is_finite()) {
        return None;
    }
    let mut w = [0.0; 3];
    for k in 0..3 {
        let lam = eig.eigenvalues[k];
        if lam > 1e-9 * top {
            let u = eig.eigenvectors.column(k);
            let t = (u[0] * v[0] + u[1] * v[1] + u[2] * v[2]) / lam;
            for i in 0..3 {
                w[i] += t * u[i];
            }
        }
    }
    Some(w)
}
