//! Test structures shared by the Rust benchmarks (included with `#[path]`): the same
//! constructions as `gammatrace.io.builders` and `benches/workloads.py`, rebuilt here so
//! that the benchmarks need no Python.
#![allow(dead_code)]

pub type Vec3 = [f64; 3];
pub type Mat3 = [[f64; 3]; 3];

pub const SPACING: f64 = 2.8;
pub const GOLDEN: f64 = 1.618_033_988_749_895;

/// The 12 vertices (0, ±1, ±φ) and their cyclic permutations, edge length 2.
pub fn icosahedron_vertices() -> Vec<Vec3> {
    let mut base = Vec::new();
    for s1 in [-1.0, 1.0] {
        for s2 in [-1.0, 1.0] {
            base.push([0.0, s1, s2 * GOLDEN]);
        }
    }
    let mut v = base.clone();
    v.extend(base.iter().map(|p| [p[2], p[0], p[1]]));
    v.extend(base.iter().map(|p| [p[1], p[2], p[0]]));
    v
}

fn dist(a: &Vec3, b: &Vec3) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

fn lerp3(terms: &[(f64, &Vec3)]) -> Vec3 {
    let mut out = [0.0; 3];
    for (w, p) in terms {
        for k in 0..3 {
            out[k] += w * p[k];
        }
    }
    out
}

/// A Mackay icosahedron (centre + `n_shells` shells of 10k² + 2 atoms), nearest-neighbour
/// distance `SPACING` Å: the same construction as `gammatrace.io.builders.mackay_icosahedron`.
pub fn mackay(n_shells: usize) -> Vec<Vec3> {
    let v2 = icosahedron_vertices();
    let v: Vec<Vec3> = v2
        .iter()
        .map(|p| [p[0] / 2.0, p[1] / 2.0, p[2] / 2.0])
        .collect();
    let adj = |i: usize, j: usize| (dist(&v2[i], &v2[j]) - 2.0).abs() < 1e-9;
    let mut edges = Vec::new();
    let mut faces = Vec::new();
    for i in 0..12 {
        for j in i + 1..12 {
            if adj(i, j) {
                edges.push((i, j));
                for k in j + 1..12 {
                    if adj(i, k) && adj(j, k) {
                        faces.push((i, j, k));
                    }
                }
            }
        }
    }
    let mut pts = vec![[0.0; 3]];
    for k in 1..=n_shells {
        let kf = k as f64;
        pts.extend(v.iter().map(|p| [p[0] * kf, p[1] * kf, p[2] * kf]));
        for &(a, b) in &edges {
            for t in 1..k {
                let t = t as f64;
                pts.push(lerp3(&[(kf - t, &v[a]), (t, &v[b])]));
            }
        }
        for &(a, b, c) in &faces {
            for i in 1..k {
                for j in 1..k - i {
                    let (fi, fj) = (i as f64, j as f64);
                    pts.push(lerp3(&[(kf - fi - fj, &v[a]), (fi, &v[b]), (fj, &v[c])]));
                }
            }
        }
    }
    pts.iter()
        .map(|p| [p[0] * SPACING, p[1] * SPACING, p[2] * SPACING])
        .collect()
}

