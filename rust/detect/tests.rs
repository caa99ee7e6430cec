//! Tests of point-group detection: every family, invariance, noise, orientation, bad input.
//!
//! Class sizes: Cotton, "Chemical Applications of Group Theory", appendix (character tables);
//! the general-n patterns of the axial families are common practice. Molecular geometries are
//! from memory (approximate bond lengths; only their symmetry matters here).

use super::*;
use crate::ops::{max_abs_diff, IDENTITY};

use crate::testutil::Rng;

/// A random proper rotation.
fn random_rotation(rng: &mut Rng) -> Mat3 {
    let axis = [rng.sym(1.0), rng.sym(1.0), rng.sym(1.0) + 0.1];
    PointOp::rotation(axis, 360.0 * rng.next()).matrix
}

type Atoms = (Vec<[f64; 3]>, Vec<i64>);

/// Test-local closure of generator matrices (all products until nothing new).
fn group(gens: &[PointOp]) -> Vec<Mat3> {
    let mut all = vec![IDENTITY];
    loop {
        let mut grew = false;
        for i in 0..all.len() {
            for g in gens {
                let p = mat_mul(&g.matrix, &all[i]);
                if !all.iter().any(|m| max_abs_diff(m, &p) < 1e-9) {
                    all.push(p);
                    grew = true;
                }
            }
        }
        if !grew {
            return all;
        }
        assert!(all.len() <= 500);
    }
}

/// Orbits of the seeds (position, element) under the group; coinciding images merged.
fn orbit(gens: &[PointOp], seeds: &[([f64; 3], i64)]) -> Atoms {
    let g = group(gens);
    let mut p: Vec<[f64; 3]> = Vec::new();
    let mut z = Vec::new();
    for (s, e) in seeds {
        for m in &g {
            let q = mat_vec(m, s);
            if !p.iter().any(|x| norm(&sub(x, &q)) < 1e-6) {
                p.push(q);
                z.push(*e);
            }
        }
    }
    (p, z)
}

const ZAX: [f64; 3] = [0.0, 0.0, 1.0];
const XAX: [f64; 3] = [1.0, 0.0, 0.0];

fn cn(n: usize) -> PointOp {
    PointOp::rotation(ZAX, 360.0 / n as f64)
}

/// Four generic seeds of different elements (four, so that even C1 is not planar).
fn seeds() -> Vec<([f64; 3], i64)> {
    vec![
        ([1.31, 0.42, 0.73], 6),
        ([-0.57, 1.93, -0.38], 8),
        ([2.2, -0.9, 1.6], 1),
        ([0.35, -1.45, -2.1], 7),
    ]
}

/// Orbits of the seeds, with the seeds nudged (deterministically) until every orbit is
/// regular (no seed on a symmetry element) and atoms stay ≥ 0.3 Å apart.
fn generic_orbit(gens: &[PointOp], seeds: &[([f64; 3], i64)]) -> Atoms {
    let h = group(gens).len();
    let mut rng = Rng(h as u64);
    // Large groups need seeds further out to keep their images apart.
    let scale = (h as f64 / 12.0).max(1.0);
    let mut s: Vec<([f64; 3], i64)> = seeds
        .iter()
        .map(|(p, e)| ([p[0] * scale, p[1] * scale, p[2] * scale], *e))
        .collect();
    for _ in 0..100 {
        let atoms = orbit(gens, &s);
        let n = atoms.0.len();
        let min_d = (0..n)
            .flat_map(|i| (0..i).map(move |j| (i, j)))
            .map(|(i, j)| norm(&sub(&atoms.0[i], &atoms.0[j])))
            .fold(f64::INFINITY, f64::min);
        if n == h * s.len() && min_d >= 0.3 {
            return atoms;
        }
        for (p, _) in s.iter_mut() {
            for c in p.iter_mut() {
                *c += 0.2 * rng.sym(1.0);
            }
        }
    }
    let atoms = orbit(gens, &s);
    panic!("no generic seeds found: h {h}, {} atoms", atoms.0.len());
}

fn phi() -> f64 {
    (1.0 + 5f64.sqrt()) / 2.0
}

fn rot_group_t() -> Vec<PointOp> {
    vec![
        PointOp::rotation([1.0, 1.0, 1.0], 120.0),
        PointOp::rotation(ZAX, 180.0),
    ]
}
fn rot_group_o() -> Vec<PointOp> {
    vec![PointOp::rotation([1.0, 1.0, 1.0], 120.0), cn(4)]
}
fn rot_group_i() -> Vec<PointOp> {
    vec![
        PointOp::rotation([0.0, 1.0, phi()], 72.0),
        PointOp::rotation([1.0, 1.0, 1.0], 120.0),
    ]
}

fn sizes(sym: &Symmetry) -> Vec<usize> {
    let mut s: Vec<usize> = sym.classes.iter().map(|c| c.len()).collect();
    s.sort_unstable();
    s
}

fn sorted(mut v: Vec<usize>) -> Vec<usize> {
    v.sort_unstable();
    v
}

/// Class sizes of Cnv and Dn (common practice: E, C2 for even n, pairs C_n^±k, two classes
/// of n/2 reflections or C2 axes for even n, one of n for odd n).
fn dihedral_classes(n: usize) -> Vec<usize> {
    let mut v = vec![1];
    if n.is_multiple_of(2) {
        v.push(1);
        v.extend(std::iter::repeat_n(2, n / 2 - 1));
        v.extend([n / 2, n / 2]);
    } else {
        v.extend(std::iter::repeat_n(2, (n - 1) / 2));
        v.push(n);
    }
    v
}

fn doubled(v: Vec<usize>) -> Vec<usize> {
    v.iter().chain(v.iter()).copied().collect()
}

/// Detect, then check everything a consumer relies on; returns the result.
fn check(atoms: &Atoms, name: &str, order: usize, class_sizes: Vec<usize>) -> Symmetry {
    let (p, z) = atoms;
    let sym =
        find_point_group(p, z, &DetectOptions::default()).unwrap_or_else(|e| panic!("{name}: {e}"));
    assert_eq!(sym.point_group, name);
    assert_eq!(sym.order(), order, "{name}");
    assert_eq!(sizes(&sym), sorted(class_sizes), "{name}: classes");
    check_consistency(p, z, &sym, 0.01);
    sym
}

