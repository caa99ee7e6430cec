//! Tolerant nearest-atom lookup on a uniform cell grid: the hot kernel of detection and
//! counting.
//!
//! The atoms are bucketed into cubic cells (counting sort, O(N)); each cell's atoms are stored
//! contiguously (positions, atomic numbers, input indices), so a query scans only the cells
//! that the ball of radius `tol` around the point touches — one cell for most points, since
//! the cell edge is chosen near the atomic spacing and far above `tol`. The cell table is a
//! dense array when the bounding box holds few enough cells (≤ 4N + 1024), otherwise an
//! open-addressing hash of the occupied cells, so memory stays linear in N for shells, tubes
//! and sparse clusters alike.
//!
//! The cell edge starts at L/∛N (L the largest extent of the bounding box) and shrinks while
//! occupied cells hold more than 2.5 atoms on average, never below 2·tol (nor below
//! L/2²⁰, which keeps cell keys in 64 bits).

use crate::error::{Error, Result};
use crate::ops::{mat_vec, Mat3, Vec3};
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Above this many atoms `map_atoms` and `find_overlap` run in parallel (current rayon pool;
/// callers choose the thread count with `ThreadPool::install`). Results do not depend on it.
pub const PARALLEL_MIN_ATOMS: usize = 50_000;

const CHUNK: usize = 4096;
const EMPTY: u64 = u64::MAX;

#[derive(Clone, Copy)]
struct Slot {
    key: u64,
    start: u32,
    count: u32,
}

enum Cells {
    Dense { starts: Vec<u32> },
    Hash { mask: usize, slots: Vec<Slot> },
}

/// A cell grid over a set of atoms (positions in Å, atomic numbers), built for a tolerance.
pub struct Grid {
    tol: f64,
    inv_cell: f64,
    cell: f64,
    origin: Vec3,
    dims: [i64; 3],
    cells: Cells,
    pos: Vec<Vec3>,
    num: Vec<i64>,
    idx: Vec<u32>,
}

#[inline]
fn hash(key: u64, mask: usize) -> usize {
    (key.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 20) as usize & mask
}

fn check_tol(tol: f64) -> Result<()> {
    if tol.is_finite() && tol > 0.0 {
        Ok(())
    } else {
        Err(Error::BadTolerance { value: tol })
    }
}

/// Hash table of cell key → atom count, capacity a power of two ≥ 2·N.
fn count_cells(keys: &[u64]) -> (usize, Vec<Slot>) {
    let cap = (2 * keys.len().max(8)).next_power_of_two();
    let mask = cap - 1;
    let mut slots = vec![
        Slot {
            key: EMPTY,
            start: 0,
            count: 0
        };
        cap
    ];
    for &k in keys {
        let mut h = hash(k, mask);
        loop {
            let s = &mut slots[h];
            if s.key == k {
                s.count += 1;
                break;
            }
            if s.key == EMPTY {
                s.key = k;
                s.count = 1;
                break;
            }
            h = (h + 1) & mask;
        }
    }
    (mask, slots)
}

fn find_slot(slots: &[Slot], mask: usize, key: u64) -> Option<usize> {
    let mut h = hash(key, mask);
    loop {
        let s = slots.get(h)?;
        if s.key == key {
            return Some(h);
        }
        if s.key == EMPTY {
            return None;
        }
        h = (h + 1) & mask;
    }
}

impl Grid {
    /// Build the grid over `positions` (Å) and `numbers`, for lookups within `tol` Å.
    ///
    /// # Errors
    /// `LengthMismatch`, `BadTolerance`, `NonFiniteCoordinate`, and `InvalidArgument` for more
    /// than 2³² − 2 atoms. An empty structure gives an empty grid.
    pub fn build(positions: &[[f64; 3]], numbers: &[i64], tol: f64) -> Result<Grid> {
        if positions.len() != numbers.len() {
            return Err(Error::LengthMismatch {
                n_positions: positions.len(),
                n_numbers: numbers.len(),
            });
        }
        check_tol(tol)?;
        let n = positions.len();
        if n >= u32::MAX as usize {
            return Err(Error::InvalidArgument {
                name: "positions".into(),
                reason: format!("{n} atoms is more than the lookup supports (2^32 - 2)"),
            });
        }
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        for (atom, p) in positions.iter().enumerate() {
            for k in 0..3 {
                if !p[k].is_finite() {
                    return Err(Error::NonFiniteCoordinate { atom });
                }
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
        if n == 0 {
            lo = [0.0; 3];
            hi = [0.0; 3];
        }
        let extent = (0..3).map(|k| hi[k] - lo[k]).fold(0.0_f64, f64::max);
        let floor = (2.0 * tol).max(extent / (1u64 << 20) as f64);
        let mut cell = if extent > 0.0 {
            (extent / (n.max(1) as f64).cbrt()).max(floor)
        } else {
            floor.max(1.0)
        };
        let origin = lo;
        let mut keys = vec![0u64; n];
        let mut dims;
        let mut counted;
        let mut rounds = 0;
        loop {
            let inv = 1.0 / cell;
            dims = [0i64; 3];
            for k in 0..3 {
                dims[k] = ((hi[k] - lo[k]) * inv) as i64 + 1;
            }
            for (key, p) in keys.iter_mut().zip(positions) {
                *key = cell_key(p, &origin, inv, &dims);
            }
            counted = count_cells(&keys);
            let occupied = counted.1.iter().filter(|s| s.key != EMPTY).count().max(1);
            let load = n as f64 / occupied as f64;
            rounds += 1;
            if load <= 2.5 || cell <= floor * 1.000_001 || rounds >= 8 {
                break;
            }
            cell = (cell / load.sqrt()).max(floor);
        }
        let n_cells = dims.iter().map(|&d| d as f64).product::<f64>();
        let mut pos = vec![[0.0; 3]; n];
        let mut num = vec![0i64; n];
        let mut idx = vec![0u32; n];
        let cells = if n_cells <= (4 * n + 1024) as f64 {
            let nc = n_cells as usize;
            let mut starts = vec![0u32; nc + 1];
            for &k in &keys {
                starts[k as usize + 1] += 1;
            }
            for c in 0..nc {
                starts[c + 1] += starts[c];
            }
            let mut fill = starts.clone();
            for (i, &k) in keys.iter().enumerate() {
                let s = fill[k as usize] as usize;
                fill[k as usize] += 1;
                pos[s] = positions[i];
                num[s] = numbers[i];
                idx[s] = i as u32;
            }
            Cells::Dense { starts }
        } else {
            let (mask, mut slots) = counted;
            // Lay the cells out in key order (rows along x), not hash order, so that nearby
            // cells are nearby in memory.
            let mut occupied: Vec<(u64, usize)> = slots
                .iter()
                .enumerate()
                .filter(|(_, s)| s.key != EMPTY)
                .map(|(h, s)| (s.key, h))
                .collect();
            occupied.sort_unstable();
            let mut acc = 0u32;
            for &(_, h) in &occupied {
                slots[h].start = acc;
                acc += slots[h].count;
            }
            let mut fill: Vec<u32> = slots.iter().map(|s| s.start).collect();
            for (i, &k) in keys.iter().enumerate() {
                if let Some(h) = find_slot(&slots, mask, k) {
                    let s = fill[h] as usize;
                    fill[h] += 1;
                    pos[s] = positions[i];
                    num[s] = numbers[i];
                    idx[s] = i as u32;
                }
            }
            Cells::Hash { mask, slots }
        };
        Ok(Grid {
            tol,
            inv_cell: 1.0 / cell,
            cell,
            origin,
            dims,
            cells,
            pos,
            num,
            idx,
        })
    }

    /// Number of atoms in the grid.
    pub fn len(&self) -> usize {
        self.pos.len()
    }

    /// True when the grid holds no atoms.
    pub fn is_empty(&self) -> bool {
        self.pos.is_empty()
    }

    /// The tolerance the grid was built for, Å.
    pub fn tol(&self) -> f64 {
        self.tol
    }

    /// Input indices of the atoms in the grid's storage (cell) order.
    pub fn atoms_in_cell_order(&self) -> &[u32] {
        &self.idx
    }

    /// The cell edge, Å.
    pub fn cell_size(&self) -> f64 {
        self.cell
    }

    /// Nearest atom of element `element` within the grid's tolerance of `point`:
    /// `(input index, distance in Å)`, or `None`.
    pub fn query(&self, point: &Vec3, element: i64) -> Option<(usize, f64)> {
        self.query_within(point, element, self.tol)
    }

    /// Nearest atom of element `element` within `radius` Å of `point` (any radius; the work
    /// grows with the number of cells the ball touches).
    pub fn query_within(&self, point: &Vec3, element: i64, radius: f64) -> Option<(usize, f64)> {
        let mut best = (usize::MAX, radius * radius);
        self.scan(point, radius, |s, d2| {
            if self.num[s] == element && d2 <= best.1 {
                best = (s, d2);
            }
        });
        if best.0 == usize::MAX {
            None
        } else {
            Some((self.idx[best.0] as usize, best.1.sqrt()))
        }
    }

    /// Visit every stored atom (sorted slot, squared distance) in the cells that the ball of
    /// `radius` around `point` touches.
    #[inline]
    fn scan<F: FnMut(usize, f64)>(&self, point: &Vec3, radius: f64, mut visit: F) {
        let mut lo = [0i64; 3];
        let mut hi = [0i64; 3];
        for k in 0..3 {
            // Truncation instead of floor (a libm call without SSE4.1): it differs only on
            // (-1, 0), which the clamp to cell 0 absorbs (at worst one empty-handed cell).
            let a = ((point[k] - radius - self.origin[k]) * self.inv_cell) as i64;
            let b = ((point[k] + radius - self.origin[k]) * self.inv_cell) as i64;
            lo[k] = a.max(0);
            hi[k] = b.min(self.dims[k] - 1);
            if lo[k] > hi[k] {
                return;
            }
        }
        for z in lo[2]..=hi[2] {
            for y in lo[1]..=hi[1] {
                for x in lo[0]..=hi[0] {
                    let key = (x + self.dims[0] * (y + self.dims[1] * z)) as u64;
                    let (start, end) = match &self.cells {
                        Cells::Dense { starts } => {
                            let k = key as usize;
                            match (starts.get(k), starts.get(k + 1)) {
                                (Some(&a), Some(&b)) => (a as usize, b as usize),
                                _ => continue,
                            }
                        }
                        Cells::Hash { mask, slots } => match find_slot(slots, *mask, key) {
                            Some(h) => {
                                let s = slots[h];
                                (s.start as usize, (s.start + s.count) as usize)
                            }
                            None => continue,
                        },
                    };
                    for s in start..end {
                        let q = &self.pos[s];
                        let d = [q[0] - point[0], q[1] - point[1], q[2] - point[2]];
                        visit(s, d[0] * d[0] + d[1] * d[1] + d[2] * d[2]);
                    }
                }
            }
        }
    }

    /// Distance to the nearest atom of `element` at any distance (brute force, O(N));
    /// infinite when the grid holds no such atom. For error messages only.
    pub fn nearest_distance(&self, point: &Vec3, element: i64) -> f64 {
        let mut best = f64::INFINITY;
        for (q, &z) in self.pos.iter().zip(&self.num) {
            if z == element {
                let d = [q[0] - point[0], q[1] - point[1], q[2] - point[2]];
                best = best.min(d[0] * d[0] + d[1] * d[1] + d[2] * d[2]);
            }
        }
        best.sqrt()
    }
}

fn cell_key(p: &Vec3, origin: &Vec3, inv: f64, dims: &[i64; 3]) -> u64 {
    let mut c = [0i64; 3];
    for k in 0..3 {
        c[k] = (((p[k] - origin[k]) * inv) as i64).clamp(0, dims[k] - 1);
    }
    (c[0] + dims[0] * (c[1] + dims[1] * c[2])) as u64
}

/// Two atoms within the grid's tolerance of each other (any elements): the pair `(i, j, d)`
/// with i < j (input indices) that is first in (i, j) order, or `None`.
pub fn find_overlap(grid: &Grid) -> Option<(usize, usize, f64)> {
    let tol = grid.tol;
    let probe = |range: std::ops::Range<usize>| -> Option<(usize, usize, f64)> {
        let mut best: Option<(usize, usize, f64)> = None;
        for s in range {
            grid.scan(&grid.pos[s], tol, |t, d2| {
                if t != s && d2 <= tol * tol {
                    let (a, b) = (grid.idx[s] as usize, grid.idx[t] as usize);
                    let pair = (a.min(b), a.max(b), d2.sqrt());
                    if best.is_none_or(|q| (pair.0, pair.1) < (q.0, q.1)) {
                        best = Some(pair);
                    }
                }
            });
        }
        best
    };
    let n = grid.len();
    let pick = |a: Option<(usize, usize, f64)>, b: Option<(usize, usize, f64)>| match (a, b) {
        (Some(x), Some(y)) => Some(if (y.0, y.1) < (x.0, x.1) { y } else { x }),
        (x, None) => x,
        (None, y) => y,
    };
    if n <= PARALLEL_MIN_ATOMS {
        probe(0..n)
    } else {
        (0..n.div_ceil(CHUNK))
            .into_par_iter()
            .map(|c| probe(c * CHUNK..((c + 1) * CHUNK).min(n)))
            .reduce(|| None, pick)
    }
}

/// Map every atom under the operation `op_matrix` (acting on the coordinates the grid was
/// built on, normally centred ones): atom i goes to the nearest atom of its element within
/// `tol` of `op_matrix · positions[i]`.
///
/// `positions`/`numbers` must be the atoms the grid was built from (their count must equal
/// the grid's): the scan reads the grid's own copy of them, in cell order, so that successive
/// images fall in nearby cells (cache locality: about 4× faster than input order on 10⁶
/// scattered atoms); it stops at the first atom in that order without an image. Serial up to `PARALLEL_MIN_ATOMS` atoms, parallel (current
/// rayon pool) above, with identical results.
///
/// Returns the permutation (atom i → `perm[i]`) and the largest image distance, Å.
///
/// # Errors
/// `LengthMismatch` when the arrays disagree with each other or with the grid,
/// `BadTolerance`, `NotASymmetry { atom, distance }` for the first atom (cell order) with no
/// image (distance to its nearest same-element atom), `AmbiguousImage` when two atoms map
/// onto one.
pub fn map_atoms(
    grid: &Grid,
    positions: &[[f64; 3]],
    numbers: &[i64],
    op_matrix: &Mat3,
    tol: f64,
) -> Result<(Vec<u32>, f64)> {
    check_tol(tol)?;
    if positions.len() != numbers.len() || positions.len() != grid.len() {
        return Err(Error::LengthMismatch {
            n_positions: positions.len(),
            n_numbers: if positions.len() != numbers.len() {
                numbers.len()
            } else {
                grid.len()
            },
        });
    }
    let n = positions.len();
    debug_assert!(grid
        .idx
        .iter()
        .zip(&grid.pos)
        .take(64)
        .all(|(&i, p)| positions[i as usize] == *p));
    // image[s]: the image of the atom stored in grid slot s.
    let mut image = vec![0u32; n];
    let first_fail = AtomicUsize::new(usize::MAX);
    let run = |start: usize, out: &mut [u32]| -> f64 {
        let mut dev = 0.0_f64;
        for (k, slot) in out.iter_mut().enumerate() {
            let s = start + k;
            if s > first_fail.load(Ordering::Relaxed) {
                return dev;
            }
            let q = mat_vec(op_matrix, &grid.pos[s]);
            match grid.query_within(&q, grid.num[s], tol) {
                Some((j, d)) => {
                    *slot = j as u32;
                    dev = dev.max(d);
                }
                None => {
                    first_fail.fetch_min(s, Ordering::Relaxed);
                    return dev;
                }
            }
        }
        dev
    };
    let max_dev = if n <= PARALLEL_MIN_ATOMS {
        run(0, &mut image)
    } else {
        image
            .par_chunks_mut(CHUNK)
            .enumerate()
            .map(|(c, out)| run(c * CHUNK, out))
            .reduce(|| 0.0, f64::max)
    };
    let fail = first_fail.load(Ordering::Relaxed);
    if fail != usize::MAX {
        let atom = grid.idx[fail] as usize;
        let q = mat_vec(op_matrix, &positions[atom]);
        return Err(Error::NotASymmetry {
            atom,
            distance: grid.nearest_distance(&q, numbers[atom]),
        });
    }
    let mut perm = vec![0u32; n];
    let mut owner = vec![u32::MAX; n];
    for (s, &j) in image.iter().enumerate() {
        let i = grid.idx[s];
        perm[i as usize] = j;
        let o = &mut owner[j as usize];
        if *o != u32::MAX {
            let (first, second) = ((*o).min(i) as usize, (*o).max(i) as usize);
            return Err(Error::AmbiguousImage {
                first,
                second,
                image: j as usize,
            });
        }
        *o = i;
    }
    Ok((perm, max_dev))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ops::PointOp;

    use crate::testutil::Rng;

    fn cubic_lattice(n: usize, a: f64) -> Vec<[f64; 3]> {
        let mut v = Vec::new();
        let h = (n as f64 - 1.0) / 2.0;
        for i in 0..n {
            for j in 0..n {
                for k in 0..n {
                    v.push([(i as f64 - h) * a, (j as f64 - h) * a, (k as f64 - h) * a]);
                }
            }
        }
        v
    }

    fn brute_nearest(p: &[[f64; 3]], z: &[i64], q: &Vec3, e: i64, r: f64) -> Option<(usize, f64)> {
        let mut best: Option<(usize, f64)> = None;
        for (i, x) in p.iter().enumerate() {
            if z[i] != e {
                continue;
            }
            let d = ((x[0] - q[0]).powi(2) + (x[1] - q[1]).powi(2) + (x[2] - q[2]).powi(2)).sqrt();
            if d <= r && best.is_none_or(|b| d < b.1) {
                best = Some((i, d));
            }
        }
        best
    }

    #[test]
    fn test_query_agrees_with_brute_force() {
        let mut rng = Rng(7);
        let p: Vec<[f64; 3]> = (0..3000)
            .map(|_| [rng.next() * 20.0, rng.next() * 5.0, rng.next() * 0.5])
            .collect();
        let z: Vec<i64> = (0..3000).map(|i| 1 + (i % 3) as i64).collect();
        let g = Grid::build(&p, &z, 0.05).unwrap();
        for _ in 0..2000 {
            let i = (rng.next() * 3000.0) as usize % 3000;
            let q = [
                p[i][0] + (rng.next() - 0.5) * 0.1,
                p[i][1] + (rng.next() - 0.5) * 0.1,
                p[i][2] + (rng.next() - 0.5) * 0.1,
            ];
            for e in 1..=3 {
                let a = g.query(&q, e);
                let b = brute_nearest(&p, &z, &q, e, 0.05);
                assert_eq!(a.map(|x| x.0), b.map(|x| x.0));
            }
            let a = g.query_within(&q, z[i], 0.7);
            let b = brute_nearest(&p, &z, &q, z[i], 0.7);
            assert_eq!(a.map(|x| x.0), b.map(|x| x.0));
        }
    }

    #[test]
    fn test_sparse_shell_uses_the_hash_table_and_still_finds_atoms() {
        // Points on a big sphere: the bounding box is mostly empty.
        let mut rng = Rng(3);
        let p: Vec<[f64; 3]> = (0..4000)
            .map(|_| {
                let u = rng.next() * 2.0 - 1.0;
                let phi = rng.next() * std::f64::consts::TAU;
                let s = (1.0 - u * u).sqrt();
                [100.0 * s * phi.cos(), 100.0 * s * phi.sin(), 100.0 * u]
            })
            .collect();
        let z = vec![6i64; p.len()];
        let g = Grid::build(&p, &z, 0.01).unwrap();
        assert!(matches!(g.cells, Cells::Hash { .. }));
        for (i, x) in p.iter().enumerate() {
            let (j, d) = g.query(x, 6).unwrap();
            assert_eq!((j, d), (i, 0.0));
            assert!(g.query(x, 7).is_none());
        }
    }

    #[test]
    fn test_points_outside_the_box_and_nan_find_nothing() {
        let p = cubic_lattice(3, 1.0);
        let z = vec![1i64; p.len()];
        let g = Grid::build(&p, &z, 0.1).unwrap();
        assert!(g.query(&[50.0, 0.0, 0.0], 1).is_none());
        assert!(g.query(&[f64::NAN, 0.0, 0.0], 1).is_none());
        assert!(g.query(&[-1.0, -1.0, -1.0], 1).is_some());
        assert!(g.query(&[-1.05, -1.0, -1.0], 1).is_some());
        assert!(g.query(&[-1.2, -1.0, -1.0], 1).is_none());
    }

    #[test]
    fn test_build_rejects_bad_input_and_accepts_empty() {
        assert_eq!(
            Grid::build(&[[0.0; 3]], &[1], 0.0).err(),
            Some(Error::BadTolerance { value: 0.0 })
        );
        assert!(matches!(
            Grid::build(&[[0.0; 3]], &[1], f64::NAN),
            Err(Error::BadTolerance { .. })
        ));
        assert!(matches!(
            Grid::build(&[[0.0; 3]], &[1, 1], 0.1),
            Err(Error::LengthMismatch { .. })
        ));
        assert_eq!(
            Grid::build(&[[0.0, f64::INFINITY, 0.0]], &[1], 0.1).err(),
            Some(Error::NonFiniteCoordinate { atom: 0 })
        );
        let g = Grid::build(&[], &[], 0.1).unwrap();
        assert!(g.is_empty() && g.query(&[0.0; 3], 1).is_none());
        assert_eq!(find_overlap(&g), None);
        let one = Grid::build(&[[1e6, -1e6, 3.0]], &[8], 0.01).unwrap();
        assert_eq!(one.query(&[1e6, -1e6, 3.0], 8), Some((0, 0.0)));
    }

    #[test]
    fn test_find_overlap_reports_first_pair() {
        let mut p = cubic_lattice(4, 1.5);
        assert_eq!(
            find_overlap(&Grid::build(&p, &vec![6; p.len()], 0.01).unwrap()),
            None
        );
        p.push([p[40][0] + 0.005, p[40][1], p[40][2]]);
        p.push([p[7][0], p[7][1] - 0.003, p[7][2]]);
        let z = vec![6i64; p.len()];
        let (i, j, d) = find_overlap(&Grid::build(&p, &z, 0.01).unwrap()).unwrap();
        assert_eq!((i, j), (7, 65));
        assert!((d - 0.003).abs() < 1e-12);
    }

    #[test]
    fn test_map_atoms_under_a_lattice_symmetry() {
        let p = cubic_lattice(5, 1.3);
        let z: Vec<i64> = (0..p.len()).map(|i| 1 + (i % 2) as i64).collect();
        let g = Grid::build(&p, &z, 0.01).unwrap();
        let c4 = PointOp::rotation([0.0, 0.0, 1.0], 90.0);
        let (perm, dev) = map_atoms(&g, &p, &z, &c4.matrix, 0.01).unwrap();
        assert!(dev < 1e-12);
        for (i, &j) in perm.iter().enumerate() {
            let q = c4.apply(&p[i]);
            assert!((0..3).all(|k| (p[j as usize][k] - q[k]).abs() < 1e-9));
            assert_eq!(z[i], z[j as usize]);
        }
        // A rotation by 30 degrees is no symmetry: atom 0 is the first to fail.
        let r = PointOp::rotation([0.0, 0.0, 1.0], 30.0);
        match map_atoms(&g, &p, &z, &r.matrix, 0.01) {
            Err(Error::NotASymmetry { atom, distance }) => {
                assert_eq!(atom, 0);
                assert!(distance > 0.01 && distance.is_finite());
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn test_map_atoms_parallel_path_matches_serial() {
        let p = cubic_lattice(40, 1.1); // 64 000 atoms > PARALLEL_MIN_ATOMS
                                        // Element depends on the y index only, symmetric under y -> -y.
        let z: Vec<i64> = (0..p.len())
            .map(|i| {
                let j = (i / 40) % 40;
                1 + i64::from(!(10..30).contains(&j))
            })
            .collect();
        let g = Grid::build(&p, &z, 0.01).unwrap();
        let inv = PointOp::inversion();
        let (perm, dev) = map_atoms(&g, &p, &z, &inv.matrix, 0.01).unwrap();
        assert!(dev < 1e-12);
        for (i, &j) in perm.iter().enumerate() {
            assert!((p[j as usize][0] + p[i][0]).abs() < 1e-9);
        }
        // Failure: elements vary along y only, so a C4 about z breaks them somewhere; the
        // reported atom is the first in cell order, as the serial scan finds it.
        let c4 = PointOp::rotation([0.0, 0.0, 1.0], 90.0);
        let expect = g
            .idx
            .iter()
            .map(|&i| i as usize)
            .find(|&i| brute_nearest(&p, &z, &c4.apply(&p[i]), z[i], 0.01).is_none())
            .unwrap();
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap();
        for result in [
            map_atoms(&g, &p, &z, &c4.matrix, 0.01),
            pool.install(|| map_atoms(&g, &p, &z, &c4.matrix, 0.01)),
        ] {
            match result {
                Err(Error::NotASymmetry { atom, .. }) => assert_eq!(atom, expect),
                other => panic!("{other:?}"),
            }
        }
    }

    #[test]
    fn test_map_atoms_rejects_non_bijection_and_bad_arguments() {
        // Two atoms 0.015 Å apart (more than tol) that both lie within tol of one image.
        let p = [[1.0, 0.0, 0.0], [1.015, 0.0, 0.0], [-1.0075, 0.0, 0.0]];
        let z = [1, 1, 1];
        let g = Grid::build(&p, &z, 0.01).unwrap();
        let inv = PointOp::inversion().matrix;
        assert!(matches!(
            map_atoms(&g, &p, &z, &inv, 0.01),
            Err(Error::AmbiguousImage { image: 2, .. })
        ));
        assert!(matches!(
            map_atoms(&g, &p[..2], &z[..2], &inv, 0.01),
            Err(Error::LengthMismatch { .. })
        ));
        assert!(matches!(
            map_atoms(&g, &p, &z, &inv, -1.0),
            Err(Error::BadTolerance { .. })
        ));
    }
}