/// Atoms of an fcc lattice (nearest-neighbour distance 2.88 Å) within `radius` Å of an atom:
/// the construction of `gammatrace.io.builders.fcc_cluster`.
pub fn fcc_sphere(radius: f64) -> Vec<Vec3> {
    let a = 2.88 * 2f64.sqrt();
    let m = (radius / a).ceil() as i64 + 1;
    let basis = [
        [0.0, 0.0, 0.0],
        [0.5, 0.5, 0.0],
        [0.5, 0.0, 0.5],
        [0.0, 0.5, 0.5],
    ];
    let mut out = Vec::new();
    for i in -m..=m {
        for j in -m..=m {
            for k in -m..=m {
                for b in &basis {
                    let p = [
                        (i as f64 + b[0]) * a,
                        (j as f64 + b[1]) * a,
                        (k as f64 + b[2]) * a,
                    ];
                    if (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt() <= radius + 1e-9 {
                        out.push(p);
                    }
                }
            }
        }
    }
    out
}

/// Benzene (C–C 1.39 Å, C–H 1.09 Å; only the symmetry matters): positions and numbers.
pub fn benzene() -> (Vec<Vec3>, Vec<i64>) {
    let ring = |r: f64| {
        (0..6).map(move |k| {
            let t = std::f64::consts::PI * k as f64 / 3.0;
            [r * t.cos(), r * t.sin(), 0.0]
        })
    };
    let pos = ring(1.39).chain(ring(2.48)).collect();
    (pos, [6; 6].into_iter().chain([1; 6]).collect())
}

/// C60 as an ideal truncated icosahedron (edges 1.43 Å): the cyclic permutations of
/// (0, ±1, ±3φ), (±1, ±(2 + φ), ±2φ), (±φ, ±2, ±φ³), scaled by 1.43/2.
pub fn c60() -> Vec<Vec3> {
    let phi = GOLDEN;
    let mut out: Vec<Vec3> = Vec::new();
    for seed in [
        [0.0, 1.0, 3.0 * phi],
        [1.0, 2.0 + phi, 2.0 * phi],
        [phi, 2.0, phi.powi(3)],
    ] {
        for signs in 0..8 {
            let s = |k: usize| if signs >> k & 1 == 1 { -1.0 } else { 1.0 };
            let p = [seed[0] * s(0), seed[1] * s(1), seed[2] * s(2)];
            for r in 0..3 {
                let q = [p[r % 3], p[(r + 1) % 3], p[(r + 2) % 3]];
                let q = [q[0] * 0.715, q[1] * 0.715, q[2] * 0.715];
                if !out.iter().any(|o| dist(o, &q) < 1e-9) {
                    out.push(q);
                }
            }
        }
    }
    out
}

/// splitmix64, for reproducible noise.
pub struct Rng(pub u64);

impl Rng {
    /// Uniform in [0, 1).
    pub fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u = self.next().max(1e-300);
        let v = self.next();
        (-2.0 * u.ln()).sqrt() * (std::f64::consts::TAU * v).cos()
    }
}

fn mul(a: &Mat3, b: &Mat3) -> Mat3 {
    let mut c = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            c[i][j] = (0..3).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    c
}

fn apply(m: &Mat3, p: &Vec3) -> Vec3 {
    [0, 1, 2].map(|i| m[i][0] * p[0] + m[i][1] * p[1] + m[i][2] * p[2])
}

/// `n` C1 conformers of a 30-atom molecule: the Td parent of `benches/workloads.py` (24 H
/// around 6 C), every coordinate moved by Gaussian noise of 0.05 Å, then rotated at random.
pub fn c1_conformers(n: usize, seed: u64) -> Vec<(Vec<Vec3>, Vec<i64>)> {
    // Td: closure of C3 about (1, 1, 1) and S4 about z.
    let c3: Mat3 = [[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]];
    let s4: Mat3 = [[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, -1.0]];
    let mut group: Vec<Mat3> = vec![[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]];
    let mut k = 0;
    while k < group.len() {
        for g in [c3, s4] {
            let p = mul(&g, &group[k]);
            let same = |m: &Mat3| (0..3).all(|i| (0..3).all(|j| (m[i][j] - p[i][j]).abs() < 1e-9));
            if !group.iter().any(same) {
                group.push(p);
            }
        }
        k += 1;
    }
    let mut parent: Vec<(Vec3, i64)> = Vec::new();
    for (seed_point, z) in [([0.9, 1.7, 2.6], 1), ([1.9, 0.0, 0.0], 6)] {
        for g in &group {
            let q = apply(g, &seed_point);
            if !parent.iter().any(|(p, _)| dist(p, &q) < 1e-6) {
                parent.push((q, z));
            }
        }
    }
    assert_eq!(parent.len(), 30, "the Td parent has 30 atoms");
    let mut rng = Rng(seed);
    (0..n)
        .map(|_| {
            // A random rotation from a random unit quaternion.
            let q = [rng.normal(), rng.normal(), rng.normal(), rng.normal()];
            let l = q.iter().map(|v| v * v).sum::<f64>().sqrt();
            let [w, x, y, z] = q.map(|v| v / l);
            let rot: Mat3 = [
                [
                    1.0 - 2.0 * (y * y + z * z),
                    2.0 * (x * y - z * w),
                    2.0 * (x * z + y * w),
                ],
                [
                    2.0 * (x * y + z * w),
                    1.0 - 2.0 * (x * x + z * z),
                    2.0 * (y * z - x * w),
                ],
                [
                    2.0 * (x * z - y * w),
                    2.0 * (y * z + x * w),
                    1.0 - 2.0 * (x * x + y * y),
                ],
            ];
            let pos = parent
                .iter()
                .map(|(p, _)| {
                    let noisy = [0, 1, 2].map(|k| p[k] + 0.05 * rng.normal());
                    apply(&rot, &noisy)
                })
                .collect();
            (pos, parent.iter().map(|&(_, z)| z).collect())
        })
        .collect()
}