fn check_consistency(p: &[[f64; 3]], z: &[i64], sym: &Symmetry, tol: f64) {
    let name = &sym.point_group;
    assert!(
        sym.ops[0].approx_eq(&PointOp::identity(), 1e-12),
        "{name}: E first"
    );
    assert_eq!(sym.classes[0], vec![0]);
    // Classes partition the operations.
    let mut all: Vec<usize> = sym.classes.concat();
    all.sort_unstable();
    assert_eq!(all, (0..sym.ops.len()).collect::<Vec<_>>());
    // The operations form a group.
    for a in &sym.ops {
        for b in &sym.ops {
            let m = mat_mul(&a.matrix, &b.matrix);
            assert!(
                sym.ops.iter().any(|o| max_abs_diff(&o.matrix, &m) < 1e-9),
                "{name}"
            );
        }
    }
    // The frame is a rotation.
    let f = sym.frame;
    assert!((crate::ops::det(&f) - 1.0).abs() < 1e-9);
    assert!(max_abs_diff(&mat_mul(&f, &transpose(&f)), &IDENTITY) < 1e-9);
    // Permutations agree with the operations and elements.
    assert_eq!(sym.verified.len(), sym.permutations.len());
    assert_eq!(sym.verified[0], 0);
    for (&k, perm) in sym.verified.iter().zip(&sym.permutations) {
        for (i, &j) in perm.iter().enumerate() {
            let x = sub(&p[i], &sym.center);
            let y = sub(&p[j as usize], &sym.center);
            let d = norm(&sub(&sym.ops[k].apply(&x), &y));
            assert!(
                d <= tol && d <= sym.max_deviation + 1e-12,
                "{name}: op {k} atom {i}"
            );
            assert_eq!(z[i], z[j as usize]);
        }
    }
}

/// Random rotation, translation and atom permutation.
fn scramble(atoms: &Atoms, rng: &mut Rng) -> Atoms {
    let r = random_rotation(rng);
    let t = [
        rng.sym(1.0) * 10.0,
        rng.sym(1.0) * 10.0,
        rng.sym(1.0) * 10.0,
    ];
    let n = atoms.0.len();
    let mut idx: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        let j = (rng.next() * (i + 1) as f64) as usize % (i + 1);
        idx.swap(i, j);
    }
    let p = idx
        .iter()
        .map(|&i| {
            let q = mat_vec(&r, &atoms.0[i]);
            [q[0] + t[0], q[1] + t[1], q[2] + t[2]]
        })
        .collect();
    let z = idx.iter().map(|&i| atoms.1[i]).collect();
    (p, z)
}

/// Each coordinate displaced uniformly within ±0.005/√3 Å (|δ| ≤ 0.005 Å).
fn perturb(atoms: &Atoms, rng: &mut Rng) -> Atoms {
    let a = 0.005 / 3f64.sqrt();
    let p = atoms
        .0
        .iter()
        .map(|q| {
            [
                q[0] + a * rng.sym(1.0),
                q[1] + a * rng.sym(1.0),
                q[2] + a * rng.sym(1.0),
            ]
        })
        .collect();
    (p, atoms.1.clone())
}

fn check_all_ways(atoms: &Atoms, name: &str, order: usize, class_sizes: Vec<usize>) {
    check(atoms, name, order, class_sizes.clone());
    let mut rng = Rng(order as u64 * 31 + atoms.0.len() as u64);
    let moved = scramble(atoms, &mut rng);
    check(&moved, name, order, class_sizes);
}

fn axial_gens(kind: &str, n: usize) -> Vec<PointOp> {
    let c2x = PointOp::rotation(XAX, 180.0);
    let sh = PointOp::reflection(ZAX);
    let sv = PointOp::reflection([0.0, 1.0, 0.0]);
    let half = std::f64::consts::PI / (2 * n) as f64;
    let sd = PointOp::reflection([-half.sin(), half.cos(), 0.0]);
    match kind {
        "C" => vec![cn(n)],
        "Cv" => vec![cn(n), sv],
        "Ch" => vec![cn(n), sh],
        "S" => vec![PointOp::improper(ZAX, 180.0 / n as f64)],
        "D" => vec![cn(n), c2x],
        "Dh" => vec![cn(n), c2x, sh],
        "Dd" => vec![cn(n), c2x, sd],
        _ => unreachable!(),
    }
}

#[test]
fn test_axial_families_for_n_2_to_12_and_24() {
    for n in (2..=12).chain([24]) {
        let s = seeds();
        let ones = |k: usize| vec![1usize; k];
        check_all_ways(
            &generic_orbit(&axial_gens("C", n), &s),
            &format!("C{n}"),
            n,
            ones(n),
        );
        check_all_ways(
            &generic_orbit(&axial_gens("Cv", n), &s),
            &format!("C{n}v"),
            2 * n,
            dihedral_classes(n),
        );
        check_all_ways(
            &generic_orbit(&axial_gens("Ch", n), &s),
            &format!("C{n}h"),
            2 * n,
            ones(2 * n),
        );
        // S2n: the group generated by S_2n (order 2n).
        check_all_ways(
            &generic_orbit(&axial_gens("S", n), &s),
            &format!("S{}", 2 * n),
            2 * n,
            ones(2 * n),
        );
        check_all_ways(
            &generic_orbit(&axial_gens("D", n), &s),
            &format!("D{n}"),
            2 * n,
            dihedral_classes(n),
        );
        check_all_ways(
            &generic_orbit(&axial_gens("Dh", n), &s),
            &format!("D{n}h"),
            4 * n,
            doubled(dihedral_classes(n)),
        );
        // Dnd: like D2n for even n, Dn × Ci for odd n.
        let dd = if n % 2 == 0 {
            dihedral_classes(2 * n)
        } else {
            doubled(dihedral_classes(n))
        };
        check_all_ways(
            &generic_orbit(&axial_gens("Dd", n), &s),
            &format!("D{n}d"),
            4 * n,
            dd,
        );
    }
}

#[test]
fn test_low_symmetry_groups() {
    let s = seeds();
    check_all_ways(&generic_orbit(&[], &s), "C1", 1, vec![1]);
    check_all_ways(
        &generic_orbit(&[PointOp::reflection([0.3, 0.2, 0.9])], &s),
        "Cs",
        2,
        vec![1, 1],
    );
    check_all_ways(
        &generic_orbit(&[PointOp::inversion()], &s),
        "Ci",
        2,
        vec![1, 1],
    );
}

#[test]
fn test_polyhedral_groups_from_seeds() {
    let s = seeds();
    // Source: Cotton, appendix: T (E, 4C3, 4C3^2, 3C2), Td, Th, O, Oh, I, Ih class sizes.
    check_all_ways(
        &generic_orbit(&rot_group_t(), &s),
        "T",
        12,
        vec![1, 4, 4, 3],
    );
    let mut td = rot_group_t();
    td.push(PointOp::reflection([1.0, -1.0, 0.0]));
    check_all_ways(&generic_orbit(&td, &s), "Td", 24, vec![1, 8, 3, 6, 6]);
    let mut th = rot_group_t();
    th.push(PointOp::inversion());
    check_all_ways(
        &generic_orbit(&th, &s),
        "Th",
        24,
        vec![1, 4, 4, 3, 1, 4, 4, 3],
    );
    check_all_ways(
        &generic_orbit(&rot_group_o(), &s),
        "O",
        24,
        vec![1, 8, 3, 6, 6],
    );
    let mut oh = rot_group_o();
    oh.push(PointOp::inversion());
    check_all_ways(
        &generic_orbit(&oh, &s),
        "Oh",
        48,
        vec![1, 8, 6, 6, 3, 1, 6, 8, 3, 6],
    );
    check_all_ways(
        &generic_orbit(&rot_group_i(), &s[..2]),
        "I",
        60,
        vec![1, 12, 12, 20, 15],
    );
    let mut ih = rot_group_i();
    ih.push(PointOp::inversion());
    check_all_ways(
        &generic_orbit(&ih, &s[..2]),
        "Ih",
        120,
        doubled(vec![1, 12, 12, 20, 15]),
    );
}

