use super::*;
use crate::error::Error;
use nalgebra::SymmetricEigen;
use nalgebra::{DMatrix, Matrix3};
use std::collections::HashMap;

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
    let index: HashMap<[usize; 3], usize> = mons.iter().enumerate().map(|(i, m)| (*m, i)).collect();
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
    let blocks: Vec<DMatrix<f64>> = (0..n_l).map(|l| harmonic_matrix(r, l, &bases[l])).collect();
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
    let normals = vec![[0.0, 0.0, 2.0]; 6];
    let chi = pi_characters(&pos, c, &ops, &normals, 1e-3).unwrap();
    for (k, (a, b)) in chi.iter().zip(want).enumerate() {
        assert!((a - b).abs() < 1e-12, "op {k}: {chi:?}");
    }
    // Hydrogens at the same angles carry no p orbital (zero rows): nothing changes.
    let mut with_h = pos.clone();
    with_h.extend(
        pos.iter()
            .map(|p| [2.0 * p[0] - 5.0, 2.0 * p[1] + 2.0, 7.0]),
    );
    let mut rows = normals.clone();
    rows.extend([[0.0; 3]; 6]);
    assert_eq!(pi_characters(&with_h, c, &ops, &rows, 1e-3).unwrap(), chi);
}

#[test]
fn twisted_ethylene_pi_characters_follow_local_normals() {
    // C=C along z with one CH2 in the xz plane and the other in the yz plane (D2d): each p
    // orbital is normal to its own CH2 plane, so the two are perpendicular. Literal method:
    // Γ(R) sends the orbital of atom j onto (R n_j)·n_{π(j)} times the orbital of π(j); its
    // trace sums (R n_j)·n_j over unshifted atoms. Derived by hand from the D2d table (Cotton,
    // appendix): E 2, S4 0, C2 -2, C2' 0, σd 0, i.e. E.
    let z = [0.0, 0.0, 1.0];
    let pos = vec![[0.0, 0.0, 0.67], [0.0, 0.0, -0.67]];
    let normals = vec![[0.0, 1.0, 0.0], [1.0, 0.0, 0.0]];
    let diag = [0.5f64.sqrt(), 0.5f64.sqrt(), 0.0];
    let ops = vec![
        EYE,
        improper(z, 90.0),
        rot(z, 180.0),
        rot(diag, 180.0),
        refl([0.0, 1.0, 0.0]), // σd = xz, the plane of the first CH2
    ];
    let chi = pi_characters(&pos, [0.0; 3], &ops, &normals, 1e-6).unwrap();
    assert_eq!(chi, vec![2.0, 0.0, -2.0, 0.0, 0.0]);
    // An operation that keeps an atom but turns its orbital by 90° is no symmetry of the basis.
    let err = pi_characters(&pos, [0.0; 3], &[rot(z, 90.0)], &normals, 1e-6).unwrap_err();
    assert!(
        err.to_string().contains("operation 0 leaves atom 0"),
        "{err}"
    );
    // One row per atom, finite.
    assert!(pi_characters(&pos, [0.0; 3], &ops, &normals[..1], 1e-6).is_err());
    let nan = vec![[f64::NAN, 0.0, 0.0], [1.0, 0.0, 0.0]];
    assert!(pi_characters(&pos, [0.0; 3], &ops, &nan, 1e-6).is_err());
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
            let (mut mu, mut mo) = (DMatrix::<f64>::zeros(nb, nb), DMatrix::<f64>::zeros(nb, nb));
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
        pi_characters(&[], [0.0; 3], &ops, &[], 0.01).unwrap(),
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
    let err =
        shell_characters(&pos, [0.0; 3], &ops, &[true], &[f64::NAN], &[1, 1], 1, 0.01).unwrap_err();
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
                if (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt() <= 1.1 * (radii[i] + radii[j]) {
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
    let err = bond_characters(&pos, [0.0; 3], &ops, &[[0, 1], [1, 5]], false, 0.01).unwrap_err();
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
    crate::parallel::install(n, f).unwrap()
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

// ---------- counting once per class ----------

/// Water-like C2v: O on the C2 axis (z), two H in the xz plane. Classes E, C2, σv(xz),
/// σv'(yz), each of one operation; here C2v's operations are listed twice over to give
/// classes of two (first operation = smaller index), as a huge structure's counting sees them.
#[test]
fn counting_once_per_class_spreads_the_first_operations_count() {
    let pos = [[0.0, 0.0, 0.12], [0.76, 0.0, -0.47], [-0.76, 0.0, -0.47]];
    let c2 = rot([0.0, 0.0, 1.0], 180.0);
    let sxz = refl([0.0, 1.0, 0.0]);
    let syz = refl([1.0, 0.0, 0.0]);
    let ops = [EYE, c2, sxz, syz];
    let all = count_unshifted_by_class(&pos, [0.0; 3], &ops, &[0, 1, 2, 3], false, 0.01).unwrap();
    assert_eq!(all, vec![3, 1, 3, 1]);
    // E, C2 and σv(xz) each stand for a class: operation 3 (σv(yz)) is put in σv(xz)'s class
    // on purpose, so that its count comes from operation 2 and not from itself
    let spread = count_unshifted_by_class(&pos, [0.0; 3], &ops, &[0, 1, 2, 2], true, 0.01).unwrap();
    assert_eq!(spread, vec![3, 1, 3, 3]);
    // every operation counted, the classes then do not matter
    let plain = count_unshifted_by_class(&pos, [0.0; 3], &ops, &[0, 1, 2, 2], false, 0.01).unwrap();
    assert_eq!(plain, all);
}

#[test]
fn counting_once_per_class_refuses_a_class_without_its_first_operation() {
    let pos = [[0.0, 0.0, 0.0]];
    let ops = [EYE, rot([0.0, 0.0, 1.0], 180.0)];
    // operation 1 names operation 2 as its class's first: there is no operation 2
    let err = count_unshifted_by_class(&pos, [0.0; 3], &ops, &[0, 2], true, 0.01).unwrap_err();
    assert!(matches!(err, Error::InvalidArgument { .. }), "{err:?}");
    let short = count_unshifted_by_class(&pos, [0.0; 3], &ops, &[0], true, 0.01).unwrap_err();
    assert!(matches!(short, Error::InvalidArgument { .. }), "{short:?}");
}
