//! Point-group detection for every molecular point group, any n, with the standard frame.
//!
//! Algorithm (all steps rest on operations verified against the atoms, never on inertia
//! alone):
//!
//! 1. Validate; centre on the centre of mass; build the cell grid (up to
//!    `BRUTE_FORCE_MAX` atoms: only when a lookup needs it); reject overlapping atoms.
//! 2. One atom → K_h, reported through C_M × Ci (M = `linear_n`). Atoms all within tol/2 of one line through the centre (the axis of
//!    least inertia) → C∞v or D∞h, reported through C_Mv / D_Md (M = `linear_n`).
//! 3. Otherwise enumerate the whole group directly. Pick a reference atom `a` (among atoms at
//!    ≥ half the largest radius, the one whose *window* — same species (element and mass,
//!    `structure::Species`: isotopes are different species), radius within 2·tol —
//!    is smallest) and a second atom `b` off the line of `a` (among atoms at ≥ half the largest
//!    distance from that line, the one with the smallest window). Every symmetry operation
//!    maps a → a' in window(a) and b → b' in window(b) with |a'b'| ≈ |ab|, and is fixed by
//!    (a', b') and its handedness: so the candidates are all such pairs, two matrices each.
//!    A candidate is tested on a small probe of atoms with a loose tolerance (3·tol), refitted
//!    by least squares (Kabsch) on the matches, tested on all atoms (a fixed sample of 1024
//!    plus the two windows for structures above 4096 atoms) at `tol`, and refitted again.
//!    Nothing limits n. This plain search runs only when the pruned search (search.rs)
//!    gives up: the same reference-atom idea with a second atom whose distance to a is rare
//!    in its window (|W(a)| · k · 2 candidates), screened on a short probe and accepted
//!    only when the verified group is exactly the screened set (false candidates that keep
//!    failing verification are dropped by the plain search's own test of each candidate);
//!    it starts with an early exit for small structures without symmetry.
//! 4. The operations found must close under multiplication (checked exactly through the
//!    images of a and b); the group is named from its content (orders of the rotations, number
//!    of axes of order ≥ 3, σh, mirrors, inversion) by `naming::name_group`, the namer that
//!    also names any closed set of matrices (`naming::identify_group`).
//! 5. The standard frame follows DEVELOPERS.md "Standard orientation" (tie rules by counting
//!    atoms on axes and planes, then by moments of inertia); the reported operations are the
//!    group's ideal operations in that frame, rotated back to the input frame, so they form a
//!    group exactly. They are verified against the atoms (all of them when
//!    n_atoms·order ≤ `verify_all_limit`, otherwise E and the generators), giving the
//!    permutations and `max_deviation`: the generators by lookup, every other operation
//!    through the permutation composed along its word in the generators, checked atom by
//!    atom (verify.rs; the same permutations as a lookup per atom would give): all those
//!    operations chunk by chunk of atoms, the chunks in parallel for large structures, and
//!    the generators' lookups side by side.
//! 6. If an ideal operation fails verification at some atom (a defect outside the screening
//!    sample), steps 3–5 are repeated with that atom screened first (up to 16 such atoms).
//!    Any other failure while screening on a sample repeats them screening on all atoms; after
//!    that, failures (a structure at the edge of the tolerance) repeat them with the candidate
//!    tolerance scaled by 0.85 and 0.7 before the error is returned.

pub mod canonical;
mod frame;
pub mod naming;
mod search;
mod verify;

use crate::error::{Error, Result};
use crate::lookup::{find_overlap, map_atoms, Grid};
use crate::ops::{dot, fit_orthogonal, mat_mul, mat_vec, norm, transpose, Mat3, PointOp, Vec3};
use crate::structure;
use canonical::{group_data, Family};
use std::collections::HashMap;
use std::sync::OnceLock;

/// Default distance tolerance, Å (DEVELOPERS.md, "Tolerance").
pub const DEFAULT_TOLERANCE: f64 = 0.01;
/// Default M of the finite subgroups C_Mv / D_Md that stand for C∞v / D∞h.
pub const LINEAR_SUBGROUP_N: usize = 13;
/// Default bound on n_atoms × order up to which every operation is verified.
pub const DEFAULT_VERIFY_ALL_LIMIT: usize = 2_000_000;

/// Above this many atoms, candidate operations are screened on a sample of the atoms
/// (the reported generators are still verified on all of them).
const SAMPLE_ABOVE: usize = 4096;
/// At most this many atoms found by failed verifications are screened first on retries.
const MAX_EXTRA: usize = 16;
const SAMPLE_SIZE: usize = 1024;
/// Up to this many atoms, overlaps and the pruned search's lookups are brute force and the
/// cell grid is built only if a lookup needs its exact answer.
const BRUTE_FORCE_MAX: usize = 48;

/// Options of `find_point_group`.
#[derive(Debug, Clone, PartialEq)]
pub struct DetectOptions {
    /// Distance tolerance, Å: an operation holds when every atom has an image of its species
    /// (element and mass) within it.
    pub tol: f64,
    /// Odd M ≥ 3 of the finite subgroup C_Mv / D_Md reported for linear molecules.
    pub linear_n: usize,
    /// Verify (and compute permutations of) every operation when n_atoms·order ≤ this;
    /// otherwise only E and the generators.
    pub verify_all_limit: usize,
}