fn water() -> Atoms {
    // O–H 0.9572 Å, H–O–H 104.52° (from memory).
    let h = (104.52f64 / 2.0).to_radians();
    (
        vec![
            [0.0, 0.0, 0.0],
            [0.9572 * h.sin(), 0.9572 * h.cos(), 0.0],
            [-0.9572 * h.sin(), 0.9572 * h.cos(), 0.0],
        ],
        vec![8, 1, 1],
    )
}

fn ring(n: usize, r: f64, z: f64, phase_deg: f64, e: i64) -> Atoms {
    let p = (0..n)
        .map(|k| {
            let a = (phase_deg + 360.0 * k as f64 / n as f64).to_radians();
            [r * a.cos(), r * a.sin(), z]
        })
        .collect();
    (p, vec![e; n])
}

fn join(parts: &[Atoms]) -> Atoms {
    let mut p = Vec::new();
    let mut z = Vec::new();
    for (a, b) in parts {
        p.extend_from_slice(a);
        z.extend_from_slice(b);
    }
    (p, z)
}

fn benzene() -> Atoms {
    // C–C 1.39 Å, C–H 1.09 Å (from memory).
    join(&[ring(6, 1.39, 0.0, 0.0, 6), ring(6, 2.48, 0.0, 0.0, 1)])
}

fn sf6() -> Atoms {
    // S–F 1.56 Å (from memory).
    let f = 1.56;
    (
        vec![
            [0.0; 3],
            [f, 0.0, 0.0],
            [-f, 0.0, 0.0],
            [0.0, f, 0.0],
            [0.0, -f, 0.0],
            [0.0, 0.0, f],
            [0.0, 0.0, -f],
        ],
        vec![16, 9, 9, 9, 9, 9, 9],
    )
}

fn c60() -> Atoms {
    // Truncated icosahedron: the orbit of (0, 1, 3φ) under I, scaled to ~1.4 Å edges.
    let s = 0.7;
    orbit(&rot_group_i(), &[([0.0, s, 3.0 * phi() * s], 6)])
}

#[test]
fn test_textbook_molecules() {
    // Source for the groups: Cotton, ch. 3 examples (water C2v, NH3 C3v, CH4 Td, SF6 Oh,
    // benzene D6h, ferrocene D5h/D5d, allene D2d, ethane D3d, C60 Ih) — common practice.
    check_all_ways(&water(), "C2v", 4, vec![1, 1, 1, 1]);
    let nh3 = join(&[
        (vec![[0.0, 0.0, 0.0]], vec![7]),
        ring(3, 0.94, -0.38, 0.0, 1),
    ]);
    check_all_ways(&nh3, "C3v", 6, vec![1, 2, 3]);
    // Cnv, odd n: x lies in a σv plane, here the plane of an H and the C3 axis.
    let s = find_point_group(&nh3.0, &nh3.1, &DetectOptions::default()).unwrap();
    let in_plane = (1..4).any(|i| {
        let h = sub(&nh3.0[i], &s.center);
        let t = dot(&h, &s.frame[2]);
        let q = crate::ops::normalize(&[
            h[0] - t * s.frame[2][0],
            h[1] - t * s.frame[2][1],
            h[2] - t * s.frame[2][2],
        ])
        .unwrap();
        (dot(&q, &s.frame[0]).abs() - 1.0).abs() < 1e-9
    });
    assert!(in_plane);
    let a = 1.089 / 3f64.sqrt();
    let ch4 = (
        vec![[0.0; 3], [a, a, a], [a, -a, -a], [-a, a, -a], [-a, -a, a]],
        vec![6, 1, 1, 1, 1],
    );
    check_all_ways(&ch4, "Td", 24, vec![1, 8, 3, 6, 6]);
    check_all_ways(&sf6(), "Oh", 48, vec![1, 8, 6, 6, 3, 1, 6, 8, 3, 6]);
    check_all_ways(&benzene(), "D6h", 24, doubled(dihedral_classes(6)));
    let fe = (vec![[0.0; 3]], vec![26]);
    let eclipsed = join(&[
        fe.clone(),
        ring(5, 1.22, 1.66, 0.0, 6),
        ring(5, 1.22, -1.66, 0.0, 6),
    ]);
    check_all_ways(&eclipsed, "D5h", 20, doubled(dihedral_classes(5)));
    let staggered = join(&[
        fe,
        ring(5, 1.22, 1.66, 0.0, 6),
        ring(5, 1.22, -1.66, 36.0, 6),
    ]);
    check_all_ways(&staggered, "D5d", 20, doubled(dihedral_classes(5)));
    let allene = (
        vec![
            [0.0, 0.0, 0.0],
            [0.0, 0.0, 1.31],
            [0.0, 0.0, -1.31],
            [0.93, 0.0, 1.87],
            [-0.93, 0.0, 1.87],
            [0.0, 0.93, -1.87],
            [0.0, -0.93, -1.87],
        ],
        vec![6, 6, 6, 1, 1, 1, 1],
    );
    check_all_ways(&allene, "D2d", 8, vec![1, 2, 1, 2, 2]);
    let ethane = join(&[
        (vec![[0.0, 0.0, 0.765], [0.0, 0.0, -0.765]], vec![6, 6]),
        ring(3, 1.02, 1.16, 0.0, 1),
        ring(3, 1.02, -1.16, 60.0, 1),
    ]);
    check_all_ways(&ethane, "D3d", 12, doubled(dihedral_classes(3)));
    let c60 = c60();
    assert_eq!(c60.0.len(), 60);
    check_all_ways(&c60, "Ih", 120, doubled(vec![1, 12, 12, 20, 15]));
    // B12H12(2-): icosahedron of B (B–B ≈ 1.78 Å) with radial H (from memory).
    let ico: Vec<[f64; 3]> = orbit(&rot_group_i(), &[([0.0, 1.0, phi()], 5)]).0;
    assert_eq!(ico.len(), 12);
    let mut b12 = (Vec::new(), Vec::new());
    for v in &ico {
        let u = crate::ops::normalize(v).unwrap();
        let rb = 0.89 * norm(v);
        b12.0.push([u[0] * rb, u[1] * rb, u[2] * rb]);
        b12.1.push(5);
        b12.0
            .push([u[0] * (rb + 1.2), u[1] * (rb + 1.2), u[2] * (rb + 1.2)]);
        b12.1.push(1);
    }
    check_all_ways(&b12, "Ih", 120, doubled(vec![1, 12, 12, 20, 15]));
}

