//! The pruned search (step 3 of the module doc, first attempt): the operations found from
//! the fewest candidate pairs, few of them screened, the group named from them and then
//! checked as a whole.
//!
//! - The second reference atom b is the one whose distance to a is rarest among the atoms
//!   of its window: an operation sending a to a' sends b to an atom at |ab| from a', so the
//!   candidates number |W(a)| · k · 2 with k that multiplicity (k = 1 for C60: 120
//!   candidates, every one a symmetry; the plain search tries 60 · 60 pairs).
//! - A candidate is screened on a short probe (atoms of the plain search's probe, one per
//!   radius band before the second of any, far ones first: wrong candidates fail at their
//!   first atoms), refitted to it, and must give the atoms of both windows images. One that
//!   passes becomes a generator: the images of the windows give every product with it
//!   without a lookup, and the candidates that are products already are never screened.
//!   Orders come from those products too; the group is named and put in its standard frame
//!   from them, and only the group's ideal operations are verified against all atoms
//!   ([`super::finish`]; the frame is fitted to the atoms first when that fails).
//! - The answer is accepted only when the verified group is exactly the set found, matched
//!   by the images of a and b. Every true operation passes the screen (its probe is part of
//!   the plain search's), so that set holds all of them; a verified group equal to it is the
//!   structure's whole group. Anything else (a false candidate that passed the probe, a name
//!   or frame that cannot be built, an operation that fails) repeats the search with the
//!   atom that failed screened first (unless it was screened already), then with the full
//!   probe. Then, or when an atom screened already fails (false candidates that pass the
//!   3·tol screen and fail at tol: near-symmetries at a loose tolerance), the search is
//!   repeated once with the plain search's reference atoms, probe and test of every
//!   candidate ([`strict_test`]): the candidates that fail it are dropped, as the plain
//!   search drops them, and the rest are closed, named and verified as before. Only if
//!   that fails too is the structure left to the plain search.
//! - Small structures without symmetry exit before all this: see
//!   [`lone_pair_without_mirror`] and [`without_symmetry`].

use super::canonical::{group_data, Family, GroupData};
use super::{
    finish, frame, line_distances, naming, pair_frame, sub, Ctx, DetectOptions, RawOp, Symmetry,
};
use crate::error::Error;
use crate::ops::{
    cross, det, dot, fit_orthogonal, mat_mul, mat_vec, norm, rotation_matrix, transpose, Mat3,
    PointOp, Vec3, IDENTITY,
};

/// Probe atoms outside the two windows screened by the first attempt (besides atoms that
/// failed before).
const SHORT_PROBE: usize = 8;
/// Atoms that failed verification, screened first on the next attempt, at most.
const MAX_RETRIES: usize = 4;
/// Second reference atoms whose multiplicity is measured, at most.
const B_CHOICES: usize = 64;

/// The structure's group by the pruned search, or `None` to leave it to the plain search.
pub(super) fn pruned(ctx: &Ctx, center: Vec3, opts: &DetectOptions) -> Option<Symmetry> {
    let r = &ctx.r;
    let exit = if r.len() <= SMALL {
        let order = species_radius_order(ctx);
        match lone_pair_without_mirror(ctx, r, &order) {
            Some(true) => Exit::C1,
            // The mirror passed the screen (or there are no lone reference atoms): the second
            // exit tests it, and every other candidate, as the plain search does.
            _ => without_symmetry(ctx, r, &order),
        }
    } else {
        Exit::Unknown
    };
    if exit == Exit::C1 {
        let fr = frame::standard_frame(ctx, Family::C1, &[]).ok()?;
        return finish(ctx, Family::C1, fr, center, opts).ok();
    }
    let sh = Shells::new(ctx.species, r, 2.0 * ctx.tol);
    let (a, b) = choose_pair(ctx, &sh)?;
    let mut extra: Vec<usize> = Vec::new();
    let mut full = false;
    let mut strict = false;
    for _ in 0..MAX_RETRIES + 3 {
        let found = if strict {
            // The plain search's own reference atoms, probe and test of every candidate.
            let p = super::plain_reference(ctx, &[]).ok()?;
            attempt(ctx, &sh, p.a, p.b, &p.probe, true, center, opts)
        } else {
            let probe = probe(ctx, &sh, a, b, &extra, full);
            attempt(ctx, &sh, a, b, &probe, false, center, opts)
        };
        // An operation the plain search's test accepts (the second early exit found one)
        // is missing from a group of one element: a screen that missed it.
        let found = found.and_then(|sym| match exit {
            Exit::Symmetric if sym.order() == 1 => Err(None),
            _ => Ok(sym),
        });
        match found {
            Ok(sym) => return Some(sym),
            // Strict candidates that still fail: the structure is at the edge of the
            // tolerance, a case for the plain search.
            Err(_) if strict => return None,
            // An atom screened already: screening it again (first) passes the same false
            // candidates; they are dropped by testing every candidate on all atoms.
            Err(Some(atom))
                if extra.contains(&atom) || screened(ctx, &sh, a, b, atom, &extra, full) =>
            {
                strict = true;
            }
            Err(Some(atom)) if extra.len() < MAX_RETRIES => extra.push(atom),
            Err(_) if !full => full = true,
            Err(_) => strict = true,
        }
    }
    None
}