impl Default for DetectOptions {
    fn default() -> Self {
        DetectOptions {
            tol: DEFAULT_TOLERANCE,
            linear_n: LINEAR_SUBGROUP_N,
            verify_all_limit: DEFAULT_VERIFY_ALL_LIMIT,
        }
    }
}

/// The point group of a structure with its operations, frame and atom permutations.
#[derive(Debug, Clone, PartialEq)]
pub struct Symmetry {
    /// Schoenflies name ("C2v", "D6h", "Ih", "C∞v", "K_h", ...).
    pub point_group: String,
    /// Centre of mass, Å; the operations act on positions − center.
    pub center: [f64; 3],
    /// Rows are the standard x, y, z axes in input coordinates (orthonormal, det +1).
    pub frame: [[f64; 3]; 3],
    /// All operations of the (finite) group, matrices in the input frame; ops[0] is E.
    /// C∞v / D∞h: the operations of C_Mv / D_Md; K_h: of C_M × Ci.
    pub ops: Vec<PointOp>,
    /// Conjugacy classes as indices into `ops` (classes[0] = [0]).
    pub classes: Vec<Vec<usize>>,
    /// Index of each operation among the group's canonical operations
    /// ([`canonical::group_data`]); detection reports them in canonical order, so this is
    /// 0, 1, …, h − 1: the contract, stated once, that no caller has to re-derive.
    pub canonical_index: Vec<usize>,
    /// Conjugacy class of each operation: the smallest operation index in its class.
    pub class_of: Vec<usize>,
    /// Indices of a generating set of `ops` (empty for C1).
    pub generators: Vec<usize>,
    /// Indices of the operations verified against the atoms: E first, then all the others or
    /// (huge structures) the generators.
    pub verified: Vec<usize>,
    /// One permutation per entry of `verified`: atom i → atom perm[i].
    pub permutations: Vec<Vec<u32>>,
    /// Largest image distance of each entry of `verified` (its atoms to their images), Å.
    pub deviations: Vec<f64>,
    /// Largest image distance over the verified operations, Å.
    pub max_deviation: f64,
}

impl Symmetry {
    /// Order of the reported (finite) group.
    pub fn order(&self) -> usize {
        self.ops.len()
    }

    /// Where each generator's permutation is among `permutations` (generators are always
    /// verified): the orbits of the atoms are those of these permutations alone.
    pub fn generator_rows(&self) -> Vec<usize> {
        self.generators
            .iter()
            .filter_map(|g| self.verified.iter().position(|v| v == g))
            .collect()
    }

    /// The smallest deviation among the improper operations detection verified (each
    /// measured as mapping it atom by atom would); `None` when it verified none.
    pub fn best_verified_improper(&self) -> Option<f64> {
        let best = self
            .verified
            .iter()
            .zip(&self.deviations)
            .filter(|(&k, _)| !self.ops[k].proper)
            .map(|(_, &d)| d)
            .fold(f64::INFINITY, f64::min);
        best.is_finite().then_some(best)
    }
}

/// The centred structure and what every stage needs.
struct Ctx<'a> {
    x: Vec<Vec3>,
    /// Distance of each atom from the centre.
    r: Vec<f64>,
    /// Small structures (up to `BRUTE_FORCE_MAX` atoms): atom indices in the order of
    /// (radius, index); empty otherwise.
    by_radius: Vec<u32>,
    /// Species code of each atom (`structure::Species`): what the matching compares.
    species: &'a [i64],
    /// The cell grid, built on first use (small structures may never need it).
    grid: OnceLock<Grid>,
    tol: f64,
    inertia: Mat3,
    /// Principal axes of `inertia` (rows, ascending moments), computed on first use.
    axes: OnceLock<Mat3>,
}

impl Ctx<'_> {
    fn axes(&self) -> &Mat3 {
        self.axes
            .get_or_init(|| structure::principal_axes(&self.inertia).1)
    }

    fn grid(&self) -> Result<&Grid> {
        if let Some(g) = self.grid.get() {
            return Ok(g);
        }
        let g = Grid::build(&self.x, self.species, self.tol)?;
        Ok(self.grid.get_or_init(|| g))
    }

    /// True when lookups are brute force (a small structure whose grid is not built).
    fn brute(&self) -> bool {
        self.x.len() <= BRUTE_FORCE_MAX && self.grid.get().is_none()
    }

    /// Nearest atom of `element` within `radius` of `q`: (index, distance). The grid's
    /// answer, or brute force for small structures (any nearest atom will do: the pruned
    /// search only screens with it).
    fn nearest(&self, q: &Vec3, element: i64, radius: f64) -> Option<(usize, f64)> {
        if !self.brute() {
            return self.grid().ok()?.query_within(q, element, radius);
        }
        // An atom within tol/2 is the nearest: no two atoms lie within tol of each other.
        let sure = 0.25 * self.tol * self.tol;
        let mut best = (usize::MAX, radius * radius);
        for (j, p) in self.x.iter().enumerate() {
            if self.species[j] == element {
                let d = [p[0] - q[0], p[1] - q[1], p[2] - q[2]];
                let d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
                if d2 <= best.1 {
                    best = (j, d2);
                    if d2 <= sure {
                        break;
                    }
                }
            }
        }
        (best.0 != usize::MAX).then(|| (best.0, best.1.sqrt()))
    }

    /// Small structures: the nearest atom of the same element to every image under `m`, by
    /// brute force (a candidate permutation for verify.rs to check); `None` otherwise.
    fn brute_map(&self, m: &Mat3) -> Option<Vec<u32>> {
        if !self.brute() {
            return None;
        }
        let mut perm = Vec::with_capacity(self.x.len());
        for (i, p) in self.x.iter().enumerate() {
            let (j, _) = self.nearest(&mat_vec(m, p), self.species[i], f64::INFINITY)?;
            perm.push(j as u32);
        }
        Some(perm)
    }

    fn count_on_axis(&self, u: &Vec3) -> usize {
        self.x
            .iter()
            .filter(|p| {
                let t = dot(p, u);
                norm(&[p[0] - t * u[0], p[1] - t * u[1], p[2] - t * u[2]]) <= self.tol
            })
            .count()
    }

    fn count_in_plane(&self, normal: &Vec3) -> usize {
        self.x
            .iter()
            .filter(|p| dot(p, normal).abs() <= self.tol)
            .count()
    }

    fn moment(&self, u: &Vec3) -> f64 {
        dot(u, &mat_vec(&self.inertia, u))
    }
}

