//! The operations of every point group in the standard frame (DEVELOPERS.md, "Standard
//! orientation"): axial families by formula (any n), polyhedral groups by closure of their
//! generators. Each list starts with E and comes with the indices of a generating set.

use crate::ops::{mat_mul, max_abs_diff, rotation_matrix, Mat3, IDENTITY};
use std::f64::consts::PI;

/// The point groups the detector reports, with the n of the axial families.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Family {
    /// C1.
    C1,
    /// Cs (mirror normal along z).
    Cs,
    /// Ci.
    Ci,
    /// Cn, n ≥ 2.
    Cn(usize),
    /// Cnv, n ≥ 2.
    Cnv(usize),
    /// Cnh, n ≥ 2.
    Cnh(usize),
    /// S2n; the field is the order 2n (≥ 4).
    S2n(usize),
    /// Dn, n ≥ 2.
    Dn(usize),
    /// Dnh, n ≥ 2.
    Dnh(usize),
    /// Dnd, n ≥ 2.
    Dnd(usize),
    /// T.
    T,
    /// Td.
    Td,
    /// Th.
    Th,
    /// O.
    O,
    /// Oh.
    Oh,
    /// I.
    I,
    /// Ih.
    Ih,
    /// C∞v, reported through C_Mv.
    Cinfv(usize),
    /// D∞h, reported through D_Md.
    Dinfh(usize),
    /// K_h = O(3), the group of a single atom, sampled by C_M × Ci (M = the field): the
    /// rotations about z by multiples of 360°/M and their products with i.
    Kh(usize),
}

impl Family {
    /// The Schoenflies name as INTERFACE.md spells it.
    pub fn name(&self) -> String {
        match *self {
            Family::C1 => "C1".into(),
            Family::Cs => "Cs".into(),
            Family::Ci => "Ci".into(),
            Family::Cn(n) => format!("C{n}"),
            Family::Cnv(n) => format!("C{n}v"),
            Family::Cnh(n) => format!("C{n}h"),
            Family::S2n(m) => format!("S{m}"),
            Family::Dn(n) => format!("D{n}"),
            Family::Dnh(n) => format!("D{n}h"),
            Family::Dnd(n) => format!("D{n}d"),
            Family::T => "T".into(),
            Family::Td => "Td".into(),
            Family::Th => "Th".into(),
            Family::O => "O".into(),
            Family::Oh => "Oh".into(),
            Family::I => "I".into(),
            Family::Ih => "Ih".into(),
            Family::Cinfv(_) => "C∞v".into(),
            Family::Dinfh(_) => "D∞h".into(),
            Family::Kh(_) => "K_h".into(),
        }
    }
}

fn rz(theta: f64) -> Mat3 {
    let (s, c) = theta.sin_cos();
    [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]]
}

const SIGMA_H: Mat3 = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, -1.0]];
const INVERSION: Mat3 = [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]];

/// C2 about the horizontal axis at azimuth φ.
fn c2_horizontal(phi: f64) -> Mat3 {
    let (s, c) = phi.sin_cos();
    // 2uuᵀ − 1 with u = (c, s, 0).
    [
        [2.0 * c * c - 1.0, 2.0 * c * s, 0.0],
        [2.0 * c * s, 2.0 * s * s - 1.0, 0.0],
        [0.0, 0.0, -1.0],
    ]
}

/// Mirror whose plane contains z and the horizontal direction at azimuth φ.
fn sigma_vertical(phi: f64) -> Mat3 {
    let (s, c) = phi.sin_cos();
    // 1 − 2nnᵀ with n = (−s, c, 0).
    [
        [1.0 - 2.0 * s * s, 2.0 * s * c, 0.0],
        [2.0 * s * c, 1.0 - 2.0 * c * c, 0.0],
        [0.0, 0.0, 1.0],
    ]
}

fn rotations_z(n: usize) -> Vec<Mat3> {
    (0..n).map(|k| rz(2.0 * PI * k as f64 / n as f64)).collect()
}

fn dihedral(n: usize) -> Vec<Mat3> {
    let mut v = rotations_z(n);
    v.extend((0..n).map(|j| c2_horizontal(PI * j as f64 / n as f64)));
    v
}