/// Whether `atom` was screened by an attempt (its probe and both windows).
fn screened(
    ctx: &Ctx,
    sh: &Shells,
    a: usize,
    b: usize,
    atom: usize,
    extra: &[usize],
    full: bool,
) -> bool {
    probe(ctx, sh, a, b, extra, full).contains(&atom)
        || [a, b]
            .iter()
            .any(|&c| sh.window(c).contains(&(atom as u32)))
}

/// What the early exits for small structures found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Exit {
    /// No candidate but E passes the plain search's test: C1.
    C1,
    /// Some candidate other than E passes it.
    Symmetric,
    /// Not tried (or no reference atoms).
    Unknown,
}

/// The plain search's test of a candidate (`super::test_candidate` with every atom in the
/// acceptance set): every atom of its probe has an image within 3·tol under `m0` (the
/// candidate from the images of its reference atoms); the least-squares fit to those images
/// maps every atom within `tol` of an image. Returns the fit to the latter images with the
/// largest of their distances, and the images (atom i → `images[i]`), or `None`.
///
/// With the plain search's reference atoms and probe, a candidate that fails is one the
/// plain search drops (up to 4096 atoms, where it tests every atom): dropping it loses no
/// operation the plain search would find.
fn strict_test(
    ctx: &Ctx,
    mut nearest: impl FnMut(usize, &Vec3, f64) -> Option<(usize, f64)>,
    m0: &Mat3,
    proper: bool,
    probe: &[usize],
    images: &mut Vec<u32>,
) -> Option<(Mat3, f64)> {
    let x = &ctx.x;
    let mut h = [[0.0; 3]; 3];
    for &i in probe {
        let (j, _) = nearest(i, &mat_vec(m0, &x[i]), 3.0 * ctx.tol)?;
        super::add_outer(&mut h, &x[i], &x[j]);
    }
    let r1 = fit_orthogonal(&h, proper);
    let mut h = [[0.0; 3]; 3];
    let mut worst = 0.0_f64;
    images.clear();
    for (i, p) in x.iter().enumerate() {
        let (j, d2) = nearest(i, &mat_vec(&r1, p), ctx.tol)?;
        super::add_outer(&mut h, p, &x[j]);
        worst = worst.max(d2);
        images.push(j as u32);
    }
    Some((fit_orthogonal(&h, proper), worst.sqrt()))
}

/// Atoms grouped by element and radius: bins of width at least the window width w, so that
/// the atoms of an element within w of a radius lie in its bin and the two next to it
/// (counting sort, O(n); at most 2n + 64 bins, wider ones for sparse radii).
struct Shells<'a> {
    r: &'a [f64],
    w: f64,
    /// 1 / bin width.
    inv: f64,
    /// Bins per element.
    per: usize,
    /// Bin of each atom: element block × `per` + radius bin.
    bin: Vec<u32>,
    /// Bin k holds `atoms[start[k]..start[k + 1]]`, ascending.
    start: Vec<u32>,
    atoms: Vec<u32>,
}

impl<'a> Shells<'a> {
    fn new(species: &[i64], r: &'a [f64], w: f64) -> Self {
        let n = r.len();
        // Block of each atom: its species' rank in order of first appearance (species codes
        // are element + 1000 × isotope rank, so a dense index is built here).
        let mut codes: Vec<i64> = Vec::new();
        let mut last = (i64::MIN, 0u32);
        let block: Vec<u32> = species
            .iter()
            .map(|&z| {
                if z != last.0 {
                    let b = match codes.iter().position(|&c| c == z) {
                        Some(b) => b as u32,
                        None => {
                            codes.push(z);
                            (codes.len() - 1) as u32
                        }
                    };
                    last = (z, b);
                }
                last.1
            })
            .collect();
        let blocks = codes.len() as u32;
        let blocks = blocks.max(1) as usize;
        let r_max = r.iter().copied().fold(0.0, f64::max);
        let cap = ((2 * n + 64) / blocks).max(2);
        let mut width = w;
        if r_max / width >= (cap - 1) as f64 {
            width = r_max / (cap - 1) as f64;
        }
        let inv = 1.0 / width;
        let per = (r_max * inv) as usize + 1;
        let bin: Vec<u32> = (0..n)
            .map(|i| {
                let k = ((r[i] * inv) as usize).min(per - 1);
                (block[i] as usize * per + k) as u32
            })
            .collect();
        let mut start = vec![0u32; blocks * per + 1];
        for &k in &bin {
            start[k as usize + 1] += 1;
        }
        for k in 1..start.len() {
            start[k] += start[k - 1];
        }
        let mut fill = start.clone();
        let mut atoms = vec![0u32; n];
        for (i, &k) in bin.iter().enumerate() {
            atoms[fill[k as usize] as usize] = i as u32;
            fill[k as usize] += 1;
        }
        Shells {
            r,
            w,
            inv,
            per,
            bin,
            start,
            atoms,
        }
    }