/// Find the point group of a structure (positions in Å, atomic numbers), every atom with
/// the standard atomic weight of its element.
///
/// # Errors
/// As [`find_point_group_with_masses`].
pub fn find_point_group(
    positions: &[[f64; 3]],
    numbers: &[i64],
    opts: &DetectOptions,
) -> Result<Symmetry> {
    find_point_group_with_masses(positions, numbers, None, opts)
}

/// Find the point group of a structure (positions in Å, atomic numbers, optional masses in
/// u, `None` = standard atomic weights).
///
/// Atoms are matched by species ([`structure::Species`]): an operation maps every atom onto
/// an atom of the same element *and mass*, so isotopes never map onto each other. The
/// masses also weigh the centre of mass and the inertia tensor (the tie rules of the
/// standard frame).
///
/// # Errors
/// Everything `structure::validate` reports; `BadMass` / `InvalidArgument` for masses that
/// are not one positive number per atom; `BadTolerance`; `InvalidArgument` for an even or
/// too small `linear_n`; `OverlappingAtoms` for two atoms within `tol`; `GroupClosure` or
/// `NotASymmetry` when the structure sits at the edge of the tolerance so that no consistent
/// group can be reported.
pub fn find_point_group_with_masses(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    opts: &DetectOptions,
) -> Result<Symmetry> {
    find_point_group_searching(positions, numbers, masses, opts, Search::PrunedThenPlain)
}

/// Which searches detection runs for structures that are neither atoms nor linear.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Search {
    /// The pruned search, then the plain one if it gives up: what [`find_point_group`] does.
    PrunedThenPlain,
    /// The plain search alone (the reference the pruned search is tested against).
    Plain,
    /// The pruned search alone; `GroupClosure` where it gives up (for tests).
    Pruned,
}

/// [`find_point_group_with_masses`] with a choice of search (for tests and diagnosis: the
/// pruned search is checked against the plain one through it).
///
/// # Errors
/// As [`find_point_group_with_masses`]; with [`Search::Pruned`], also `GroupClosure` where
/// the pruned search gives up.
pub fn find_point_group_searching(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    opts: &DetectOptions,
    search: Search,
) -> Result<Symmetry> {
    structure::validate(positions, numbers)?;
    let tol = opts.tol;
    if !(tol.is_finite() && tol > 0.0) {
        return Err(Error::BadTolerance { value: tol });
    }
    if opts.linear_n < 3 || opts.linear_n.is_multiple_of(2) {
        return Err(Error::InvalidArgument {
            name: "linear_n".into(),
            reason: format!("must be odd and at least 3, got {}", opts.linear_n),
        });
    }
    let species = structure::Species::new(numbers, masses)?;
    let Centred {
        center,
        x,
        inertia,
        far,
    } = centred(positions, &species.masses);
    let r: Vec<f64> = x.iter().map(norm).collect();
    let (grid, overlap, by_radius) = if x.len() <= BRUTE_FORCE_MAX {
        let (overlap, by_radius) = brute_overlap(&x, &r, tol);
        (OnceLock::new(), overlap, by_radius)
    } else {
        let g = Grid::build(&x, &species.codes, tol)?;
        let overlap = find_overlap(&g);
        (OnceLock::from(g), overlap, Vec::new())
    };
    if let Some((first, second, distance)) = overlap {
        return Err(Error::OverlappingAtoms {
            first,
            second,
            distance,
            tolerance: tol,
        });
    }
    if positions.len() == 1 {
        return single_atom(center, opts);
    }
    let ctx = Ctx {
        x,
        r,
        by_radius,
        species: &species.codes,
        grid,
        tol,
        inertia,
        axes: OnceLock::new(),
    };
    let off_line = |line: &Vec3, p: &Vec3| {
        let t = dot(p, line);
        norm(&[p[0] - t * line[0], p[1] - t * line[1], p[2] - t * line[2]])
    };
    // Atoms within tol/2 of the axis of least inertia are within tol of the line through
    // the farthest atom (which is within tol/2 of that axis): when some atom is not, the
    // structure is not linear and the axes are not needed yet.
    let maybe_linear = Some(ctx.x[far])
        .and_then(|p| crate::ops::normalize(&p))
        .is_none_or(|u| ctx.x.iter().all(|p| off_line(&u, p) <= tol * (1.0 + 1e-9)));
    if maybe_linear
        && ctx
            .x
            .iter()
            .all(|p| off_line(&ctx.axes()[0], p) <= 0.5 * tol)
    {
        let line = ctx.axes()[0];
        let m = opts.linear_n;
        for fam in [Family::Dinfh(m), Family::Cinfv(m)] {
            let fr = frame::axial_frame(&line, None);
            if let Ok(sym) = finish(&ctx, fam, fr, center, opts) {
                return Ok(sym);
            }
        }
    }
    if search == Search::Plain {
        return plain_search(&ctx, center, opts);
    }
    if let Some(sym) = search::pruned(&ctx, center, opts) {
        return Ok(sym);
    }
    if search == Search::Pruned {
        return Err(Error::GroupClosure {
            reason: "the pruned search gave up".into(),
        });
    }
    plain_search(&ctx, center, opts)
}