#[test]
fn test_linear_molecules_and_single_atom() {
    let co2 = (
        vec![[0.0, 0.0, 0.0], [0.0, 0.0, 1.16], [0.0, 0.0, -1.16]],
        vec![6, 8, 8],
    );
    // Reported through D13d / C13v (DEVELOPERS.md): classes of D13 doubled, of C13v.
    check_all_ways(&co2, "D∞h", 52, doubled(dihedral_classes(13)));
    let hcn = (
        vec![[0.0, 0.0, -1.07], [0.0, 0.0, 0.0], [0.0, 0.0, 1.16]],
        vec![1, 6, 7],
    );
    check_all_ways(&hcn, "C∞v", 26, dihedral_classes(13));
    let opts = DetectOptions {
        linear_n: 5,
        ..DetectOptions::default()
    };
    let s = find_point_group(&hcn.0, &hcn.1, &opts).unwrap();
    assert_eq!((s.point_group.as_str(), s.order()), ("C∞v", 10));
    let one = find_point_group(&[[1.0, 2.0, 3.0]], &[26], &DetectOptions::default()).unwrap();
    assert_eq!(one.point_group, "K_h");
    assert_eq!(one.center, [1.0, 2.0, 3.0]);
    // K_h through C13 × Ci: E, 6 pairs C(±θ), i, 6 pairs i·C(±θ) (DEVELOPERS.md).
    assert_eq!(one.order(), 26);
    assert_eq!(one.canonical_index, (0..26).collect::<Vec<_>>());
    assert_eq!(one.verified, (0..26).collect::<Vec<_>>());
    assert_eq!(one.permutations, vec![vec![0u32]; 26]);
    assert_eq!(one.max_deviation, 0.0);
    let mut sizes: Vec<usize> = one.classes.iter().map(Vec::len).collect();
    sizes.sort_unstable();
    assert_eq!(sizes, [vec![1, 1], vec![2; 12]].concat());
    assert_eq!(one.ops.iter().filter(|o| o.proper).count(), 13);
    let g = canonical::group_data(Family::Kh(13)).unwrap();
    assert_eq!(one.class_of, g.class_of);
    assert_eq!(one.generators, g.generators);
    let one5 = find_point_group(&[[0.0; 3]], &[2], &opts).unwrap();
    assert_eq!((one5.point_group.as_str(), one5.order()), ("K_h", 10));
    // Two atoms: always linear.
    let h2 = (vec![[0.3, 0.1, 0.0], [-0.3, -0.1, 0.0]], vec![1, 1]);
    assert_eq!(
        find_point_group(&h2.0, &h2.1, &DetectOptions::default())
            .unwrap()
            .point_group,
        "D∞h"
    );
}

#[test]
fn test_noise_kept_at_tol_0_01_and_lost_at_0_001() {
    let mut rng = Rng(11);
    // Water shows that three atoms keep the group; the tight check needs more atoms than a
    // best fit can absorb, so it runs on the others.
    let w = perturb(&water(), &mut rng);
    let s = find_point_group(&w.0, &w.1, &DetectOptions::default()).unwrap();
    assert_eq!(s.point_group, "C2v");
    for (atoms, name) in [(benzene(), "D6h"), (c60(), "Ih"), (sf6(), "Oh")] {
        let noisy = perturb(&atoms, &mut rng);
        let s = find_point_group(&noisy.0, &noisy.1, &DetectOptions::default()).unwrap();
        assert_eq!(s.point_group, name);
        assert!(s.max_deviation > 1e-4 && s.max_deviation <= 0.01);
        check_consistency(&noisy.0, &noisy.1, &s, 0.01);
        let tight = DetectOptions {
            tol: 0.001,
            ..DetectOptions::default()
        };
        let s2 = find_point_group(&noisy.0, &noisy.1, &tight).unwrap();
        assert!(
            s2.order() < s.order(),
            "{name} at 0.001: {}",
            s2.point_group
        );
    }
}

#[test]
fn test_water_lies_in_the_yz_plane_in_any_orientation() {
    let mut rng = Rng(5);
    for _ in 0..10 {
        let w = scramble(&water(), &mut rng);
        let s = find_point_group(&w.0, &w.1, &DetectOptions::default()).unwrap();
        let o = w.1.iter().position(|&z| z == 8).unwrap();
        let h: Vec<usize> = (0..3).filter(|&i| w.1[i] == 1).collect();
        let normal = crate::ops::normalize(&crate::ops::cross(
            &sub(&w.0[h[0]], &w.0[o]),
            &sub(&w.0[h[1]], &w.0[o]),
        ))
        .unwrap();
        // x ⟂ plane (Mulliken; DEVELOPERS.md C2v rule), z along the C2 (through O).
        assert!((dot(&s.frame[0], &normal).abs() - 1.0).abs() < 1e-9);
        let to_o = crate::ops::normalize(&sub(&w.0[o], &s.center)).unwrap();
        assert!((dot(&s.frame[2], &to_o).abs() - 1.0).abs() < 1e-9);
    }
}

#[test]
fn test_benzene_x_axis_passes_through_a_carbon() {
    let mut rng = Rng(9);
    let b = scramble(&benzene(), &mut rng);
    let s = find_point_group(&b.0, &b.1, &DetectOptions::default()).unwrap();
    let through_c = (0..b.0.len()).filter(|&i| b.1[i] == 6).any(|i| {
        let u = crate::ops::normalize(&sub(&b.0[i], &s.center)).unwrap();
        (dot(&u, &s.frame[0]).abs() - 1.0).abs() < 1e-9
    });
    assert!(through_c);
    // z ⟂ ring plane.
    let u = crate::ops::normalize(&sub(&b.0[0], &s.center)).unwrap();
    assert!(dot(&u, &s.frame[2]).abs() < 1e-9);
}

#[test]
fn test_planar_d2h_molecule_lies_in_yz_with_z_along_cc() {
    // Ethylene, C=C 1.33 Å along the input x axis (from memory).
    let eth = (
        vec![
            [0.665, 0.0, 0.0],
            [-0.665, 0.0, 0.0],
            [1.23, 0.92, 0.0],
            [1.23, -0.92, 0.0],
            [-1.23, 0.92, 0.0],
            [-1.23, -0.92, 0.0],
        ],
        vec![6, 6, 1, 1, 1, 1],
    );
    let s = check(&eth, "D2h", 8, vec![1; 8]);
    assert!((s.frame[0][2].abs() - 1.0).abs() < 1e-9, "x ⟂ plane");
    assert!((s.frame[2][0].abs() - 1.0).abs() < 1e-9, "z along C=C");
}

#[test]
fn test_c4v_x_lies_in_the_mirror_with_more_atoms() {
    // The diagonal planes carry the apex and four H; the axial planes the apex and two F:
    // x must lie along a diagonal (DEVELOPERS.md, Cnv rule for even n).
    let mol = join(&[
        (vec![[0.0, 0.0, 0.5]], vec![54]),
        ring(4, 1.5, 0.0, 0.0, 9),
        ring(4, 1.2, -0.6, 45.0, 1),
        ring(4, 2.1, 0.7, 45.0, 1),
    ]);
    let s = check(&mol, "C4v", 8, dihedral_classes(4));
    let h = std::f64::consts::FRAC_1_SQRT_2;
    assert!((s.frame[0][0].abs() - h).abs() < 1e-9 && (s.frame[0][1].abs() - h).abs() < 1e-9);
    // The other way round: more atoms on the axial planes puts x along an input axis.
    let mol = join(&[
        (vec![[0.0, 0.0, 0.5]], vec![54]),
        ring(4, 1.5, 0.0, 45.0, 9),
        ring(4, 1.2, -0.6, 0.0, 1),
        ring(4, 2.1, 0.7, 0.0, 1),
    ]);
    let s = check(&mol, "C4v", 8, dihedral_classes(4));
    assert!(s.frame[0][0].abs() > 1.0 - 1e-9 || s.frame[0][1].abs() > 1.0 - 1e-9);
}