    /// The atoms of the bins that hold i's element within `radius` of its radius.
    fn span(&self, i: usize, radius: f64) -> &[u32] {
        let b = self.bin[i] as usize;
        let base = b - b % self.per;
        let lo = ((self.r[i] - radius).max(0.0) * self.inv) as usize;
        let hi = (((self.r[i] + radius) * self.inv) as usize).min(self.per - 1);
        &self.atoms[self.start[base + lo] as usize..self.start[base + hi + 1] as usize]
    }

    /// The window of atom i: atoms of its element whose radius is within w of its own.
    fn window(&self, i: usize) -> Vec<u32> {
        let ri = self.r[i];
        self.span(i, self.w)
            .iter()
            .copied()
            .filter(|&j| (self.r[j as usize] - ri).abs() <= self.w)
            .collect()
    }

    /// Size of i's window: counted when its bins hold few atoms, else their number (the
    /// size or a little more).
    fn size(&self, i: usize) -> usize {
        let span = self.span(i, self.w);
        if span.len() > 16 {
            return span.len();
        }
        let ri = self.r[i];
        span.iter()
            .filter(|&&j| (self.r[j as usize] - ri).abs() <= self.w)
            .count()
    }
}

/// The first early exit for small structures without symmetry (up to 32 atoms, where the
/// plain search's probe is every atom): reference atoms a and b, chosen as below, each
/// alone in its window, so that every operation fixes both and can only be E or the mirror
/// through the centre, a and b. `Some(true)` when that mirror fails the screen at some
/// atom (C1), `Some(false)` when it passes, `None` when there are no such a and b.
fn lone_pair_without_mirror(ctx: &Ctx, r: &[f64], order: &[usize]) -> Option<bool> {
    let (x, n, w) = (&ctx.x, r.len(), 2.0 * ctx.tol);
    if n > SMALL {
        return None;
    }
    // Alone: no other atom of its element within w of its radius (neighbours in the order
    // of species and radius).
    let mut alone = [true; SMALL];
    for pair in order.windows(2) {
        let (i, j) = (pair[0], pair[1]);
        if ctx.species[i] == ctx.species[j] && r[j] - r[i] <= w {
            alone[i] = false;
            alone[j] = false;
        }
    }
    let r_max = r.iter().copied().fold(0.0, f64::max);
    // a: the smallest window among the far atoms (1 when alone), then the largest radius.
    let (_, a) = (0..n)
        .filter(|&i| alone[i] && r[i] >= 0.5 * r_max && r[i] > 0.0)
        .map(|i| (u64::MAX - r[i].to_bits(), i))
        .min()?;
    let (perp, d_max) = line_distances(x, a, r[a]);
    let (_, b) = (0..n)
        .filter(|&i| alone[i] && perp[i] >= 0.5 * d_max && perp[i] > 0.0)
        .map(|i| (u64::MAX - perp[i].to_bits(), i))
        .min()?;
    let f = pair_frame(&x[a], &x[b])?;
    let u = f[2];
    // Atoms within 1.5·tol of the plane move by at most 3·tol: they pass.
    Some(x.iter().enumerate().any(|(i, p)| {
        let t = dot(p, &u);
        let q = [
            p[0] - 2.0 * t * u[0],
            p[1] - 2.0 * t * u[1],
            p[2] - 2.0 * t * u[2],
        ];
        t.abs() > 1.5 * ctx.tol && ctx.nearest(&q, ctx.species[i], 3.0 * ctx.tol).is_none()
    }))
}

