//! The uniform cell grid over a set of atoms: the spatial index under the nearest-atom lookup
//! (lookup.rs, the hot kernel of detection) and the bond search (count/bonds.rs).
//!
//! The atoms are bucketed into cubic cells (counting sort, O(N)); each cell's atoms are stored
//! contiguously (positions, atomic numbers, input indices), so a query scans only the cells
//! that a ball around the point touches. The cell table is a dense array when the bounding
//! box holds few enough cells (≤ 4N + 1024), otherwise an open-addressing hash of the
//! occupied cells, so memory stays linear in N for shells, tubes and sparse clusters alike.
//!
//! Cells are numbered tile by tile (blocks of 4 × 4 × 4 cells), so that neighbouring cells
//! in every direction are close in memory.
//!
//! The cell edge is either fixed by the caller (the bond cutoff) or adaptive: it starts at
//! L/∛N (L the largest extent of the bounding box) and shrinks while occupied cells hold more
//! than 2.5 atoms on average, never below the caller's minimum. In both cases it is at least
//! L/2²⁰, which keeps cell keys in 64 bits.

use crate::error::{Error, Result};
use crate::ops::Vec3;
use rayon::prelude::*;

const EMPTY: u64 = u64::MAX;
/// Above this many atoms the bounding box and the cell keys are computed in parallel.
const PARALLEL_MIN: usize = 50_000;

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

/// How the grid chooses its cell edge.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CellEdge {
    /// Adaptive edge (see the module notes), never below `min` Å.
    Adaptive {
        /// The smallest edge allowed, Å (the lookup uses 2·tol).
        min: f64,
    },
    /// This edge, Å (a non-positive or non-finite edge becomes 1 Å).
    Fixed(f64),
}

/// One stored atom: position and atomic number (or species code) side by side, so that a
/// scan reads one cache line per atom.
#[derive(Clone, Copy)]
pub(crate) struct Stored {
    pub(crate) p: Vec3,
    pub(crate) z: i64,
}

/// A cell grid over a set of atoms (positions in Å, atomic numbers), stored in cell order.
pub struct CellGrid {
    inv_cell: f64,
    cell: f64,
    origin: Vec3,
    dims: [i64; 3],
    /// Tiles of `TILE`³ cells per axis (dims rounded up).
    tiles: [i64; 3],
    cells: Cells,
    /// Positions and atomic numbers in storage (cell) order.
    pub(crate) atoms: Vec<Stored>,
    /// Input index of the atom in each storage slot.
    pub(crate) idx: Vec<u32>,
    /// True when every atom has the same atomic number (or species code).
    pub(crate) one_species: bool,
}