#[test]
fn test_icosahedral_frame_puts_c5_along_0_1_phi() {
    let mut rng = Rng(21);
    let c = scramble(&c60(), &mut rng);
    let s = find_point_group(&c.0, &c.1, &DetectOptions::default()).unwrap();
    let n = (1.0 + phi() * phi()).sqrt();
    let targets: Vec<[f64; 3]> = vec![[0.0, 1.0, phi()], [1.0, phi(), 0.0], [phi(), 0.0, 1.0]];
    let mut count = 0;
    for op in &s.ops {
        if op.proper && op.order() == Some(5) {
            let w = mat_vec(&s.frame, &op.axis);
            let aw = [w[0].abs(), w[1].abs(), w[2].abs()];
            assert!(targets.iter().any(|t| (dot(&aw, t) / n - 1.0).abs() < 1e-9));
            count += 1;
        }
    }
    assert_eq!(count, 24); // 12C5 + 12C5^2 (Source: Cotton, appendix, I)
}

#[test]
fn test_large_cluster_verifies_generators_only() {
    // 25 200-atom icosahedral cluster: 210 orbits of 120 (above the sampling threshold).
    let mut rng = Rng(4);
    let mut gens = rot_group_i();
    gens.push(PointOp::inversion());
    let seeds: Vec<([f64; 3], i64)> = (0..210)
        .map(|k| {
            let r = 3.0 + 0.1 * k as f64;
            let d = crate::ops::normalize(&[rng.sym(1.0), rng.sym(1.0), rng.sym(1.0)]).unwrap();
            ([d[0] * r, d[1] * r, d[2] * r], 6 + (k % 2) as i64)
        })
        .collect();
    let atoms = orbit(&gens, &seeds);
    assert_eq!(atoms.0.len(), 25_200);
    let opts = DetectOptions {
        verify_all_limit: 1_000_000,
        ..DetectOptions::default()
    };
    let s = find_point_group(&atoms.0, &atoms.1, &opts).unwrap();
    assert_eq!(s.point_group, "Ih");
    let mut expect = vec![0];
    expect.extend(&s.generators);
    assert_eq!(s.verified, expect);
    assert!(!s.generators.is_empty());
    check_consistency(&atoms.0, &atoms.1, &s, 0.01);
}

#[test]
fn test_single_defect_in_a_large_cluster_lowers_the_group() {
    // 6000 atoms (above the screening threshold): an Ih cluster with one atom of another
    // element. Whatever the sampled atoms, the answer must rest on all atoms.
    let mut rng = Rng(8);
    let mut gens = rot_group_i();
    gens.push(PointOp::inversion());
    let seeds: Vec<([f64; 3], i64)> = (0..50)
        .map(|k| {
            let r = 4.0 + 0.37 * k as f64;
            let d = crate::ops::normalize(&[rng.sym(1.0), rng.sym(1.0), rng.sym(1.0)]).unwrap();
            ([d[0] * r, d[1] * r, d[2] * r], 6)
        })
        .collect();
    let (p, mut z) = orbit(&gens, &seeds);
    assert_eq!(p.len(), 6000);
    let d = DetectOptions::default();
    assert_eq!(find_point_group(&p, &z, &d).unwrap().point_group, "Ih");
    for defect in [17, 2500, 5999] {
        let keep = z[defect];
        z[defect] = 14;
        let s = find_point_group(&p, &z, &d).unwrap();
        // Generic seeds: no operation but E keeps the odd atom in place.
        assert_eq!(s.point_group, "C1", "defect at {defect}");
        z[defect] = keep;
    }
}

#[test]
fn test_bad_input_is_reported_not_panicked() {
    let d = DetectOptions::default();
    assert_eq!(find_point_group(&[], &[], &d), Err(Error::EmptyStructure));
    assert!(matches!(
        find_point_group(&[[0.0; 3]], &[1, 1], &d),
        Err(Error::LengthMismatch { .. })
    ));
    assert_eq!(
        find_point_group(&[[0.0, f64::NAN, 0.0]], &[1], &d),
        Err(Error::NonFiniteCoordinate { atom: 0 })
    );
    assert!(matches!(
        find_point_group(&[[0.0; 3], [2e6, 0.0, 0.0]], &[1, 1], &d),
        Err(Error::CoordinateTooLarge { atom: 1, .. })
    ));
    assert!(matches!(
        find_point_group(&[[0.0; 3]], &[200], &d),
        Err(Error::UnknownAtomicNumber {
            atom: 0,
            number: 200
        })
    ));
    for tol in [0.0, -0.1, f64::NAN, f64::INFINITY] {
        let o = DetectOptions {
            tol,
            ..DetectOptions::default()
        };
        assert!(matches!(
            find_point_group(&[[0.0; 3]], &[1], &o),
            Err(Error::BadTolerance { .. })
        ));
    }
    for linear_n in [0, 1, 2, 12] {
        let o = DetectOptions {
            linear_n,
            ..DetectOptions::default()
        };
        assert!(matches!(
            find_point_group(&[[0.0; 3]], &[1], &o),
            Err(Error::InvalidArgument { .. })
        ));
    }
    let overlap = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [1.0, 0.004, 0.0]];
    assert!(matches!(
        find_point_group(&overlap, &[6, 1, 8], &d),
        Err(Error::OverlappingAtoms {
            first: 1,
            second: 2,
            ..
        })
    ));
}

#[test]
fn test_huge_coordinates_and_collinear_planar_inputs_do_not_panic() {
    let d = DetectOptions::default();
    // Far from the origin: translation does not matter.
    let (p, z) = water();
    let far: Vec<[f64; 3]> = p
        .iter()
        .map(|q| [q[0] + 9e5, q[1] - 9e5, q[2] + 5e5])
        .collect();
    assert_eq!(find_point_group(&far, &z, &d).unwrap().point_group, "C2v");
    // A long chain of distinct elements: C∞v.
    let chain: Vec<[f64; 3]> = (0..30).map(|k| [0.0, 1.5 * k as f64, 0.0]).collect();
    let zs: Vec<i64> = (0..30).map(|k| 1 + k as i64).collect();
    assert_eq!(
        find_point_group(&chain, &zs, &d).unwrap().point_group,
        "C∞v"
    );
    // A planar scalene triangle: Cs with the plane as mirror.
    let tri = [[0.0, 0.0, 0.0], [1.3, 0.0, 0.0], [0.4, 1.7, 0.0]];
    let s = find_point_group(&tri, &[6, 7, 8], &d).unwrap();
    assert_eq!(s.point_group, "Cs");
    assert!((s.frame[2][2].abs() - 1.0).abs() < 1e-9);
}