/// Closure of `gens` under multiplication (breadth first: every element times every
/// generator), E first and the generators next.
fn close(gens: &[Mat3]) -> (Vec<Mat3>, Vec<usize>) {
    let mut all = vec![IDENTITY];
    let mut gen_idx = Vec::new();
    for g in gens {
        match all.iter().position(|m| max_abs_diff(m, g) < 1e-8) {
            Some(i) => gen_idx.push(i),
            None => {
                gen_idx.push(all.len());
                all.push(*g);
            }
        }
    }
    let mut k = 0;
    while k < all.len() && all.len() <= 240 {
        let x = all[k];
        for g in gens {
            let p = mat_mul(&x, g);
            if !all.iter().any(|m| max_abs_diff(m, &p) < 1e-8) {
                all.push(p);
            }
        }
        k += 1;
    }
    (all, gen_idx)
}

/// The operations of `family` in the standard frame (E first) and the indices of a
/// generating set (empty for C1).
pub fn standard_operations(family: Family) -> (Vec<Mat3>, Vec<usize>) {
    let cyc: Mat3 = [[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]; // C3 about (1,1,1)
    let c2z = rz(PI);
    let phi = (1.0 + 5f64.sqrt()) / 2.0;
    let s = (1.0 + phi * phi).sqrt();
    let c5 = rotation_matrix(&[0.0, 1.0 / s, phi / s], 2.0 * PI / 5.0);
    match family {
        Family::C1 => (vec![IDENTITY], vec![]),
        Family::Cs => (vec![IDENTITY, SIGMA_H], vec![1]),
        Family::Ci => (vec![IDENTITY, INVERSION], vec![1]),
        Family::Cn(n) => (rotations_z(n), if n > 1 { vec![1] } else { vec![] }),
        Family::Cnv(n) | Family::Cinfv(n) => {
            let mut v = rotations_z(n);
            v.extend((0..n).map(|j| sigma_vertical(PI * j as f64 / n as f64)));
            (v, vec![1, n])
        }
        Family::Cnh(n) => {
            let mut v = rotations_z(n);
            v.extend(rotations_z(n).iter().map(|r| mat_mul(&SIGMA_H, r)));
            (v, vec![1, n])
        }
        Family::S2n(m) => {
            let v = (0..m)
                .map(|k| {
                    let r = rz(2.0 * PI * k as f64 / m as f64);
                    if k % 2 == 1 {
                        mat_mul(&SIGMA_H, &r)
                    } else {
                        r
                    }
                })
                .collect();
            (v, vec![1])
        }
        Family::Dn(n) => (dihedral(n), vec![1, n]),
        Family::Dnh(n) => {
            let mut v = dihedral(n);
            let reflected: Vec<Mat3> = v.iter().map(|r| mat_mul(&SIGMA_H, r)).collect();
            v.extend(reflected);
            (v, vec![1, n, 2 * n])
        }
        Family::Dnd(n) | Family::Dinfh(n) => {
            let mut v = dihedral(n);
            v.extend((0..n).map(|k| mat_mul(&SIGMA_H, &rz(PI * (2 * k + 1) as f64 / n as f64))));
            v.extend((0..n).map(|j| sigma_vertical(PI * (j as f64 + 0.5) / n as f64)));
            (v, vec![1, n, 3 * n])
        }
        Family::T => close(&[cyc, c2z]),
        Family::Td => close(&[cyc, mat_mul(&SIGMA_H, &rz(PI / 2.0))]),
        Family::Th => close(&[cyc, c2z, INVERSION]),
        Family::O => close(&[rz(PI / 2.0), cyc]),
        Family::Oh => close(&[rz(PI / 2.0), cyc, INVERSION]),
        // Elements of orders 5 and 3 generate I: A5 has no proper subgroup of order 15·k.
        Family::I => close(&[c5, cyc]),
        Family::Ih => close(&[c5, cyc, INVERSION]),
        Family::Kh(m) => {
            let mut v = rotations_z(m);
            v.extend(rotations_z(m).iter().map(|r| mat_mul(&INVERSION, r)));
            (v, vec![1, m])
        }
    }
}

impl Family {
    /// The family of a Schoenflies name as [`Family::name`] spells it (`"D6h"`, `"S8"`,
    /// `"C∞v"`, `"K_h"`), with `linear_n` the M of the finite subgroups C_Mv / D_Md that
    /// stand for the linear groups and of the sampling C_M × Ci of K_h. `None` for anything else (including n < 2 where the
    /// name has its own spelling: C1h is Cs, S2 is Ci).
    pub fn from_name(name: &str, linear_n: usize) -> Option<Family> {
        match name {
            "C1" => return Some(Family::C1),
            "Cs" => return Some(Family::Cs),
            "Ci" => return Some(Family::Ci),
            "T" => return Some(Family::T),
            "Td" => return Some(Family::Td),
            "Th" => return Some(Family::Th),
            "O" => return Some(Family::O),
            "Oh" => return Some(Family::Oh),
            "I" => return Some(Family::I),
            "Ih" => return Some(Family::Ih),
            "C∞v" => return Some(Family::Cinfv(linear_n)),
            "D∞h" => return Some(Family::Dinfh(linear_n)),
            "K_h" => return Some(Family::Kh(linear_n)),
            _ => {}
        }
        let (head, rest) = name.split_at(1);
        let digits: String = rest.chars().take_while(|c| c.is_ascii_digit()).collect();
        let suffix = &rest[digits.len()..];
        if digits.is_empty() || digits.starts_with('0') {
            return None;
        }
        let n: usize = digits.parse().ok()?;
        let fam = match (head, suffix) {
            ("C", "") if n >= 2 => Family::Cn(n),
            ("C", "v") if n >= 2 => Family::Cnv(n),
            ("C", "h") if n >= 2 => Family::Cnh(n),
            ("S", "") if n >= 4 && n.is_multiple_of(2) => Family::S2n(n),
            ("D", "") if n >= 2 => Family::Dn(n),
            ("D", "h") if n >= 2 => Family::Dnh(n),
            ("D", "d") if n >= 2 => Family::Dnd(n),
            _ => return None,
        };
        Some(fam)
    }
}

/// Everything the rest of the program needs to know about one group's canonical
/// operations (standard frame): the operations themselves and their arithmetic. Built once
/// per family ([`group_data`]) and shared; detection reports its operations in exactly
/// this order, so operation k of a detection is canonical operation k.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupData {
    /// The family.
    pub family: Family,
    /// The canonical operations, E first (C∞v / D∞h: those of C_Mv / D_Md; K_h: of
    /// C_M × Ci).
    pub ops: Vec<Mat3>,
    /// Indices of a generating set (empty for C1).
    pub generators: Vec<usize>,
    /// Conjugacy class of each operation: the smallest operation index in its class (K_h:
    /// the class in O(3), see [`group_data`]).
    pub class_of: Vec<usize>,
    /// Index of the inverse of each operation.
    pub inverse: Vec<usize>,
    /// Index of the square of each operation.
    pub square: Vec<usize>,
    /// Every operation as a generator times an earlier one: `words[k] = (g, j)` with
    /// ops[k] = ops[g]·ops[j], g in `generators` (E: `(0, 0)`).
    pub words: Vec<(usize, usize)>,
    /// The operations in breadth-first order from E over the generators: each one comes after
    /// the `j` of its word.
    pub word_order: Vec<usize>,
}