#[inline]
fn hash(key: u64, mask: usize) -> usize {
    (key.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 20) as usize & mask
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

impl CellGrid {
    /// Build the grid over `positions` (Å) and `numbers` with the given cell edge rule.
    ///
    /// # Errors
    /// `LengthMismatch`, `NonFiniteCoordinate`, and `InvalidArgument` for more than
    /// 2³² − 2 atoms. An empty structure gives an empty grid.
    pub fn build(positions: &[[f64; 3]], numbers: &[i64], edge: CellEdge) -> Result<CellGrid> {
        if positions.len() != numbers.len() {
            return Err(Error::LengthMismatch {
                n_positions: positions.len(),
                n_numbers: numbers.len(),
            });
        }
        let n = positions.len();
        if n >= u32::MAX as usize {
            return Err(Error::InvalidArgument {
                name: "positions".into(),
                reason: format!("{n} atoms is more than the lookup supports (2^32 - 2)"),
            });
        }
        // Bounding box, chunk by chunk (in parallel for large sets); the first non-finite
        // coordinate in atom order is the error.
        let boxes = crate::parallel::map_chunks(n, PARALLEL_MIN, |range| {
            let mut lo = [f64::INFINITY; 3];
            let mut hi = [f64::NEG_INFINITY; 3];
            let mut same = true;
            for atom in range {
                let p = &positions[atom];
                for k in 0..3 {
                    if !p[k].is_finite() {
                        return Err(atom);
                    }
                    // (finite: plain comparisons, without the NaN cases of min and max)
                    if p[k] < lo[k] {
                        lo[k] = p[k];
                    }
                    if p[k] > hi[k] {
                        hi[k] = p[k];
                    }
                }
                same &= numbers[atom] == numbers[0];
            }
            Ok((lo, hi, same))
        });
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        let mut one_species = true;
        for b in boxes {
            let (l, h, same) = b.map_err(|atom| Error::NonFiniteCoordinate { atom })?;
            one_species &= same;
            for k in 0..3 {
                lo[k] = lo[k].min(l[k]);
                hi[k] = hi[k].max(h[k]);
            }
        }
        if n == 0 {
            lo = [0.0; 3];
            hi = [0.0; 3];
        }
        let extent = (0..3).map(|k| hi[k] - lo[k]).fold(0.0_f64, f64::max);
        // Cells no smaller than extent/2^20 keep cell keys in 64 bits.
        let key_floor = extent / (1u64 << 20) as f64;
        let (mut cell, floor, adaptive) = match edge {
            CellEdge::Adaptive { min } => {
                let floor = min.max(key_floor);
                let start = if extent > 0.0 {
                    (extent / (n.max(1) as f64).cbrt()).max(floor)
                } else {
                    floor.max(1.0)
                };
                (start, floor, true)
            }
            CellEdge::Fixed(edge) => {
                // A larger cell stays correct (only slower); a zero edge still needs a
                // positive cell.
                let c = if edge > 0.0 && edge.is_finite() {
                    edge
                } else {
                    1.0
                };
                let c = c.max(key_floor);
                (c, c, false)
            }
        };
        let origin = lo;
        let mut keys = vec![0u64; n];
        let mut dims;
        let mut tiles;
        // Atoms per cell: a dense array when the box holds few enough cells (kept as the
        // cell table's prefix sums), otherwise the hash of the occupied cells.
        let mut counted: std::result::Result<Vec<u32>, (usize, Vec<Slot>)>;
        let mut rounds = 0;
        loop {
            let inv = 1.0 / cell;
            dims = [0i64; 3];
            tiles = [0i64; 3];
            for k in 0..3 {
                dims[k] = ((hi[k] - lo[k]) * inv) as i64 + 1;
                tiles[k] = (dims[k] + TILE - 1) / TILE;
            }
            crate::parallel::map_chunks_mut(&mut keys, PARALLEL_MIN, |start, out| {
                for (key, p) in out.iter_mut().zip(&positions[start..]) {
                    *key = cell_key(p, &origin, inv, &dims, &tiles);
                }
            });
            let n_cells = tiles.iter().map(|&d| d as f64).product::<f64>() * TILE3 as f64;
            let occupied;
            if n_cells <= (4 * n + 1024) as f64 {
                let mut starts = vec![0u32; n_cells as usize + 1];
                occupied = dense_counts(&keys, &mut starts[1..]);
                counted = Ok(starts);
            } else {
                let (mask, slots) = count_cells(&keys);
                occupied = slots.iter().filter(|s| s.key != EMPTY).count();
                counted = Err((mask, slots));
            }
            let load = n as f64 / occupied.max(1) as f64;
            rounds += 1;
            if !adaptive || load <= 2.5 || cell <= floor * 1.000_001 || rounds >= 8 {
                break;
            }
            cell = (cell / load.sqrt()).max(floor);
        }
        let mut idx = vec![0u32; n];
        let atoms: Vec<Stored>;
        let cells = match counted {
            Ok(mut starts) => {
                // Scatter the indices only, then gather the atoms in storage order: one
                // random write per atom instead of three, and the atoms written once (in
                // parallel for large sets) instead of zeroed first.
                dense_scatter(&keys, &mut starts, &mut idx);
                let gather = |&i: &u32| Stored {
                    p: positions[i as usize],
                    z: numbers[i as usize],
                };
                atoms = if n > PARALLEL_MIN {
                    idx.par_iter().map(gather).collect()
                } else {
                    idx.iter().map(gather).collect()
                };
                Cells::Dense { starts }
            }
            Err((mask, mut slots)) => {
                let mut stored = vec![Stored { p: [0.0; 3], z: 0 }; n];
                // Lay the cells out in key order (tile by tile), not hash order, so that
                // nearby cells are nearby in memory.
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
                        stored[s] = Stored {
                            p: positions[i],
                            z: numbers[i],
                        };
                        idx[s] = i as u32;
                    }
                }
                atoms = stored;
                Cells::Hash { mask, slots }
            }
        };
        Ok(CellGrid {
            one_species,
            inv_cell: 1.0 / cell,
            cell,
            origin,
            dims,
            tiles,
            cells,
            atoms,
            idx,
        })
    }

    /// Number of atoms in the grid.
    pub fn len(&self) -> usize {
        self.atoms.len()
    }

    /// True when the grid holds no atoms.
    pub fn is_empty(&self) -> bool {
        self.atoms.is_empty()
    }

    /// Input indices of the atoms in the grid's storage (cell) order.
    pub fn atoms_in_cell_order(&self) -> &[u32] {
        &self.idx
    }

    /// The cell edge, Å.
    pub fn cell_size(&self) -> f64 {
        self.cell
    }

    /// True when the cells live in a hash table (sparse structures), false for a dense array.
    pub fn is_hashed(&self) -> bool {
        matches!(self.cells, Cells::Hash { .. })
    }

    /// Visit every stored atom (storage slot, squared distance to `point` in Å²) in the
    /// cells that the ball of `radius` Å around `point` touches: a superset of the atoms
    /// within `radius`, each visited once. A NaN point visits nothing.
    #[inline]
    pub fn scan<F: FnMut(usize, f64)>(&self, point: &Vec3, radius: f64, mut visit: F) {
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
                    let key = tiled_key([x, y, z], &self.tiles);
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
                        let q = &self.atoms[s].p;
                        let d = [q[0] - point[0], q[1] - point[1], q[2] - point[2]];
                        visit(s, d[0] * d[0] + d[1] * d[1] + d[2] * d[2]);
                    }
                }
            }
        }
    }

    /// The stored atoms (slots `range`) of the one cell that holds the whole ball of
    /// `radius` around `point`, or `None` when the ball reaches another cell (or leaves the
    /// grid): the common case of a lookup within a tolerance much smaller than the cell,
    /// without the loops of [`CellGrid::scan`].
    #[inline]
    pub(crate) fn single_cell(&self, point: &Vec3, radius: f64) -> Option<std::ops::Range<usize>> {
        self.single_cell_key(point, self.margin(radius))
            .map(|key| self.key_range(key))
    }

    /// The margin of [`CellGrid::single_cell_key`] for balls of `radius`, in cell edges
    /// (with a slack for the rounding of the atoms' own cell coordinates).
    #[inline]
    pub(crate) fn margin(&self, radius: f64) -> f64 {
        radius * self.inv_cell + 1e-9
    }

    /// The key of the one cell that holds the whole ball around `point` whose radius is
    /// `margin` cell edges (see [`CellGrid::margin`]), or `None` when the ball reaches
    /// another cell or leaves the grid (a NaN point too).
    #[inline]
    pub(crate) fn single_cell_key(&self, point: &Vec3, margin: f64) -> Option<u64> {
        let mut c = [0i64; 3];
        let mut inside = true;
        for k in 0..3 {
            let f = (point[k] - self.origin[k]) * self.inv_cell;
            let i = f as i64;
            // f < 0 leaves frac ≤ 0 (truncation towards 0, or saturation): refused by the
            // margin, as NaN is; hence i ≥ 0 whenever the ball is inside.
            let frac = f - i as f64;
            inside &= frac > margin && frac < 1.0 - margin && i < self.dims[k];
            c[k] = i;
        }
        inside.then(|| tiled_key(c, &self.tiles))
    }

    /// The storage slots of the atoms of the cell with this key (empty when the cell holds
    /// none).
    #[inline]
    pub(crate) fn key_range(&self, key: u64) -> std::ops::Range<usize> {
        match &self.cells {
            Cells::Dense { starts } => {
                let k = key as usize;
                starts[k] as usize..starts[k + 1] as usize
            }
            Cells::Hash { mask, slots } => match find_slot(slots, *mask, key) {
                Some(h) => {
                    let s = slots[h];
                    s.start as usize..(s.start + s.count) as usize
                }
                None => 0..0,
            },
        }
    }

    /// Distance to the nearest atom of `element` at any distance (brute force, O(N));
    /// infinite when the grid holds no such atom. For error messages only.
    pub fn nearest_distance(&self, point: &Vec3, element: i64) -> f64 {
        let mut best = f64::INFINITY;
        for a in &self.atoms {
            let (q, z) = (&a.p, a.z);
            if z == element {
                let d = [q[0] - point[0], q[1] - point[1], q[2] - point[2]];
                best = best.min(d[0] * d[0] + d[1] * d[1] + d[2] * d[2]);
            }
        }
        best.sqrt()
    }
}