/// Generators of every family for the pruning test: (name, generators), axial n in 2..=6.
fn every_family() -> Vec<(String, Vec<PointOp>)> {
    let mut out = vec![
        ("C1".to_string(), vec![]),
        ("Cs".to_string(), vec![PointOp::reflection([0.3, 0.2, 0.9])]),
        ("Ci".to_string(), vec![PointOp::inversion()]),
    ];
    for n in 2..=6 {
        for (kind, name) in [
            ("C", format!("C{n}")),
            ("Cv", format!("C{n}v")),
            ("Ch", format!("C{n}h")),
            ("S", format!("S{}", 2 * n)),
            ("D", format!("D{n}")),
            ("Dh", format!("D{n}h")),
            ("Dd", format!("D{n}d")),
        ] {
            out.push((name, axial_gens(kind, n)));
        }
    }
    let with = |mut g: Vec<PointOp>, extra: PointOp| {
        g.push(extra);
        g
    };
    out.push(("T".into(), rot_group_t()));
    out.push((
        "Td".into(),
        with(rot_group_t(), PointOp::reflection([1.0, -1.0, 0.0])),
    ));
    out.push(("Th".into(), with(rot_group_t(), PointOp::inversion())));
    out.push(("O".into(), rot_group_o()));
    out.push(("Oh".into(), with(rot_group_o(), PointOp::inversion())));
    out.push(("I".into(), rot_group_i()));
    out.push(("Ih".into(), with(rot_group_i(), PointOp::inversion())));
    out
}

/// A random structure of the group generated by `gens`, built to defeat shortcuts of the
/// search: `style` 0 puts every orbit at one radius (windows hold every atom of an element,
/// distances repeat), 1 puts orbits at radii a fraction of tol apart (shells that nearly
/// merge), 2 moves every atom by up to 0.45·tol (images near the tolerance), 3 all three.
/// `None` when the random seeds put two atoms closer than 0.3 Å.
fn adversarial(gens: &[PointOp], style: u32, rng: &mut Rng, tol: f64) -> Option<Atoms> {
    let g = group(gens);
    let k = if g.len() <= 2 { 4 } else { 2 } + (rng.next() * 3.0) as usize;
    let scale = (g.len() as f64 / 12.0).max(1.0).sqrt() * 2.0;
    let mut seeds: Vec<([f64; 3], i64)> = Vec::new();
    for s in 0..k {
        let d = crate::ops::normalize(&rng.point(1.0))?;
        let radius = match style {
            0 | 3 => scale,
            1 => scale * (1.0 + 0.6 * s as f64 * tol / scale),
            _ => scale * (0.6 + 0.8 * rng.next()),
        };
        let radius = if style == 3 {
            radius + 0.6 * s as f64 * tol
        } else {
            radius
        };
        // One element for all orbits half of the time: nothing tells the shells apart.
        let z = if rng.next() < 0.5 { 6 } else { 6 + s as i64 };
        seeds.push(([d[0] * radius, d[1] * radius, d[2] * radius], z));
    }
    let (mut p, z) = orbit(gens, &seeds);
    if style >= 2 {
        let amp = 0.45 * tol / 3f64.sqrt();
        for q in p.iter_mut() {
            for c in q.iter_mut() {
                *c += rng.sym(amp);
            }
        }
    }
    let n = p.len();
    for i in 0..n {
        for j in 0..i {
            if norm(&sub(&p[i], &p[j])) < 0.3 {
                return None;
            }
        }
    }
    Some(scramble(&(p, z), rng))
}

#[test]
fn test_pruned_search_finds_the_group_of_the_plain_search() {
    // Random structures of every family built to defeat a pruning shortcut: where the
    // pruned search (with its early exits) answers, it must answer as the plain search does;
    // and it must answer for most of them (else the comparison would say little).
    let opts = DetectOptions::default();
    let mut rng = Rng(2024);
    let (mut compared, mut answered, mut exact) = (0, 0, 0);
    for (name, gens) in every_family() {
        for style in 0..4 {
            for _ in 0..3 {
                let Some((p, z)) = adversarial(&gens, style, &mut rng, opts.tol) else {
                    continue;
                };
                compared += 1;
                let plain = find_point_group_searching(&p, &z, None, &opts, Search::Plain);
                let Ok(fast) = find_point_group_searching(&p, &z, None, &opts, Search::Pruned)
                else {
                    continue;
                };
                answered += 1;
                let Ok(plain) = plain else {
                    panic!(
                        "{name}, style {style}: pruned {}, plain {plain:?}",
                        fast.point_group
                    );
                };
                assert_eq!(fast.point_group, plain.point_group, "{name}, style {style}");
                assert_eq!(fast.order(), plain.order(), "{name}, style {style}");
                assert_eq!(sizes(&fast), sizes(&plain), "{name}, style {style}");
                check_consistency(&p, &z, &fast, opts.tol);
                exact += usize::from(fast.point_group == name);
                // The full detection gives the same.
                let full = find_point_group(&p, &z, &opts).unwrap();
                assert_eq!(full.point_group, fast.point_group);
            }
        }
    }
    assert!(compared > 300, "only {compared} structures compared");
    assert!(
        answered * 10 > compared * 9,
        "pruned search answered {answered} of {compared}"
    );
    // Most keep the group they were built with (single orbits and few atoms can have more).
    assert!(
        exact * 4 > answered * 3,
        "{exact} of {answered} in their own group"
    );
}

/// Orbits of `k` random seeds under the group generated by `gens`, every atom then moved by
/// up to `amp` (uniform in a cube): at a loose tolerance the group's operations become near
/// symmetries, most of which pass the 3·tol screen and fail at tol. Half of the time all
/// orbits share one radius and one element. `None` when two atoms come within 0.3 Å.
fn near_symmetric(gens: &[PointOp], k: usize, amp: f64, rng: &mut Rng) -> Option<Atoms> {
    let g = group(gens);
    let scale = (g.len() as f64 / 12.0).max(1.0).sqrt() * 2.0;
    let one = rng.next() < 0.5;
    let mut seeds: Vec<([f64; 3], i64)> = Vec::new();
    for s in 0..k {
        let d = crate::ops::normalize(&rng.point(1.0))?;
        let radius = if one {
            scale
        } else {
            scale * (0.6 + 0.8 * rng.next())
        };
        let z = if one { 6 } else { 6 + s as i64 % 2 };
        seeds.push(([d[0] * radius, d[1] * radius, d[2] * radius], z));
    }
    let (mut p, z) = orbit(gens, &seeds);
    let a = amp / 3f64.sqrt();
    for q in p.iter_mut() {
        for c in q.iter_mut() {
            *c += rng.sym(a);
        }
    }
    for i in 0..p.len() {
        for j in 0..i {
            if norm(&sub(&p[i], &p[j])) < 0.3 {
                return None;
            }
        }
    }
    Some(scramble(&(p, z), rng))
}