/// Atom indices of a small structure in the order of (species, radius, index): the order
/// both early exits walk, from the order of (radius, index) taken for the overlap check,
/// species by species (ascending codes).
fn species_radius_order(ctx: &Ctx) -> Vec<usize> {
    let mut codes: Vec<i64> = Vec::with_capacity(4);
    for &z in ctx.species {
        if !codes.contains(&z) {
            codes.push(z);
        }
    }
    codes.sort_unstable();
    let mut out = Vec::with_capacity(ctx.by_radius.len());
    for z in codes {
        out.extend(
            ctx.by_radius
                .iter()
                .map(|&i| i as usize)
                .filter(|&i| ctx.species[i] == z),
        );
    }
    out
}

/// Largest structure the early exits for structures without symmetry handle.
const SMALL: usize = 32;

/// For each atom of a small structure, the run of `order` (the order of species and
/// radius) of the atoms of its species whose radius is within `band` of its own (itself
/// included): one sweep of the order.
fn runs(ctx: &Ctx, r: &[f64], order: &[usize], band: f64) -> [std::ops::Range<usize>; SMALL] {
    let n = order.len();
    let mut out = [const { 0..0 }; SMALL];
    let (mut lo, mut hi) = (0usize, 0usize);
    for (s, &i) in order.iter().enumerate() {
        let same = |t: usize| {
            let j = order[t];
            ctx.species[j] == ctx.species[i] && (r[j] - r[i]).abs() <= band
        };
        while !same(lo) {
            lo += 1;
        }
        hi = hi.max(s + 1);
        while hi < n && same(hi) {
            hi += 1;
        }
        out[i] = lo..hi;
    }
    out
}

/// The second early exit for small structures without symmetry (up to 32 atoms): the
/// plain search's reference atoms a and b (smallest windows, chosen as it chooses them) and
/// every candidate pair of images of them, each tested as the plain search tests it (its
/// probe is every atom here). `C1` when no candidate but E passes (the plain search would
/// find E alone), `Symmetric` when one does: a near-symmetry that passes the 3·tol screen
/// but fails at tol (at a loose tolerance, most of them) does not stop the exit.
fn without_symmetry(ctx: &Ctx, r: &[f64], order: &[usize]) -> Exit {
    let (x, n, w, tol) = (&ctx.x, r.len(), 2.0 * ctx.tol, ctx.tol);
    if n > SMALL {
        return Exit::Unknown;
    }
    // Atoms in the order of species and radius; each window is a run of that order.
    let win = runs(ctx, r, order, w);
    let size = |i: usize| win[i].len();
    let r_max = r.iter().copied().fold(0.0, f64::max);
    let Some((_, _, a)) = (0..n)
        .filter(|&i| r[i] >= 0.5 * r_max && r[i] > 0.0)
        .map(|i| (size(i), u64::MAX - r[i].to_bits(), i))
        .min()
    else {
        return Exit::Unknown;
    };
    let (perp, d_max) = line_distances(x, a, r[a]);
    let Some((_, _, b)) = (0..n)
        .filter(|&i| perp[i] >= 0.5 * d_max && perp[i] > 0.0)
        .map(|i| (size(i), u64::MAX - perp[i].to_bits(), i))
        .min()
    else {
        return Exit::Unknown;
    };
    let Some(ref_frame) = pair_frame(&x[a], &x[b]) else {
        return Exit::Unknown;
    };
    let d_ab = norm(&sub(&x[a], &x[b]));
    // The plain search's test of each candidate (see `strict_test`; for up to 32 atoms its
    // probe is every atom): every atom has an image within 3·tol, and the least-squares fit
    // to those images maps every atom within tol of an image. Images of atom i lie at its
    // radius: they are looked for in the run of its species within 3·tol (tol) of it, the
    // atoms of the run side by side in `xs`.
    let mut xs = [[0.0; 3]; SMALL];
    for (s, &j) in order.iter().enumerate() {
        xs[s] = x[j];
    }
    // The runs within 3·tol and tol of each atom's radius, found when first needed (most
    // candidates fail at their first atoms).
    let mut at = [0usize; SMALL];
    for (s, &i) in order.iter().enumerate() {
        at[i] = s;
    }
    let walk = |i: usize, band: f64| -> std::ops::Range<usize> {
        let near = |s: usize| {
            let j = order[s];
            ctx.species[j] == ctx.species[i] && (r[j] - r[i]).abs() <= band
        };
        let (mut lo, mut hi) = (at[i], at[i] + 1);
        while lo > 0 && near(lo - 1) {
            lo -= 1;
        }
        while hi < n && near(hi) {
            hi += 1;
        }
        lo..hi
    };
    const UNSET: std::ops::Range<usize> = usize::MAX..usize::MAX;
    let (mut run3, mut run1) = ([UNSET; SMALL], [UNSET; SMALL]);
    let (t3, t1) = (9.0 * tol * tol, tol * tol);
    let within = |p: &Vec3, q: &Vec3, t2: f64| {
        let d = sub(p, q);
        dot(&d, &d) <= t2
    };
    // The atom that failed the last candidate is checked first (a rejection costs less).
    let (mut culprit3, mut culprit1) = (a, a);
    let mut holds = |m: &Mat3, proper: bool| -> bool {
        let mut run3_of = |i: usize| {
            if run3[i].start == usize::MAX {
                run3[i] = walk(i, 3.0 * tol);
            }
            run3[i].clone()
        };
        let q = mat_vec(m, &x[culprit3]);
        if !xs[run3_of(culprit3)].iter().any(|p| within(p, &q, t3)) {
            return false;
        }
        let mut h = [[0.0; 3]; 3];
        for (i, p) in x.iter().enumerate() {
            let q = mat_vec(m, p);
            let run = run3_of(i);
            // Usually one atom is within 3·tol: counted without a chain of comparisons.
            let (mut count, mut last) = (0u32, 0usize);
            for (s, y) in xs[run.clone()].iter().enumerate() {
                let near = within(y, &q, t3);
                count += u32::from(near);
                last = if near { s } else { last };
            }
            let j = match count {
                0 => {
                    culprit3 = i;
                    return false;
                }
                1 => run.start + last,
                _ => {
                    let mut best = (usize::MAX, t3);
                    for s in run {
                        let d = sub(&xs[s], &q);
                        let d2 = dot(&d, &d);
                        if d2 <= best.1 {
                            best = (s, d2);
                        }
                    }
                    best.0
                }
            };
            super::add_outer(&mut h, p, &xs[j]);
        }
        let r1 = fit_orthogonal(&h, proper);
        let mut fails = |i: usize| {
            if run1[i].start == usize::MAX {
                run1[i] = walk(i, tol);
            }
            let q = mat_vec(&r1, &x[i]);
            !xs[run1[i].clone()].iter().any(|p| within(p, &q, t1))
        };
        if fails(culprit1) {
            return false;
        }
        match (0..n).find(|&i| fails(i)) {
            Some(i) => {
                culprit1 = i;
                false
            }
            None => true,
        }
    };
    for &ap in &order[win[a].clone()] {
        for &bp in &order[win[b].clone()] {
            if ap == bp || (norm(&sub(&x[ap], &x[bp])) - d_ab).abs() > 2.5 * tol {
                continue;
            }
            let Some(img_frame) = pair_frame(&x[ap], &x[bp]) else {
                continue;
            };
            for proper in [true, false] {
                if proper && ap == a && bp == b {
                    continue; // E
                }
                let mut f = img_frame;
                if !proper {
                    f[2] = [-f[2][0], -f[2][1], -f[2][2]];
                }
                if holds(&mat_mul(&transpose(&f), &ref_frame), proper) {
                    return Exit::Symmetric;
                }
            }
        }
    }
    Exit::C1
}