/// Cell ranges of the dense table counted or filled side by side: up to this many, one per
/// thread of the current pool, for more than `PARALLEL_MIN` atoms (one otherwise). Every
/// range reads all the keys and writes only its own cells, so the results never depend on
/// the number of ranges.
const MAX_PARTS: usize = 8;

/// The cell ranges `[base, base + len)` of the dense table's parallel passes over `n` keys.
fn parts(n: usize, n_cells: usize) -> usize {
    let p = if n > PARALLEL_MIN {
        rayon::current_num_threads().clamp(1, MAX_PARTS)
    } else {
        1
    };
    n_cells.div_ceil(p).max(1)
}

/// Atoms per cell (`counts[k]` for key k) and the number of occupied cells.
fn dense_counts(keys: &[u64], counts: &mut [u32]) -> usize {
    let part = parts(keys.len(), counts.len());
    let occupied = crate::parallel::map_owned(
        counts.chunks_mut(part).enumerate().collect(),
        1,
        |(p, mine): (usize, &mut [u32])| {
            let base = (p * part) as u64;
            for &k in keys {
                // (keys below base wrap around to large values)
                if let Some(c) = mine.get_mut(k.wrapping_sub(base) as usize) {
                    *c += 1;
                }
            }
            mine.iter().filter(|&&c| c > 0).count()
        },
    );
    occupied.into_iter().sum()
}