/// Entries of operation matrices agree to this when two operations are one element.
const SAME_ELEMENT: f64 = 1e-6;

fn matrix_key(m: &Mat3) -> [i64; 9] {
    let mut k = [0i64; 9];
    for i in 0..3 {
        for j in 0..3 {
            k[3 * i + j] = (m[i][j] * 1e6).round() as i64;
        }
    }
    k
}

/// Exact membership of matrices in a finite group of matrices: a hash of the rounded
/// entries, with a scan as the fallback for entries on a rounding boundary.
pub struct ElementIndex<'a> {
    ops: &'a [Mat3],
    index: std::collections::HashMap<[i64; 9], usize>,
}

impl<'a> ElementIndex<'a> {
    /// Index the operations of a group.
    pub fn new(ops: &'a [Mat3]) -> Self {
        let index = ops
            .iter()
            .enumerate()
            .map(|(i, m)| (matrix_key(m), i))
            .collect();
        ElementIndex { ops, index }
    }

    /// The operation equal to `m` (every entry within 1e-6), if any.
    pub fn find(&self, m: &Mat3) -> Option<usize> {
        self.index
            .get(&matrix_key(m))
            .copied()
            .filter(|&i| max_abs_diff(&self.ops[i], m) < SAME_ELEMENT)
            .or_else(|| {
                self.ops
                    .iter()
                    .position(|o| max_abs_diff(o, m) < SAME_ELEMENT)
            })
    }
}

fn transpose3(m: &Mat3) -> Mat3 {
    [
        [m[0][0], m[1][0], m[2][0]],
        [m[0][1], m[1][1], m[2][1]],
        [m[0][2], m[1][2], m[2][2]],
    ]
}