/// The structure centred on its centre of mass, with what the first stages need of it.
struct Centred {
    center: Vec3,
    /// positions − center.
    x: Vec<Vec3>,
    /// Inertia tensor about the centre (as `structure::weighted_inertia`).
    inertia: Mat3,
    /// The atom farthest from the centre (the last of equals).
    far: usize,
}

/// Centre of mass, centred positions, inertia tensor and farthest atom in two passes over
/// the atoms, chunk by chunk (in parallel for large structures; the sums are taken per
/// fixed chunk and added in chunk order, so the result does not depend on the threads).
fn centred(positions: &[[f64; 3]], masses: &[f64]) -> Centred {
    let n = positions.len();
    let sums = crate::parallel::map_chunks(n, crate::lookup::PARALLEL_MIN_ATOMS, |range| {
        let mut total = 0.0;
        let mut c = [0.0; 3];
        for (p, &w) in positions[range.clone()].iter().zip(&masses[range]) {
            total += w;
            for k in 0..3 {
                c[k] += w * p[k];
            }
        }
        (total, c)
    });
    let (mut total, mut c) = (0.0, [0.0; 3]);
    for (t, s) in sums {
        total += t;
        for k in 0..3 {
            c[k] += s[k];
        }
    }
    let center = [c[0] / total, c[1] / total, c[2] / total];
    let mut x = vec![[0.0; 3]; n];
    let parts =
        crate::parallel::map_chunks_mut(&mut x, crate::lookup::PARALLEL_MIN_ATOMS, |start, out| {
            let mut t = [[0.0; 3]; 3];
            let mut far = (0usize, f64::NEG_INFINITY);
            for (k, r) in out.iter_mut().enumerate() {
                let i = start + k;
                let p = &positions[i];
                let w = masses[i];
                *r = [p[0] - center[0], p[1] - center[1], p[2] - center[2]];
                let r2 = r[0] * r[0] + r[1] * r[1] + r[2] * r[2];
                for a in 0..3 {
                    for b in 0..3 {
                        let d = if a == b { r2 } else { 0.0 };
                        t[a][b] += w * (d - r[a] * r[b]);
                    }
                }
                if r2 >= far.1 {
                    far = (i, r2);
                }
            }
            (t, far)
        });
    let mut inertia = [[0.0; 3]; 3];
    let mut far = (0usize, f64::NEG_INFINITY);
    for (t, f) in parts {
        for a in 0..3 {
            for b in 0..3 {
                inertia[a][b] += t[a][b];
            }
        }
        if f.1 >= far.1 {
            far = f;
        }
    }
    Centred {
        center,
        x,
        inertia,
        far: far.0,
    }
}

/// The plain search with its retries (module doc, steps 3–6).
fn plain_search(ctx: &Ctx, center: Vec3, opts: &DetectOptions) -> Result<Symmetry> {
    let positions = &ctx.x;
    let mut last = Error::GroupClosure {
        reason: "no candidate operations".into(),
    };
    // Atoms that an ideal operation failed to map: screened first on the next attempt, so
    // that a defect outside the screening sample cannot make the group look larger.
    // Any other failure while screening on a sample switches to screening on all atoms
    // (a defect outside the sample can also break closure); then the candidate tolerance
    // shrinks.
    let mut extra: Vec<usize> = Vec::new();
    let mut sampled = positions.len() > SAMPLE_ABOVE;
    let factors = [1.0, 0.85, 0.7];
    let mut f = 0;
    while f < factors.len() {
        match detect_general(ctx, factors[f], &extra, sampled, center, opts) {
            Ok(sym) => return Ok(sym),
            Err(Error::NotASymmetry { atom, distance })
                if extra.len() < MAX_EXTRA && !extra.contains(&atom) =>
            {
                extra.push(atom);
                last = Error::NotASymmetry { atom, distance };
            }
            Err(e) => {
                last = e;
                if sampled {
                    sampled = false;
                } else {
                    f += 1;
                }
            }
        }
    }
    Err(last)
}