/// Input indices in storage order (`idx`), cell by cell, each cell's atoms in input order;
/// `starts[k + 1]` holds the count of cell k on entry and `starts[k]` the start of cell k in
/// storage on return (`starts[n_cells] = n`).
fn dense_scatter(keys: &[u64], starts: &mut [u32], idx: &mut [u32]) {
    let n_cells = starts.len() - 1;
    let part = parts(keys.len(), n_cells);
    // Exclusive running sums: starts[k + 1] becomes the start of cell k (running sums of the
    // ranges side by side, then each range shifted by the atoms before it).
    let totals = crate::parallel::map_owned(starts[1..].chunks_mut(part).collect(), 1, |c| {
        let mut acc = 0u32;
        for v in c.iter_mut() {
            let count = *v;
            *v = acc;
            acc += count;
        }
        acc
    });
    let mut offsets = Vec::with_capacity(totals.len());
    let mut acc = 0u32;
    for t in totals {
        offsets.push(acc);
        acc += t;
    }
    // Each range fills its own stretch of `idx`, advancing starts[k + 1] from the start to
    // the end of cell k, which is the start of cell k + 1: the table is then complete.
    let mut pieces = Vec::with_capacity(offsets.len());
    let mut rest: &mut [u32] = idx;
    for (p, c) in starts[1..].chunks_mut(part).enumerate() {
        let end = offsets.get(p + 1).copied().unwrap_or(acc);
        let (mine, tail) = std::mem::take(&mut rest).split_at_mut((end - offsets[p]) as usize);
        rest = tail;
        pieces.push((p, c, mine));
    }
    crate::parallel::map_owned(pieces, 1, |(p, fill, out)| {
        let base = (p * part) as u64;
        let shift = offsets[p];
        for v in fill.iter_mut() {
            *v += shift;
        }
        for (i, &k) in keys.iter().enumerate() {
            if let Some(f) = fill.get_mut(k.wrapping_sub(base) as usize) {
                out[(*f - shift) as usize] = i as u32;
                *f += 1;
            }
        }
    });
}