#[test]
fn test_pruned_search_at_a_loose_tolerance_drops_false_candidates() {
    // Noisy orbits of every family at tol = 0.1 Å (as `improper_within` detects a chiral
    // structure at 10 × the tolerance), the noise 0.3–2.5 × tol: many candidates pass the
    // pruned search's 3·tol screen and then fail verification at tol, up to 32 atoms (the
    // early exit) and above (the attempts). Where the pruned search answers, it answers as
    // the plain search does or (rarely) with a larger group verified on every atom, never
    // a smaller one; and it must answer for most structures, rather than give up (it gave
    // up on most of them when a false candidate that failed twice ended the search).
    let opts = DetectOptions {
        tol: 0.1,
        ..DetectOptions::default()
    };
    let mut rng = Rng(20261202);
    let (mut compared, mut answered, mut small, mut large, mut larger) = (0, 0, 0, 0, 0);
    for (name, gens) in every_family() {
        let h = group(&gens).len();
        for _ in 0..6 {
            // 12 to 80 atoms or one orbit: both sides of the early exit's 32.
            let k = ((12.0 + 68.0 * rng.next()) / h as f64).max(1.0) as usize;
            let amp = opts.tol * (0.3 + 2.2 * rng.next());
            let Some((p, z)) = near_symmetric(&gens, k, amp, &mut rng) else {
                continue;
            };
            compared += 1;
            let plain = find_point_group_searching(&p, &z, None, &opts, Search::Plain);
            let Ok(fast) = find_point_group_searching(&p, &z, None, &opts, Search::Pruned) else {
                continue;
            };
            answered += 1;
            if p.len() <= 32 {
                small += 1;
            } else {
                large += 1;
            }
            let Ok(plain) = plain else {
                panic!(
                    "{name}, {} atoms, noise {amp}: pruned {}, plain {plain:?}",
                    p.len(),
                    fast.point_group
                );
            };
            let what = format!("{name}, {} atoms, noise {amp}", p.len());
            check_consistency(&p, &z, &fast, opts.tol);
            if fast.point_group != plain.point_group {
                // The plain search fits a candidate to its probe before testing it at tol and
                // can drop an operation whose ideal form holds on every atom: the pruned
                // search then reports the larger group, every operation verified. Never a
                // smaller one (an operation missed), never another.
                assert!(
                    fast.order() > plain.order()
                        && fast.order() % plain.order() == 0
                        && fast.verified.len() == fast.order(),
                    "{what}: pruned {}, plain {}",
                    fast.point_group,
                    plain.point_group
                );
                larger += 1;
            } else {
                assert_eq!(fast.order(), plain.order(), "{what}");
                assert_eq!(sizes(&fast), sizes(&plain), "{what}");
            }
            let full = find_point_group_with_masses(&p, &z, None, &opts).unwrap();
            assert_eq!(full.point_group, fast.point_group, "{what}");
        }
    }
    assert!(compared > 90, "only {compared} structures compared");
    assert!(
        larger * 20 <= answered,
        "{larger} larger groups of {answered}"
    );
    assert!(
        answered * 10 > compared * 9,
        "pruned search answered {answered} of {compared}"
    );
    assert!(
        small > 20 && large > 20,
        "{small} small and {large} large answered"
    );
}