fn build_group_data(family: Family) -> crate::Result<GroupData> {
    let (ops, generators) = standard_operations(family);
    let idx = ElementIndex::new(&ops);
    // A failure here is a bug in the generators above, reported rather than panicking.
    let missing = |what: &str, k: usize| crate::Error::InvalidArgument {
        name: family.name(),
        reason: format!("internal: the {what} of canonical operation {k} is not in the group"),
    };
    let h = ops.len();
    let mut inverse = Vec::with_capacity(h);
    let mut square = Vec::with_capacity(h);
    for (k, m) in ops.iter().enumerate() {
        inverse.push(
            idx.find(&transpose3(m))
                .ok_or_else(|| missing("inverse", k))?,
        );
        square.push(
            idx.find(&mat_mul(m, m))
                .ok_or_else(|| missing("square", k))?,
        );
    }
    // Conjugation by the generators generates conjugation by the whole group: the classes
    // are the connected components of x ~ g x g⁻¹ over the generators g (union-find).
    let mut parent: Vec<usize> = (0..h).collect();
    fn root(parent: &mut [usize], mut i: usize) -> usize {
        while parent[i] != i {
            parent[i] = parent[parent[i]];
            i = parent[i];
        }
        i
    }
    for &g in &generators {
        let (s, st) = (ops[g], transpose3(&ops[g]));
        for (k, m) in ops.iter().enumerate() {
            let conj = mat_mul(&s, &mat_mul(m, &st));
            let j = idx.find(&conj).ok_or_else(|| missing("conjugate", k))?;
            let (a, b) = (root(&mut parent, k), root(&mut parent, j));
            if a != b {
                parent[a.max(b)] = a.min(b);
            }
        }
    }
    if let Family::Kh(_) = family {
        // The sampling C_M × Ci is abelian, but K_h = O(3) is not: there a rotation by θ is
        // conjugate to the rotation by −θ (through a C2 perpendicular to its axis), and
        // i·C(θ) to i·C(−θ). Those are each operation's inverse, so the classes of the group
        // that the sampling stands for join every operation with its inverse.
        for (k, &j) in inverse.iter().enumerate() {
            let (a, b) = (root(&mut parent, k), root(&mut parent, j));
            if a != b {
                parent[a.max(b)] = a.min(b);
            }
        }
    }
    let class_of: Vec<usize> = (0..h).map(|k| root(&mut parent, k)).collect();
    // Breadth first from E: every operation as a generator times one reached before it.
    let mut words = vec![(0usize, 0usize); h];
    let mut reached = vec![false; h];
    reached[0] = true;
    let mut word_order = vec![0usize];
    let mut next = 0;
    while next < word_order.len() {
        let j = word_order[next];
        next += 1;
        for &g in &generators {
            let k = idx
                .find(&mat_mul(&ops[g], &ops[j]))
                .ok_or_else(|| missing("product", j))?;
            if !reached[k] {
                reached[k] = true;
                words[k] = (g, j);
                word_order.push(k);
            }
        }
    }
    if let Some(k) = reached.iter().position(|&r| !r) {
        return Err(missing("word over the generators", k));
    }
    Ok(GroupData {
        family,
        ops,
        generators,
        class_of,
        inverse,
        square,
        words,
        word_order,
    })
}

/// The canonical operations of `family` with their arithmetic, built on first use and
/// shared afterwards (detection asks for the same few groups again and again).
///
/// # Errors
/// `Internal` if the generated operations do not form a group (a bug).
pub fn group_data(family: Family) -> crate::Result<std::sync::Arc<GroupData>> {
    use std::collections::HashMap;
    use std::sync::{Arc, Mutex, OnceLock};
    static CACHE: OnceLock<Mutex<HashMap<Family, Arc<GroupData>>>> = OnceLock::new();
    let key = family;
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    if let Ok(map) = cache.lock() {
        if let Some(found) = map.get(&key) {
            return Ok(Arc::clone(found));
        }
    }
    let data = Arc::new(build_group_data(family)?);
    if let Ok(mut map) = cache.lock() {
        map.insert(key, Arc::clone(&data));
    }
    Ok(data)
}