fn cell_key(p: &Vec3, origin: &Vec3, inv: f64, dims: &[i64; 3], tiles: &[i64; 3]) -> u64 {
    let mut c = [0i64; 3];
    for k in 0..3 {
        c[k] = (((p[k] - origin[k]) * inv) as i64).clamp(0, dims[k] - 1);
    }
    tiled_key(c, tiles)
}

/// Cells per tile along each axis (a power of two): cells are numbered tile by tile (tiles
/// x-major, then the cells of a tile x-major), so that the cells around a point, along any
/// direction, lie close together in the cell table and in the atom storage. An operation
/// that permutes the axes (C3 about (1, 1, 1)) then finds successive images in nearby
/// memory, as one that keeps the x rows does.
const TILE: i64 = 4;
const TILE_BITS: u32 = 2;
const TILE3: u64 = (TILE * TILE * TILE) as u64;

/// The key of cell `c` (cell coordinates within the grid's dims) in tile order.
#[inline]
fn tiled_key(c: [i64; 3], tiles: &[i64; 3]) -> u64 {
    let m = TILE - 1;
    let tile =
        (c[0] >> TILE_BITS) + tiles[0] * ((c[1] >> TILE_BITS) + tiles[1] * (c[2] >> TILE_BITS));
    let within = (c[0] & m) | ((c[1] & m) << TILE_BITS) | ((c[2] & m) << (2 * TILE_BITS));
    tile as u64 * TILE3 + within as u64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testutil::Rng;

    fn brute_within(p: &[[f64; 3]], q: &Vec3, r: f64) -> Vec<usize> {
        (0..p.len())
            .filter(|&i| {
                let d = [p[i][0] - q[0], p[i][1] - q[1], p[i][2] - q[2]];
                d[0] * d[0] + d[1] * d[1] + d[2] * d[2] <= r * r
            })
            .collect()
    }

    fn scanned_within(g: &CellGrid, q: &Vec3, r: f64) -> Vec<usize> {
        let mut out = Vec::new();
        g.scan(q, r, |s, d2| {
            if d2 <= r * r {
                out.push(g.atoms_in_cell_order()[s] as usize);
            }
        });
        out.sort_unstable();
        out
    }

    #[test]
    fn scans_find_every_atom_within_the_radius_for_both_edge_rules() {
        let mut rng = Rng(3);
        let p: Vec<[f64; 3]> = (0..500)
            .map(|_| [rng.next() * 20.0, rng.next() * 20.0, rng.next() * 20.0])
            .collect();
        let z = vec![1i64; p.len()];
        for edge in [CellEdge::Adaptive { min: 0.1 }, CellEdge::Fixed(3.0)] {
            let g = CellGrid::build(&p, &z, edge).unwrap();
            assert_eq!(g.len(), p.len());
            for k in 0..50 {
                let q = p[k * 7];
                for r in [0.0, 1.0, 3.0, 7.5] {
                    assert_eq!(
                        scanned_within(&g, &q, r),
                        brute_within(&p, &q, r),
                        "{edge:?} r={r}"
                    );
                }
            }
        }
    }

    #[test]
    fn fixed_edges_are_kept_floored_and_sparse_sets_are_hashed() {
        let p = [[0.0; 3], [1000.0, 0.0, 0.0], [0.0, 0.0, 1000.0]];
        let g = CellGrid::build(&p, &[1, 1, 1], CellEdge::Fixed(2.0)).unwrap();
        assert_eq!(g.cell_size(), 2.0);
        assert!(g.is_hashed());
        assert_eq!(scanned_within(&g, &[999.0, 0.0, 0.0], 1.5), vec![1]);
        // A zero edge (all radii zero) still gives a usable 1 Å cell.
        let g = CellGrid::build(&p, &[1, 1, 1], CellEdge::Fixed(0.0)).unwrap();
        assert_eq!(g.cell_size(), 1.0);
        // Far-apart atoms: the edge grows to extent / 2^20 so that keys fit in 64 bits.
        let far = [[0.0; 3], [1e9, 0.0, 0.0]];
        let g = CellGrid::build(&far, &[1, 1], CellEdge::Fixed(0.5)).unwrap();
        assert_eq!(g.cell_size(), 1e9 / (1u64 << 20) as f64);
        assert_eq!(scanned_within(&g, &[1e9, 0.0, 0.0], 0.0), vec![1]);
        assert!(matches!(
            CellGrid::build(&p, &[1], CellEdge::Fixed(1.0)),
            Err(Error::LengthMismatch { .. })
        ));
        assert!(matches!(
            CellGrid::build(&[[f64::NAN, 0.0, 0.0]], &[1], CellEdge::Fixed(1.0)),
            Err(Error::NonFiniteCoordinate { atom: 0 })
        ));
        assert!(CellGrid::build(&[], &[], CellEdge::Fixed(1.0))
            .unwrap()
            .is_empty());
    }

    #[test]
    fn dense_tables_do_not_depend_on_the_thread_count() {
        // Above PARALLEL_MIN atoms the dense table is counted and filled range by range, one
        // range per thread: the same table and storage order for any number of threads.
        let mut rng = Rng(11);
        let p: Vec<[f64; 3]> = (0..PARALLEL_MIN + 4321)
            .map(|_| [rng.next() * 30.0, rng.next() * 30.0, rng.next() * 30.0])
            .collect();
        let z: Vec<i64> = (0..p.len()).map(|i| 1 + (i % 3) as i64).collect();
        let build = |threads: usize| {
            crate::parallel::install(threads, || {
                CellGrid::build(&p, &z, CellEdge::Adaptive { min: 0.02 }).unwrap()
            })
            .unwrap()
        };
        let one = build(1);
        assert!(!one.is_hashed());
        let Cells::Dense { starts } = &one.cells else {
            unreachable!()
        };
        for threads in [2, 3, 8] {
            let other = build(threads);
            let Cells::Dense { starts: s } = &other.cells else {
                unreachable!()
            };
            assert_eq!(s, starts, "{threads} threads");
            assert_eq!(other.idx, one.idx, "{threads} threads");
        }
        // Each cell's atoms in input order, and every atom in the cell of its key.
        for c in 0..starts.len() - 1 {
            let cell = &one.idx[starts[c] as usize..starts[c + 1] as usize];
            assert!(cell.windows(2).all(|w| w[0] < w[1]));
            for &i in cell {
                let key = cell_key(
                    &p[i as usize],
                    &one.origin,
                    one.inv_cell,
                    &one.dims,
                    &one.tiles,
                );
                assert_eq!(key as usize, c);
            }
        }
        assert!(!one.one_species);
    }
}