/// Permutation and largest image distance of every given operation (matrices acting on
/// `positions - center`), for operations that detection did not verify itself (huge
/// structures verify only the generators; the rest are mapped on demand).
///
/// Atoms are matched by species (element and mass, `masses` as for
/// [`find_point_group_with_masses`]).
///
/// # Errors
/// `structure::validate`'s errors, bad masses, `BadTolerance`, and `NotASymmetry` /
/// `AmbiguousImage` when an operation does not map the atoms onto themselves within `tol`.
pub fn map_operations(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    center: [f64; 3],
    ops: &[Mat3],
    tol: f64,
) -> Result<(Vec<Vec<u32>>, Vec<f64>)> {
    structure::validate(positions, numbers)?;
    let species = structure::Species::new(numbers, masses)?;
    if !(tol.is_finite() && tol > 0.0) {
        return Err(Error::BadTolerance { value: tol });
    }
    let x: Vec<Vec3> = positions
        .iter()
        .map(|p| [p[0] - center[0], p[1] - center[1], p[2] - center[2]])
        .collect();
    let grid = Grid::build(&x, &species.codes, tol)?;
    let mut perms = Vec::with_capacity(ops.len());
    let mut devs = Vec::with_capacity(ops.len());
    for m in ops {
        let (perm, dev) = map_atoms(&grid, &x, &species.codes, m, tol)?;
        perms.push(perm);
        devs.push(dev);
    }
    Ok((perms, devs))
}

/// One atom: K_h through its sampling C_M × Ci (M = `linear_n`), in the input frame (every
/// frame is standard). The atom is the centre of mass, so every operation maps it onto itself
/// at distance 0: verification has nothing to measure.
fn single_atom(center: Vec3, opts: &DetectOptions) -> Result<Symmetry> {
    let data = group_data(Family::Kh(opts.linear_n))?;
    let h = data.ops.len();
    let verified: Vec<usize> = if h <= opts.verify_all_limit {
        (0..h).collect()
    } else {
        std::iter::once(0)
            .chain(data.generators.iter().copied())
            .collect()
    };
    Ok(Symmetry {
        point_group: data.family.name(),
        center,
        frame: crate::ops::IDENTITY,
        ops: data.ops.iter().map(|m| PointOp::from_matrix(*m)).collect(),
        classes: classes_from(&data.class_of),
        canonical_index: (0..h).collect(),
        class_of: data.class_of.clone(),
        generators: data.generators.clone(),
        permutations: vec![vec![0]; verified.len()],
        deviations: vec![0.0; verified.len()],
        verified,
        max_deviation: 0.0,
    })
}

/// A candidate operation that passed the atoms: its fitted matrix and the images of the
/// reference atoms a and b (which identify it within the group).
struct RawOp {
    m: Mat3,
    proper: bool,
    ia: usize,
    ib: usize,
    op: PointOp,
    order: usize,
}

fn detect_general(
    ctx: &Ctx,
    factor: f64,
    extra: &[usize],
    sampled: bool,
    center: Vec3,
    opts: &DetectOptions,
) -> Result<Symmetry> {
    let (raw, a, b) = enumerate(ctx, factor * ctx.tol, extra, sampled)?;
    let raw = close_and_order(ctx, raw, a, b)?;
    let elems: Vec<naming::Element> = raw
        .iter()
        .map(|o| naming::Element {
            op: o.op,
            order: o.order,
        })
        .collect();
    let fam = naming::name_group(&elems)?;
    let fr = frame::standard_frame(ctx, fam, &raw)?;
    finish(ctx, fam, fr, center, opts)
}

/// Ideal operations of `fam` in frame `fr`, classes, verification.
fn finish(
    ctx: &Ctx,
    fam: Family,
    fr: Mat3,
    center: Vec3,
    opts: &DetectOptions,
) -> Result<Symmetry> {
    let data = group_data(fam)?;
    let generators = data.generators.clone();
    let frt = transpose(&fr);
    let ops: Vec<PointOp> = data
        .ops
        .iter()
        .map(|r| PointOp::from_matrix(mat_mul(&frt, &mat_mul(r, &fr))))
        .collect();
    let classes = classes_from(&data.class_of);
    let n = ctx.x.len();
    let all = n.saturating_mul(ops.len()) <= opts.verify_all_limit;
    let verify::Verified {
        verified,
        permutations,
        deviations,
        max_deviation,
    } = if ops.len() == 1 {
        // C1: E maps every atom onto itself at distance 0.
        verify::Verified {
            verified: vec![0],
            permutations: vec![(0..n as u32).collect()],
            deviations: vec![0.0],
            max_deviation: 0.0,
        }
    } else {
        verify::verify(ctx, &ops, &data, all)?
    };
    Ok(Symmetry {
        point_group: fam.name(),
        center,
        frame: fr,
        ops,
        classes,
        canonical_index: (0..data.ops.len()).collect(),
        class_of: data.class_of.clone(),
        generators,
        verified,
        permutations,
        deviations,
        max_deviation,
    })
}

/// Conjugacy classes as member lists (ascending) from the class of each operation.
fn classes_from(class_of: &[usize]) -> Vec<Vec<usize>> {
    let mut classes: Vec<Vec<usize>> = Vec::new();
    let mut slot = vec![usize::MAX; class_of.len()];
    for (k, &c) in class_of.iter().enumerate() {
        if slot[c] == usize::MAX {
            slot[c] = classes.len();
            classes.push(Vec::new());
        }
        classes[slot[c]].push(k);
    }
    classes
}

/// Radius window of every atom: indices sorted by (species, radius) and, per atom, the
/// sorted range of same-species atoms whose radius is within `w`.
struct Windows {
    order: Vec<u32>,
    range: Vec<(u32, u32)>,
}