/// Timing of a large noisy icosahedral cluster in release mode (not part of the suite):
/// `cargo test --release -- --ignored --nocapture timing_large_icosahedral_cluster`.
/// Set GAMMATRACE_TIMING_ATOMS to choose the size (default 1 000 080).
#[test]
#[ignore]
fn timing_large_icosahedral_cluster() {
    use std::time::Instant;
    let target: usize = std::env::var("GAMMATRACE_TIMING_ATOMS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_080);
    let mut gens = rot_group_i();
    gens.push(PointOp::inversion());
    let g = group(&gens);
    assert_eq!(g.len(), 120);
    let mut rng = Rng(1234);
    let n_seeds = target / 120;
    // Uniform in a ball whose volume gives ~3 Å spacing.
    let radius = (n_seeds as f64 * 120.0 * 33.0 * 3.0 / (4.0 * std::f64::consts::PI)).cbrt();
    let mut p = Vec::with_capacity(n_seeds * 120);
    let mut z = Vec::with_capacity(n_seeds * 120);
    for k in 0..n_seeds {
        // A seed whose 120 images stay ≥ 1 Å apart (off every symmetry element).
        let images = loop {
            let q = [rng.sym(1.0), rng.sym(1.0), rng.sym(1.0)];
            if norm(&q) > 1.0 || norm(&q) < 0.05 {
                continue;
            }
            let s = [q[0] * radius, q[1] * radius, q[2] * radius];
            let im: Vec<[f64; 3]> = g.iter().map(|m| mat_vec(m, &s)).collect();
            let ok = (0..120).all(|i| (0..i).all(|j| norm(&sub(&im[i], &im[j])) >= 1.0));
            if ok {
                break im;
            }
        };
        p.extend(images);
        z.extend(std::iter::repeat_n(6 + (k % 2) as i64, 120));
    }
    // Drop whole orbits that happen to come within 0.05 Å of another orbit.
    loop {
        let grid = Grid::build(&p, &z, 0.05).unwrap();
        let Some((_, j, _)) = find_overlap(&grid) else {
            break;
        };
        let k = j / 120;
        p.drain(k * 120..(k + 1) * 120);
        z.drain(k * 120..(k + 1) * 120);
    }
    let atoms = perturb(&(p, z), &mut rng);
    let (p, z) = atoms;
    let n = p.len();
    let t = Instant::now();
    let grid = Grid::build(&p, &z, 0.01).unwrap();
    let t_grid = t.elapsed();
    let t = Instant::now();
    let ov = find_overlap(&grid);
    let t_ov = t.elapsed();
    let c5 = PointOp::rotation([0.0, 1.0, phi()], 72.0);
    let t = Instant::now();
    let mapped = map_atoms(&grid, &p, &z, &c5.matrix, 0.01);
    let t_map = t.elapsed();
    // Best of 5 on one thread (the machine is shared: the minimum is the least disturbed).
    let pool1 = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let mut t_map1 = std::time::Duration::MAX;
    let mut mapped1 = None;
    for _ in 0..5 {
        let t = Instant::now();
        mapped1 = Some(pool1.install(|| map_atoms(&grid, &p, &z, &c5.matrix, 0.01)));
        t_map1 = t_map1.min(t.elapsed());
    }
    let mapped1 = mapped1.unwrap();
    println!(
        "{n} atoms, radius {radius:.0} Å, cell {:.2} Å: grid {:?}, overlap {:?} ({:?}), \
         map C5 {:?} ({:.1} ns/atom; 1 thread, best of 5: {:.1} ns/atom; ok {} {})",
        grid.cell_size(),
        t_grid,
        t_ov,
        ov,
        t_map,
        t_map.as_nanos() as f64 / n as f64,
        t_map1.as_nanos() as f64 / n as f64,
        mapped.is_ok(),
        mapped1.is_ok(),
    );
    let t = Instant::now();
    let s = find_point_group(&p, &z, &DetectOptions::default());
    let t_all = t.elapsed();
    match s {
        Ok(s) => println!(
            "find_point_group: {} (order {}, {} verified, max dev {:.4} Å) in {:?}",
            s.point_group,
            s.order(),
            s.verified.len(),
            s.max_deviation,
            t_all
        ),
        Err(e) => println!("find_point_group failed after {t_all:?}: {e}"),
    }
}

/// Masses of the atoms of `atoms`, standard except the listed atoms, which are ²H.
fn with_deuterium(atoms: &Atoms, deuterated: &[usize]) -> Vec<f64> {
    let mut m = structure::Species::new(&atoms.1, None).unwrap().masses;
    for &i in deuterated {
        m[i] = structure::DEUTERIUM_MASS;
    }
    m
}

#[test]
fn test_isotopologues_are_told_apart_by_mass() {
    // Point groups of the isotopologues: Herzberg, "Infrared and Raman Spectra of Polyatomic
    // Molecules" (1945), from memory: CH2D2 C2v, CH3D C3v, C6H5D C2v, C6D6 D6h, HDO Cs.
    let a = 0.6276; // C–H 1.087 Å along the cube diagonals (common practice)
    let ch4: Atoms = (
        vec![
            [0.0, 0.0, 0.0],
            [a, a, a],
            [a, -a, -a],
            [-a, a, -a],
            [-a, -a, a],
        ],
        vec![6, 1, 1, 1, 1],
    );
    let opts = DetectOptions::default();
    let name = |atoms: &Atoms, d: &[usize]| {
        let m = with_deuterium(atoms, d);
        find_point_group_with_masses(&atoms.0, &atoms.1, Some(&m), &opts)
            .unwrap()
            .point_group
    };
    assert_eq!(name(&ch4, &[]), "Td");
    assert_eq!(name(&ch4, &[3, 4]), "C2v");
    assert_eq!(name(&ch4, &[4]), "C3v");
    assert_eq!(name(&ch4, &[1, 2, 3, 4]), "Td");
    let c6h6 = benzene();
    assert_eq!(name(&c6h6, &[6]), "C2v");
    assert_eq!(name(&c6h6, &(6..12).collect::<Vec<_>>()), "D6h");
    let w = water();
    assert_eq!(name(&w, &[1]), "Cs");
    assert_eq!(name(&w, &[1, 2]), "C2v");

    // The masses weigh the centre: CH3D's centre of mass lies on the C–D bond, towards D.
    let m = with_deuterium(&ch4, &[4]);
    let sym = find_point_group_with_masses(&ch4.0, &ch4.1, Some(&m), &opts).unwrap();
    let total: f64 = m.iter().sum();
    let expect = a * (structure::DEUTERIUM_MASS - m[1]) / total;
    for k in 0..3 {
        let sign = [-1.0, -1.0, 1.0][k];
        assert!(
            (sym.center[k] - sign * expect).abs() < 1e-12,
            "{:?}",
            sym.center
        );
    }
    // Every permutation keeps each atom's species.
    for perm in &sym.permutations {
        for (i, &j) in perm.iter().enumerate() {
            assert_eq!(m[i], m[j as usize]);
        }
    }
    // map_operations refuses an operation that swaps H and D, and accepts it without masses.
    let s4 = ch4_s4_about_z();
    assert!(map_operations(&ch4.0, &ch4.1, Some(&m), [0.0; 3], &[s4], 0.01).is_err());
    assert!(map_operations(&ch4.0, &ch4.1, None, [0.0; 3], &[s4], 0.01).is_ok());
    // Bad masses are reported, not panicked.
    let bad = [12.0, 1.0, 1.0, 1.0, 0.0];
    assert!(matches!(
        find_point_group_with_masses(&ch4.0, &ch4.1, Some(&bad), &opts),
        Err(Error::BadMass { atom: 4, .. })
    ));
}

/// S4 about z of the methane above: (x, y, z) → (y, −x, −z).
fn ch4_s4_about_z() -> Mat3 {
    [[0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], [0.0, 0.0, -1.0]]
}

#[test]
fn test_deviation_of_each_verified_operation_is_its_mapping_distance() {
    // Each verified operation's deviation is what mapping it atom by atom measures, in both
    // verification modes (all operations, or E + the generators), and their largest is
    // max_deviation.
    let mut rng = Rng(29);
    for (atoms, name) in [(benzene(), "D6h"), (c60(), "Ih"), (sf6(), "Oh")] {
        let (p, z) = perturb(&atoms, &mut rng);
        for limit in [DetectOptions::default().verify_all_limit, 0] {
            let opts = DetectOptions {
                verify_all_limit: limit,
                ..DetectOptions::default()
            };
            let s = find_point_group(&p, &z, &opts).unwrap();
            assert_eq!(s.point_group, name);
            assert_eq!(s.deviations.len(), s.verified.len());
            assert_eq!(s.deviations[0], 0.0);
            let mats: Vec<Mat3> = s.verified.iter().map(|&k| s.ops[k].matrix).collect();
            let (_, devs) = map_operations(&p, &z, None, s.center, &mats, opts.tol).unwrap();
            for (k, (a, b)) in s.deviations.iter().zip(&devs).enumerate() {
                assert!((a - b).abs() < 1e-12, "{name}, operation {k}: {a} vs {b}");
            }
            let largest = s.deviations.iter().copied().fold(0.0, f64::max);
            assert_eq!(largest, s.max_deviation);
        }
    }
}

#[test]
fn test_merged_inversion_lookup_gives_the_lookups_own_answers() {
    // Oh and Ih clusters above the size from which the inversion and an odd-order rotation
    // among the generators share one lookup: in both verification modes, every verified
    // permutation and deviation is the one a lookup per atom gives, bit for bit.
    let mut rng = Rng(31);
    for (mut gens, name, n_seeds) in [(rot_group_o(), "Oh", 40), (rot_group_i(), "Ih", 20)] {
        gens.push(PointOp::inversion());
        let seeds: Vec<([f64; 3], i64)> = (0..n_seeds)
            .map(|k| {
                let r = 3.0 + 0.21 * k as f64;
                let d = crate::ops::normalize(&[rng.sym(1.0), rng.sym(1.0), rng.sym(1.0)]).unwrap();
                ([d[0] * r, d[1] * r, d[2] * r], 6 + (k % 3) as i64)
            })
            .collect();
        let (p, z) = perturb(&orbit(&gens, &seeds), &mut rng);
        assert!(p.len() >= 1024, "{name}: {} atoms", p.len());
        for limit in [DetectOptions::default().verify_all_limit, 0] {
            let opts = DetectOptions {
                verify_all_limit: limit,
                ..DetectOptions::default()
            };
            let s = find_point_group(&p, &z, &opts).unwrap();
            assert_eq!(s.point_group, name);
            check_consistency(&p, &z, &s, opts.tol);
            let mats: Vec<Mat3> = s.verified.iter().map(|&k| s.ops[k].matrix).collect();
            let (perms, devs) = map_operations(&p, &z, None, s.center, &mats, opts.tol).unwrap();
            assert_eq!(s.permutations, perms, "{name}, limit {limit}");
            // (E: 0 by definition, where its matrix in the frame maps within rounding)
            for (a, b) in s.deviations.iter().zip(&devs).skip(1) {
                assert_eq!(a.to_bits(), b.to_bits(), "{name}, limit {limit}");
            }
        }
    }
}