/// The reference atoms: a as in the plain search (smallest window among the atoms at ≥ half
/// the largest radius); b among the atoms at ≥ half the largest distance from the line of a,
/// the one with the fewest atoms of its window at its distance from a.
fn choose_pair(ctx: &Ctx, sh: &Shells) -> Option<(usize, usize)> {
    let r = sh.r;
    let n = r.len();
    let r_max = r.iter().copied().fold(0.0, f64::max);
    let a = (0..n)
        .filter(|&i| r[i] >= 0.5 * r_max && r[i] > 0.0)
        .map(|i| (sh.size(i), u64::MAX - r[i].to_bits(), i))
        .min()?
        .2;
    let (perp, d_max) = line_distances(&ctx.x, a, r[a]);
    let eligible: Vec<usize> = (0..n)
        .filter(|&i| perp[i] >= 0.5 * d_max && perp[i] > 0.0)
        .collect();
    // (window size, farthest from the line first, index) as one integer key.
    let mut eligible: Vec<(u32, u64, u32)> = eligible
        .into_iter()
        .map(|i| (sh.size(i) as u32, u64::MAX - perp[i].to_bits(), i as u32))
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
        sh.window(b)
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
/// search's probe outside the windows of a and b (which are screened in full), the first
/// `SHORT_PROBE` of them unless `full`.
fn probe(ctx: &Ctx, sh: &Shells, a: usize, b: usize, extra: &[usize], full: bool) -> Vec<usize> {
    let r = sh.r;
    let n = ctx.x.len();
    let all: Vec<u32> = (0..n as u32).collect();
    let (wa, wb) = (sh.window(a), sh.window(b));
    let pool: Vec<usize> = super::spread(&all, 32)
        .filter(|&i| !wa.contains(&(i as u32)) && !wb.contains(&(i as u32)))
        .filter(|i| !extra.contains(i))
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
            let w = sh.bin[i as usize];
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
    out
}

/// Nearest atom of i's element within `radius` of `q`, an image of atom i (so at its
/// radius), with its squared distance: a scan of the atoms of its shells when they are few, else the grid (or brute
/// force).
fn nearest_image(ctx: &Ctx, sh: &Shells, i: usize, q: &Vec3, radius: f64) -> Option<(usize, f64)> {
    const FEW: usize = 16;
    let span = sh.span(i, radius);
    if span.len() > FEW {
        return ctx
            .nearest(q, ctx.species[i], radius)
            .map(|(j, d)| (j, d * d));
    }
    // An atom within tol/2 is the nearest: no two atoms lie within tol of each other.
    let sure = 0.25 * ctx.tol * ctx.tol;
    let mut best = (usize::MAX, radius * radius);
    for &j in span {
        let x = &ctx.x[j as usize];
        let d = [x[0] - q[0], x[1] - q[1], x[2] - q[2]];
        let d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        if d2 <= best.1 {
            best = (j as usize, d2);
            if d2 <= sure {
                break;
            }
        }
    }
    (best.0 != usize::MAX).then_some(best)
}

/// One pass of the pruned search: `Err(Some(atom))` when verification failed at an atom,
/// `Err(None)` for any other reason.
#[allow(clippy::too_many_arguments)]
fn attempt(
    ctx: &Ctx,
    sh: &Shells,
    a: usize,
    b: usize,
    probe: &[usize],
    strict: bool,
    center: Vec3,
    opts: &DetectOptions,
) -> Result<Symmetry, Option<usize>> {
    let tol = ctx.tol;
    let x = &ctx.x;
    let ref_frame = pair_frame(&x[a], &x[b]).ok_or(None)?;
    let d_ab = norm(&sub(&x[a], &x[b]));
    let radius = 3.0 * tol;
    let (wa, wb) = (sh.window(a), sh.window(b));
    let (na, nb) = (wa.len(), wb.len());
    // Position of an atom in a window.
    let place = |w: &[u32]| {
        let mut v: Vec<(u32, u32)> = w.iter().enumerate().map(|(k, &j)| (j, k as u32)).collect();
        v.sort_unstable();
        v
    };
    let (pla, plb) = (place(&wa), place(&wb));
    let find = |v: &[(u32, u32)], j: usize| -> Option<usize> {
        let k = v
            .binary_search_by_key(&(j as u32), |&(atom, _)| atom)
            .ok()?;
        Some(v[k].1 as usize)
    };
    let (ka0, kb0) = (find(&pla, a).ok_or(None)?, find(&plb, b).ok_or(None)?);
    // An operation is known by the images of a and b (positions in their windows) and its
    // handedness: its slot in a dense table. A generator keeps the images of every atom of
    // both windows (positions in the same window, W(a) then W(b); `OUT` for an image outside
    // it: a window is a band of radii, not an orbit), so a generator times any element needs
    // no lookup; every other element is a generator times an element found before it.
    const OUT: u32 = u32::MAX;
    let slot = |ka: u32, kb: u32, proper: bool| -> Option<usize> {
        (ka != OUT && kb != OUT).then(|| 2 * (ka as usize * nb + kb as usize) + usize::from(proper))
    };
    struct Element {
        m: Mat3,
        proper: bool,
        /// Images of a and b (positions in their windows).
        ka: u32,
        kb: u32,
        /// (generator, element) whose product this is; `None` for E and the generators.
        parent: Option<(usize, usize)>,
        /// Generators: the images of both windows.
        img: Vec<u32>,
    }
    let mut index: Vec<u32> = vec![u32::MAX; 2 * na * nb];
    let mut els: Vec<Element> = vec![Element {
        m: IDENTITY,
        proper: true,
        ka: ka0 as u32,
        kb: kb0 as u32,
        parent: None,
        img: Vec::new(),
    }];
    let identity = slot(ka0 as u32, kb0 as u32, true).ok_or(None)?;
    index[identity] = 0;
    let mut gens: Vec<usize> = Vec::new();
    let mut all_images: Vec<u32> = Vec::new();
    // Largest screening residual: whether the frame needs a fit to the atoms.
    let mut slack = 0.0_f64;
    // A candidate passes when every probe atom and every atom of both windows has an image
    // within 3·tol (the windows' images are kept where they lie in the same window); it is
    // then refitted to those images (least squares).
    let screen = |m: &mut Mat3, proper: bool, slack: &mut f64| -> Option<Vec<u32>> {
        let mut worst = 0.0_f64;
        let mut h = [[0.0; 3]; 3];
        for &i in probe {
            let (j, d2) = nearest_image(ctx, sh, i, &mat_vec(m, &x[i]), radius)?;
            worst = worst.max(d2);
            super::add_outer(&mut h, &x[i], &x[j]);
        }
        let mut img = Vec::with_capacity(na + nb);
        for (w, pl) in [(&wa, &pla), (&wb, &plb)] {
            for &i in w.iter() {
                let i = i as usize;
                let (j, d2) = nearest_image(ctx, sh, i, &mat_vec(m, &x[i]), radius)?;
                worst = worst.max(d2);
                super::add_outer(&mut h, &x[i], &x[j]);
                img.push(find(pl, j).map_or(OUT, |k| k as u32));
            }
        }
        if worst > 1e-20 * tol * tol {
            *m = fit_orthogonal(&h, proper);
        }
        *slack = slack.max(worst.sqrt());
        Some(img)
    };
    for (kap, &ap) in wa.iter().enumerate() {
        let ap = ap as usize;
        for (kbp, &bp) in wb.iter().enumerate() {
            let bp = bp as usize;
            if ap == bp || (norm(&sub(&x[ap], &x[bp])) - d_ab).abs() > 2.5 * tol {
                continue;
            }
            let Some(img_frame) = pair_frame(&x[ap], &x[bp]) else {
                continue;
            };
            for proper in [true, false] {
                if slot(kap as u32, kbp as u32, proper).is_some_and(|k| index[k] != u32::MAX) {
                    continue; // a product of operations found already
                }
                let mut f = img_frame;
                if !proper {
                    f[2] = [-f[2][0], -f[2][1], -f[2][2]];
                }
                let mut m = mat_mul(&transpose(&f), &ref_frame);
                let img = if strict {
                    // Only candidates that pass the plain search's test; the windows' images
                    // are then those within tol.
                    let near =
                        |i: usize, q: &Vec3, radius: f64| nearest_image(ctx, sh, i, q, radius);
                    let Some((fit, worst)) =
                        strict_test(ctx, near, &m, proper, probe, &mut all_images)
                    else {
                        continue;
                    };
                    m = fit;
                    slack = slack.max(worst);
                    let mut img = Vec::with_capacity(na + nb);
                    for (w, pl) in [(&wa, &pla), (&wb, &plb)] {
                        for &i in w.iter() {
                            let j = all_images[i as usize] as usize;
                            img.push(find(pl, j).map_or(OUT, |k| k as u32));
                        }
                    }
                    img
                } else {
                    let Some(img) = screen(&mut m, proper, &mut slack) else {
                        continue;
                    };
                    img
                };
                let (ka, kb) = (img[ka0], img[na + kb0]);
                let Some(k) = slot(ka, kb, proper) else {
                    continue;
                };
                if index[k] != u32::MAX {
                    continue;
                }
                let new = els.len();
                index[k] = new as u32;
                gens.push(new);
                els.push(Element {
                    m,
                    proper,
                    ka,
                    kb,
                    parent: None,
                    img,
                });
                // Close under the generators: the elements found so far times the new
                // generator, new elements times every generator.
                let mut queue: std::collections::VecDeque<(usize, bool)> =
                    (0..els.len()).map(|q| (q, false)).collect();
                while let Some((q, every)) = queue.pop_front() {
                    let by: &[usize] = if every { &gens } else { &[new] };
                    for &g in by {
                        let (eg, eq) = (&els[g], &els[q]);
                        let (ka, kb) = match (eq.ka, eq.kb) {
                            (OUT, _) | (_, OUT) => (OUT, OUT),
                            (ka, kb) => (eg.img[ka as usize], eg.img[na + kb as usize]),
                        };
                        let proper = eg.proper == eq.proper;
                        let k = slot(ka, kb, proper).ok_or(None)?;
                        if index[k] == u32::MAX {
                            let m = mat_mul(&eg.m, &eq.m);
                            index[k] = els.len() as u32;
                            queue.push_back((els.len(), true));
                            els.push(Element {
                                m,
                                proper,
                                ka,
                                kb,
                                parent: Some((g, q)),
                                img: Vec::new(),
                            });
                        }
                    }
                }
            }
        }
    }
    let h = els.len();
    // Orders from the products: the smallest k with eᵏ = E. Left multiplication by each
    // generator as a table; e·x is then x multiplied by the generators of e's chain.
    let ng = gens.len();
    let mut times: Vec<u32> = vec![0; h * ng];
    for (q, eq) in els.iter().enumerate() {
        for (gi, &g) in gens.iter().enumerate() {
            let eg = &els[g];
            let (ka, kb) = match (eq.ka, eq.kb) {
                (OUT, _) | (_, OUT) => (OUT, OUT),
                (ka, kb) => (eg.img[ka as usize], eg.img[na + kb as usize]),
            };
            let k = slot(ka, kb, eg.proper == eq.proper).ok_or(None)?;
            if index[k] == u32::MAX {
                return Err(None);
            }
            times[q * ng + gi] = index[k];
        }
    }
    let gen_no = |g: usize| gens.iter().position(|&x| x == g).unwrap_or(0);
    let mut found: Vec<RawOp> = Vec::with_capacity(h);
    let mut chain: Vec<usize> = Vec::new();
    for (e, el) in els.iter().enumerate() {
        // e = g1·g2·…·gd (E or a generator last).
        chain.clear();
        let mut root = e;
        while let Some((g, q)) = els[root].parent {
            chain.push(gen_no(g));
            root = q;
        }
        if root != 0 {
            chain.push(gen_no(root));
        }
        let mut power = e;
        let mut order = 1;
        while power != 0 {
            for &gi in chain.iter().rev() {
                power = times[power * ng + gi] as usize;
            }
            order += 1;
            if order > h {
                return Err(None);
            }
        }
        found.push(RawOp {
            m: el.m,
            proper: el.proper,
            ia: wa[el.ka as usize] as usize,
            ib: wb[el.kb as usize] as usize,
            op: PointOp::from_matrix(el.m),
            order,
        });
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
    let fr = frame::standard_frame(ctx, fam, &found).map_err(|_| None)?;
    let failed_at = |e: Error| match e {
        Error::NotASymmetry { atom, .. } => Some(atom),
        _ => None,
    };
    // The frame comes from operations fitted to the probe; when the ideal operations miss
    // an atom in it and the candidates did not hit their images exactly, the frame is fitted
    // to the atoms and verified once more.
    let sym = match finish(ctx, fam, fr, center, opts) {
        Ok(sym) => sym,
        Err(Error::NotASymmetry { atom, .. }) if slack <= 1e-9 * tol => return Err(Some(atom)),
        Err(Error::NotASymmetry { .. }) => {
            let fr = refine_frame(ctx, sh, fr, &data).ok_or(None)?;
            finish(ctx, fam, fr, center, opts).map_err(failed_at)?
        }
        Err(e) => return Err(failed_at(e)),
    };
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
        let (ka, kb) = (find(&pla, ia).ok_or(None)?, find(&plb, ib).ok_or(None)?);
        let idx = index[slot(ka as u32, kb as u32, sym.ops[k].proper).ok_or(None)?];
        if idx == u32::MAX || std::mem::replace(&mut matched[idx as usize], true) {
            return Err(None);
        }
    }
    Ok(sym)
}

/// The frame rotated by a least-squares step (twice) so that the group's ideal generators
/// map the atoms onto their images as closely as possible: for a small rotation ω of the
/// frame an ideal operation M becomes M + [ω]×M − M[ω]×, which moves the image y = M·x by
/// −[y]×(1 − det(M)·M)·ω. Images are found once, within 3·tol, for all atoms or (large
/// structures) an evenly spread sample of `REFINE_SAMPLE`.
fn refine_frame(ctx: &Ctx, sh: &Shells, fr: Mat3, data: &GroupData) -> Option<Mat3> {
    const REFINE_SAMPLE: usize = 4096;
    let x = &ctx.x;
    let all: Vec<u32> = (0..x.len() as u32).collect();
    let atoms: Vec<usize> = super::spread(&all, REFINE_SAMPLE).collect();
    let mut fr = fr;
    let ideal = |fr: &Mat3, g: usize| mat_mul(&transpose(fr), &mat_mul(&data.ops[g], fr));
    let mut images: Vec<Vec<u32>> = Vec::with_capacity(data.generators.len());
    for &g in &data.generators {
        let m = ideal(&fr, g);
        let perm = atoms
            .iter()
            .map(|&i| {
                nearest_image(ctx, sh, i, &mat_vec(&m, &x[i]), 3.0 * ctx.tol).map(|(j, _)| j as u32)
            })
            .collect::<Option<Vec<u32>>>()?;
        images.push(perm);
    }
    // Σ (|x|² 1 − x xᵀ): rotated by M it is the same sum over the images y = M·x.
    let mut s0 = [[0.0; 3]; 3];
    for &i in &atoms {
        let p = &x[i];
        let p2 = dot(p, p);
        for a in 0..3 {
            for b in 0..3 {
                s0[a][b] += if a == b { p2 } else { 0.0 } - p[a] * p[b];
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
            for (&i, &j) in atoms.iter().zip(perm) {
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