fn windows(ctx: &Ctx, r: &[f64], w: f64) -> Windows {
    let n = r.len();
    // One integer key per atom, (species, radius, index): radii are ≥ 0, so their bits sort
    // as the numbers do, and species codes are below 2^32 (element + 1000 × isotope rank).
    let mut keys: Vec<u128> = (0..n)
        .map(|i| {
            (u128::from(ctx.species[i] as u32) << 96)
                | (u128::from(r[i].to_bits()) << 32)
                | i as u128
        })
        .collect();
    keys.sort_unstable();
    let order: Vec<u32> = keys.iter().map(|&k| k as u32).collect();
    let mut range = vec![(0u32, 0u32); n];
    let (mut lo, mut hi) = (0usize, 0usize);
    for s in 0..n {
        let i = order[s] as usize;
        let (z, ri) = (ctx.species[i], r[i]);
        while lo < s {
            let j = order[lo] as usize;
            if ctx.species[j] != z || r[j] < ri - w {
                lo += 1;
            } else {
                break;
            }
        }
        hi = hi.max(s);
        while hi + 1 < n {
            let j = order[hi + 1] as usize;
            if ctx.species[j] == z && r[j] <= ri + w {
                hi += 1;
            } else {
                break;
            }
        }
        range[i] = (lo as u32, hi as u32 + 1);
    }
    Windows { order, range }
}

/// Up to `k` evenly spread members of a slice.
fn spread(items: &[u32], k: usize) -> impl Iterator<Item = usize> + '_ {
    let step = items.len().div_ceil(k.max(1)).max(1);
    items.iter().step_by(step).map(|&i| i as usize)
}

/// Distance of every atom from the line through the centre and atom `a` (at radius
/// `r_a > 0`), with the largest of them: where the second reference atom is chosen.
fn line_distances(x: &[Vec3], a: usize, r_a: f64) -> (Vec<f64>, f64) {
    let ua = [x[a][0] / r_a, x[a][1] / r_a, x[a][2] / r_a];
    let perp: Vec<f64> = x
        .iter()
        .map(|p| {
            let t = dot(p, &ua);
            norm(&[p[0] - t * ua[0], p[1] - t * ua[1], p[2] - t * ua[2]])
        })
        .collect();
    let d_max = perp.iter().copied().fold(0.0, f64::max);
    (perp, d_max)
}

/// Orthonormal frame (rows) from two non-collinear vectors: e1 ∥ p, e2 in the (p, q) plane.
fn pair_frame(p: &Vec3, q: &Vec3) -> Option<Mat3> {
    let e1 = crate::ops::normalize(p)?;
    let t = dot(q, &e1);
    let e2 = crate::ops::normalize(&[q[0] - t * e1[0], q[1] - t * e1[1], q[2] - t * e1[2]])?;
    Some([e1, e2, crate::ops::cross(&e1, &e2)])
}

/// The plain search's reference atoms a and b (module doc, step 3), the windows they were
/// chosen by, and its probe: a, b, `extra`, then atoms spread over both windows and over
/// all atoms.
struct PlainRef {
    win: Windows,
    a: usize,
    b: usize,
    probe: Vec<usize>,
}

fn plain_reference(ctx: &Ctx, extra: &[usize]) -> Result<PlainRef> {
    let n = ctx.x.len();
    let r = &ctx.r;
    let r_max = r.iter().copied().fold(0.0, f64::max);
    let win = windows(ctx, r, 2.0 * ctx.tol);
    let size = |i: usize| win.range[i].1 - win.range[i].0;
    let pick = |score: &dyn Fn(usize) -> f64, min_score: f64| -> Option<usize> {
        (0..n)
            .filter(|&i| score(i) >= min_score && score(i) > 0.0)
            .min_by(|&i, &j| {
                size(i)
                    .cmp(&size(j))
                    .then(score(j).total_cmp(&score(i)))
                    .then(i.cmp(&j))
            })
    };
    let no_ops = || Error::GroupClosure {
        reason: "the structure has no atom off the centre".into(),
    };
    let a = pick(&|i| r[i], 0.5 * r_max).ok_or_else(no_ops)?;
    let (perp, d_max) = line_distances(&ctx.x, a, r[a]);
    let b = pick(&|i| perp[i], 0.5 * d_max).ok_or_else(no_ops)?;
    let wa = &win.order[win.range[a].0 as usize..win.range[a].1 as usize];
    let wb = &win.order[win.range[b].0 as usize..win.range[b].1 as usize];
    let mut probe: Vec<usize> = vec![a, b];
    probe.extend(extra.iter().copied().filter(|&i| i < n));
    probe.extend(spread(wa, 16));
    probe.extend(spread(wb, 16));
    let all: Vec<u32> = (0..n as u32).collect();
    probe.extend(spread(&all, 32));
    dedup_keep_order(&mut probe);
    Ok(PlainRef { win, a, b, probe })
}