/// Index of each query among `ops` (every entry within 1e-6): exact group arithmetic on
/// canonical operations, never a match of measured ones.
///
/// # Errors
/// `InvalidArgument` naming the first query that is not an element of `ops`.
pub fn locate(ops: &[Mat3], queries: &[Mat3]) -> crate::Result<Vec<usize>> {
    let idx = ElementIndex::new(ops);
    queries
        .iter()
        .enumerate()
        .map(|(q, m)| {
            idx.find(m).ok_or_else(|| crate::Error::InvalidArgument {
                name: "queries".into(),
                reason: format!(
                    "matrix {q} is not one of the {} operations (no entry-wise match within 1e-6)",
                    ops.len()
                ),
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_through_from_name() {
        for fam in [
            Family::C1,
            Family::Cs,
            Family::Ci,
            Family::Cn(7),
            Family::Cnv(2),
            Family::Cnh(5),
            Family::S2n(8),
            Family::Dn(3),
            Family::Dnh(12),
            Family::Dnd(4),
            Family::T,
            Family::Td,
            Family::Th,
            Family::O,
            Family::Oh,
            Family::I,
            Family::Ih,
            Family::Cinfv(13),
            Family::Dinfh(13),
            Family::Kh(13),
        ] {
            assert_eq!(Family::from_name(&fam.name(), 13), Some(fam));
        }
        for bad in ["C0", "S3", "S2", "C1v", "Q3", "D", "C07", "Dd"] {
            assert_eq!(Family::from_name(bad, 13), None, "{bad}");
        }
    }

    #[test]
    fn group_data_has_classes_of_printed_sizes() {
        // Class sizes of Oh and D6h (common practice; any printed table).
        let sizes = |fam| {
            let g = group_data(fam).unwrap();
            let mut count = std::collections::BTreeMap::new();
            for &c in &g.class_of {
                *count.entry(c).or_insert(0usize) += 1;
            }
            let mut v: Vec<usize> = count.into_values().collect();
            v.sort_unstable();
            v
        };
        assert_eq!(sizes(Family::Oh), vec![1, 1, 3, 3, 6, 6, 6, 6, 8, 8]);
        assert_eq!(
            sizes(Family::Dnh(6)),
            vec![1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3, 3]
        );
        assert_eq!(sizes(Family::Ih).len(), 10);
    }

    #[test]
    fn k_h_classes_pair_each_rotation_with_its_inverse() {
        // In O(3), C(θ) and C(−θ) are conjugate and so are i·C(θ) and i·C(−θ), while
        // rotations by different |θ| and proper/improper never are (common practice).
        let m = 13;
        let g = group_data(Family::Kh(m)).unwrap();
        assert_eq!(g.ops.len(), 2 * m);
        let classes: std::collections::BTreeSet<usize> = g.class_of.iter().copied().collect();
        // E, i and the (m − 1)/2 pairs of each kind.
        assert_eq!(classes.len(), m + 1);
        for k in 0..g.ops.len() {
            let same: Vec<usize> = (0..g.ops.len())
                .filter(|&j| g.class_of[j] == g.class_of[k])
                .collect();
            let mut want = vec![k, g.inverse[k]];
            want.sort_unstable();
            want.dedup();
            assert_eq!(same, want, "operation {k}");
        }
        // Operation m is the inversion, and every operation commutes with every other.
        assert!(max_abs_diff(&g.ops[m], &INVERSION) < 1e-12);
        for a in &g.ops {
            for b in &g.ops {
                assert!(max_abs_diff(&mat_mul(a, b), &mat_mul(b, a)) < 1e-12);
            }
        }
    }

    #[test]
    fn inverse_and_square_are_group_arithmetic() {
        let g = group_data(Family::Ih).unwrap();
        for k in 0..g.ops.len() {
            let p = mat_mul(&g.ops[k], &g.ops[g.inverse[k]]);
            assert!(max_abs_diff(&p, &IDENTITY) < 1e-9);
            let s = mat_mul(&g.ops[k], &g.ops[k]);
            assert!(max_abs_diff(&s, &g.ops[g.square[k]]) < 1e-9);
        }
        assert!(locate(
            &g.ops,
            &[[[2.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]]
        )
        .is_err());
    }

    #[test]
    fn words_spell_every_operation_from_the_generators() {
        for family in [
            Family::C1,
            Family::Cs,
            Family::Cnv(5),
            Family::S2n(8),
            Family::Dnd(4),
            Family::Td,
            Family::Ih,
            Family::Dinfh(13),
            Family::Kh(13),
        ] {
            let g = group_data(family).unwrap();
            let h = g.ops.len();
            assert_eq!(g.word_order.len(), h);
            assert_eq!(g.word_order[0], 0);
            let mut position = vec![usize::MAX; h];
            for (p, &k) in g.word_order.iter().enumerate() {
                position[k] = p;
            }
            for &k in &g.word_order[1..] {
                let (gen, j) = g.words[k];
                assert!(g.generators.contains(&gen), "{family:?} {k}");
                assert!(position[j] < position[k], "{family:?} {k}");
                let p = mat_mul(&g.ops[gen], &g.ops[j]);
                assert!(max_abs_diff(&p, &g.ops[k]) < 1e-9, "{family:?} {k}");
            }
        }
    }
}