/// All operations of the structure found through the reference atoms (see the module doc),
/// with the indices of a and b.
fn enumerate(
    ctx: &Ctx,
    tol_raw: f64,
    extra: &[usize],
    sampled: bool,
) -> Result<(Vec<RawOp>, usize, usize)> {
    let n = ctx.x.len();
    let tol = ctx.tol;
    let PlainRef { win, a, b, probe } = plain_reference(ctx, extra)?;
    let wa = &win.order[win.range[a].0 as usize..win.range[a].1 as usize];
    let wb = &win.order[win.range[b].0 as usize..win.range[b].1 as usize];
    let grid = ctx.grid()?;
    let no_ops = || Error::GroupClosure {
        reason: "the structure has no atom off the centre".into(),
    };
    let ref_frame = pair_frame(&ctx.x[a], &ctx.x[b]).ok_or_else(no_ops)?;
    let d_ab = norm(&sub(&ctx.x[a], &ctx.x[b]));
    let all: Vec<u32> = (0..n as u32).collect();
    let accept: Vec<usize> = if !sampled {
        let mut v = vec![a, b];
        v.extend(extra.iter().copied().filter(|&i| i < n));
        v.extend(0..n);
        v
    } else {
        let mut v = probe.clone();
        v.extend(spread(wa, 256));
        v.extend(spread(wb, 256));
        v.extend(spread(&all, SAMPLE_SIZE));
        v
    };
    let mut accept = accept;
    dedup_keep_order(&mut accept);
    if accept.len() < n {
        // Visit the sample in cell order: successive images then fall in nearby cells.
        let mut chosen = vec![false; n];
        for &i in &accept {
            chosen[i] = true;
        }
        let front: Vec<usize> = [a, b]
            .into_iter()
            .chain(extra.iter().copied().filter(|&i| i < n))
            .collect();
        for &i in &front {
            chosen[i] = false;
        }
        let rest = grid
            .atoms_in_cell_order()
            .iter()
            .map(|&i| i as usize)
            .filter(|&i| chosen[i]);
        accept = front.into_iter().chain(rest).collect();
    }

    let mut found: Vec<RawOp> = Vec::new();
    let mut seen: HashMap<(usize, usize, bool), usize> = HashMap::new();
    for &ap in wa {
        let ap = ap as usize;
        for &bp in wb {
            let bp = bp as usize;
            if ap == bp {
                continue;
            }
            let d = norm(&sub(&ctx.x[ap], &ctx.x[bp]));
            if (d - d_ab).abs() > 2.5 * tol {
                continue;
            }
            let Some(img_frame) = pair_frame(&ctx.x[ap], &ctx.x[bp]) else {
                continue;
            };
            for proper in [true, false] {
                let mut f = img_frame;
                if !proper {
                    f[2] = [-f[2][0], -f[2][1], -f[2][2]];
                }
                let r0 = mat_mul(&transpose(&f), &ref_frame);
                if let Some(op) =
                    test_candidate(ctx, grid, &r0, proper, &probe, &accept, tol_raw, a, b)
                {
                    if let std::collections::hash_map::Entry::Vacant(e) =
                        seen.entry((op.ia, op.ib, op.proper))
                    {
                        e.insert(found.len());
                        found.push(op);
                    }
                }
            }
        }
    }
    Ok((found, a, b))
}

/// The first pair (i < j, in (i, j) order) of atoms within `tol` of each other, without a
/// grid: the answer of `find_overlap` for small structures. Two such atoms lie within `tol`
/// of each other's distance from the centre (`r`), so only neighbours in the order of that
/// distance are compared. Also returns that order (radius, then index).
fn brute_overlap(x: &[Vec3], r: &[f64], tol: f64) -> (Option<(usize, usize, f64)>, Vec<u32>) {
    let t2 = tol * tol;
    // Distances from the centre are ≥ 0: their bits sort as the numbers do.
    let mut keys: Vec<u128> = r
        .iter()
        .enumerate()
        .map(|(i, ri)| (u128::from(ri.to_bits()) << 64) | i as u128)
        .collect();
    keys.sort_unstable();
    let radius = |k: u128| f64::from_bits((k >> 64) as u64);
    let mut first: Option<(usize, usize, f64)> = None;
    for (s, &ks) in keys.iter().enumerate() {
        for &kt in &keys[s + 1..] {
            // (with a margin for the rounding of the two distances)
            if radius(kt) - radius(ks) > tol * (1.0 + 1e-9) + 1e-12 * radius(kt) {
                break;
            }
            let (i, j) = (
                (ks as u64).min(kt as u64) as usize,
                (ks as u64).max(kt as u64) as usize,
            );
            let (p, q) = (&x[i], &x[j]);
            let d = [q[0] - p[0], q[1] - p[1], q[2] - p[2]];
            let d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
            if d2 <= t2 && first.is_none_or(|(a, b, _)| (i, j) < (a, b)) {
                first = Some((i, j, d2.sqrt()));
            }
        }
    }
    (first, keys.iter().map(|&k| k as u32).collect())
}

fn sub(p: &Vec3, q: &Vec3) -> Vec3 {
    [p[0] - q[0], p[1] - q[1], p[2] - q[2]]
}

fn dedup_keep_order(v: &mut Vec<usize>) {
    let mut seen = std::collections::HashSet::new();
    v.retain(|i| seen.insert(*i));
}

fn add_outer(h: &mut Mat3, p: &Vec3, q: &Vec3) {
    for i in 0..3 {
        for j in 0..3 {
            h[i][j] += p[i] * q[j];
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn test_candidate(
    ctx: &Ctx,
    grid: &Grid,
    r0: &Mat3,
    proper: bool,
    probe: &[usize],
    accept: &[usize],
    tol_raw: f64,
    a: usize,
    b: usize,
) -> Option<RawOp> {
    let mut h = [[0.0; 3]; 3];
    for &i in probe {
        let q = mat_vec(r0, &ctx.x[i]);
        let (j, _) = grid.query_within(&q, ctx.species[i], 3.0 * ctx.tol)?;
        add_outer(&mut h, &ctx.x[i], &ctx.x[j]);
    }
    let r1 = fit_orthogonal(&h, proper);
    let mut h = [[0.0; 3]; 3];
    let (mut ia, mut ib) = (usize::MAX, usize::MAX);
    for &i in accept {
        let q = mat_vec(&r1, &ctx.x[i]);
        let (j, _) = grid.query_within(&q, ctx.species[i], tol_raw)?;
        add_outer(&mut h, &ctx.x[i], &ctx.x[j]);
        if i == a {
            ia = j;
        }
        if i == b {
            ib = j;
        }
    }
    let m = fit_orthogonal(&h, proper);
    Some(RawOp {
        m,
        proper,
        ia,
        ib,
        op: PointOp::from_matrix(m),
        order: 0,
    })
}

/// Check that the raw operations close (g·h found among them, through the images of a and
/// b) and compute each one's order.
///
/// At the edge of the tolerance some products of verified operations can miss it (the
/// deviations of two operations add up). Then the operations are cut down to a maximal
/// subgroup whose products are all verified: the identity, then every operation (in the
/// order found) whose closure with those already kept stays among the verified ones. The
/// structure is reported in that subgroup rather than in no group at all.
fn close_and_order(ctx: &Ctx, raw: Vec<RawOp>, a: usize, b: usize) -> Result<Vec<RawOp>> {
    let h = raw.len();
    let grid = ctx.grid()?;
    let key: HashMap<(usize, usize, bool), usize> = raw
        .iter()
        .enumerate()
        .map(|(k, o)| ((o.ia, o.ib, o.proper), k))
        .collect();
    let image = |g: &RawOp, atom: usize| -> Option<usize> {
        let q = mat_vec(&g.m, &ctx.x[atom]);
        grid.query_within(&q, ctx.species[atom], 2.0 * ctx.tol)
            .map(|t| t.0)
    };
    let fail = |what: String| Error::GroupClosure {
        reason: format!(
            "{what} among the {h} operations found at tolerance {} Å; try another tolerance",
            ctx.tol
        ),
    };
    let mut table: Vec<Option<u32>> = vec![None; h * h];
    let mut complete = true;
    for g in 0..h {
        for f in 0..h {
            let ia = image(&raw[g], raw[f].ia);
            let ib = image(&raw[g], raw[f].ib);
            let k = match (ia, ib) {
                (Some(ia), Some(ib)) => key.get(&(ia, ib, raw[g].proper == raw[f].proper)),
                _ => None,
            };
            table[g * h + f] = k.map(|&k| k as u32);
            complete &= k.is_some();
        }
    }
    let identity = key
        .get(&(a, b, true))
        .copied()
        .ok_or_else(|| fail("the identity is not".into()))?;
    let keep: Vec<usize> = if complete {
        (0..h).collect()
    } else {
        maximal_closed_subset(&table, h, identity)
    };
    let mut index = vec![usize::MAX; h];
    for (new, &old) in keep.iter().enumerate() {
        index[old] = new;
    }
    let mut orders = vec![0usize; h];
    for &g in &keep {
        let mut p = g;
        for k in 1..=keep.len() {
            if p == identity {
                orders[g] = k;
                break;
            }
            p = match table[g * h + p] {
                Some(q) => q as usize,
                None => break,
            };
        }
        if orders[g] == 0 {
            return Err(fail(format!("operation {g} has no finite order")));
        }
    }
    let mut out = Vec::with_capacity(keep.len());
    for (k, mut op) in raw.into_iter().enumerate() {
        if index[k] != usize::MAX {
            op.order = orders[k];
            out.push(op);
        }
    }
    Ok(out)
}

/// Indices of a maximal subset containing `identity` that is closed under the (partial)
/// multiplication `table` (h × h, None where the product was not verified).
fn maximal_closed_subset(table: &[Option<u32>], h: usize, identity: usize) -> Vec<usize> {
    let mut member = vec![false; h];
    member[identity] = true;
    for g in 0..h {
        if member[g] {
            continue;
        }
        // closure of the current members plus g, by breadth-first products
        let mut trial = member.clone();
        trial[g] = true;
        let mut queue: Vec<usize> = (0..h).filter(|&k| trial[k]).collect();
        let mut ok = true;
        'grow: while let Some(x) = queue.pop() {
            for y in 0..h {
                if !trial[y] {
                    continue;
                }
                for (p, q) in [(x, y), (y, x)] {
                    match table[p * h + q] {
                        Some(z) => {
                            let z = z as usize;
                            if !trial[z] {
                                trial[z] = true;
                                queue.push(z);
                            }
                        }
                        None => {
                            ok = false;
                            break 'grow;
                        }
                    }
                }
            }
        }
        if ok {
            member = trial;
        }
    }
    (0..h).filter(|&k| member[k]).collect()
}

fn parallel(u: &Vec3, v: &Vec3) -> bool {
    dot(u, v).abs() > 0.99
}

#[cfg(test)]
mod tests;
