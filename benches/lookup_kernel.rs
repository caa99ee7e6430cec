//! Micro-benchmark of the lookup kernel (`lookup::map_atoms`): nanoseconds per atom mapped,
//! next to plain streaming passes over the same coordinates in the same run (the
//! memory-bandwidth floor).
//!
//! Run: `cargo bench --bench lookup_kernel` (release profile). Arguments after `--`:
//! `--shells 6,14,31,67` (Mackay icosahedra of about 10³…10⁶ atoms), `--repeats 7`.
//! The last line of the output is one JSON object with every median, for the report script.

use _core::lookup::{map_atoms, Grid};
use rayon::prelude::*;
use std::hint::black_box;
use std::time::Instant;

type Vec3 = [f64; 3];
type Mat3 = [[f64; 3]; 3];

const TOL: f64 = 0.01;
const SPACING: f64 = 2.8;
const GOLDEN: f64 = 1.618_033_988_749_895;

/// The 12 vertices (0, ±1, ±φ) and their cyclic permutations, edge length 2.
fn icosahedron_vertices() -> Vec<Vec3> {
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
/// distance `SPACING` Å: the same construction as `gammatrace.builders.mackay_icosahedron`.
fn mackay(n_shells: usize) -> Vec<Vec3> {
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

/// Rotation by `angle_rad` about the unit vector along `axis` (Rodrigues).
fn rotation(axis: Vec3, angle_rad: f64) -> Mat3 {
    let n = (axis[0] * axis[0] + axis[1] * axis[1] + axis[2] * axis[2]).sqrt();
    let [x, y, z] = [axis[0] / n, axis[1] / n, axis[2] / n];
    let (s, c) = angle_rad.sin_cos();
    let t = 1.0 - c;
    [
        [t * x * x + c, t * x * y - s * z, t * x * z + s * y],
        [t * x * y + s * z, t * y * y + c, t * y * z - s * x],
        [t * x * z - s * y, t * y * z + s * x, t * z * z + c],
    ]
}

/// Operations of Ih in the Mackay frame: C2(z), C3 about (1,1,1), C5 about (0,1,φ), i.
fn operations() -> Vec<(&'static str, Mat3)> {
    vec![
        ("C2", [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, 1.0]]),
        ("C3", [[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]),
        (
            "C5",
            rotation([0.0, 1.0, GOLDEN], 2.0 * std::f64::consts::PI / 5.0),
        ),
        ("i", [[-1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]]),
    ]
}

fn median(mut xs: Vec<f64>) -> f64 {
    xs.sort_by(f64::total_cmp);
    let m = xs.len() / 2;
    if xs.len() % 2 == 1 {
        xs[m]
    } else {
        0.5 * (xs[m - 1] + xs[m])
    }
}

/// Median wall time (s) of `repeats` calls of `f`, after one warm-up call.
fn time_median<F: FnMut()>(repeats: usize, mut f: F) -> f64 {
    f();
    let mut times = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let t = Instant::now();
        f();
        times.push(t.elapsed().as_secs_f64());
    }
    median(times)
}

/// Read-only streaming pass: the sum of every coordinate.
fn stream_sum(pos: &[Vec3], parallel: bool) -> f64 {
    if parallel {
        pos.par_chunks(4096)
            .map(|c| c.iter().map(|p| p[0] + p[1] + p[2]).sum::<f64>())
            .sum()
    } else {
        pos.iter().map(|p| p[0] + p[1] + p[2]).sum()
    }
}

/// Read, transform and write pass: out = R·x for every atom.
fn stream_transform(pos: &[Vec3], out: &mut [Vec3], r: &Mat3, parallel: bool) {
    let f = |(o, p): (&mut Vec3, &Vec3)| {
        *o = [
            r[0][0] * p[0] + r[0][1] * p[1] + r[0][2] * p[2],
            r[1][0] * p[0] + r[1][1] * p[1] + r[1][2] * p[2],
            r[2][0] * p[0] + r[2][1] * p[1] + r[2][2] * p[2],
        ];
    };
    if parallel {
        out.par_iter_mut().zip(pos.par_iter()).for_each(f);
    } else {
        out.iter_mut().zip(pos.iter()).for_each(f);
    }
}

fn parse_args() -> (Vec<usize>, usize) {
    let args: Vec<String> = std::env::args().collect();
    let mut shells = vec![6, 14, 31, 67];
    let mut repeats = 7;
    let mut k = 1;
    while k < args.len() {
        match args[k].as_str() {
            "--shells" if k + 1 < args.len() => {
                shells = args[k + 1]
                    .split(',')
                    .filter_map(|s| s.trim().parse().ok())
                    .collect();
                k += 1;
            }
            "--repeats" if k + 1 < args.len() => {
                repeats = args[k + 1].parse().unwrap_or(repeats);
                k += 1;
            }
            _ => {} // cargo passes --bench; anything else is ignored
        }
        k += 1;
    }
    (shells, repeats.max(1))
}

fn main() {
    let (shells, repeats) = parse_args();
    let n_cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let pools: Vec<(usize, rayon::ThreadPool)> = [1, n_cores]
        .iter()
        .filter_map(|&t| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(t)
                .build()
                .ok()
                .map(|p| (t, p))
        })
        .collect();
    let mut rows = Vec::new();
    println!(
        "{:>9} {:>7} {:>4} {:>12} {:>12} {:>12} {:>12} {:>8}",
        "n_atoms",
        "threads",
        "op",
        "map ns/atom",
        "sum ns/atom",
        "R·x ns/atom",
        "grid ns/atom",
        "map/R·x"
    );
    for &n_shells in &shells {
        let pos = mackay(n_shells);
        let n = pos.len();
        let numbers = vec![79_i64; n];
        let mut out = vec![[0.0; 3]; n];
        for (threads, pool) in &pools {
            let parallel = *threads > 1;
            pool.install(|| {
                let t_grid = time_median(repeats, || {
                    black_box(Grid::build(black_box(&pos), &numbers, TOL).ok());
                });
                let Ok(grid) = Grid::build(&pos, &numbers, TOL) else {
                    eprintln!("grid build failed for {n} atoms");
                    return;
                };
                let t_sum = time_median(repeats, || {
                    black_box(stream_sum(black_box(&pos), parallel));
                });
                for (name, op) in operations() {
                    let t_rx = time_median(repeats, || {
                        stream_transform(black_box(&pos), &mut out, &op, parallel);
                        black_box(&out);
                    });
                    let mut ok = true;
                    let t_map = time_median(repeats, || {
                        let r = map_atoms(&grid, black_box(&pos), &numbers, &op, TOL);
                        ok &= matches!(&r, Ok((perm, dev)) if perm.len() == n && *dev < TOL);
                        black_box(r.ok());
                    });
                    if !ok {
                        eprintln!("{name} did not map the {n}-atom cluster onto itself");
                    }
                    let per = |t: f64| t * 1e9 / n as f64;
                    println!(
                        "{:>9} {:>7} {:>4} {:>12.2} {:>12.2} {:>12.2} {:>12.2} {:>8.2}",
                        n,
                        threads,
                        name,
                        per(t_map),
                        per(t_sum),
                        per(t_rx),
                        per(t_grid),
                        t_map / t_rx
                    );
                    rows.push(format!(
                        "{{\"n_atoms\": {n}, \"threads\": {threads}, \"op\": \"{name}\", \
                         \"ok\": {ok}, \"map_ns_per_atom\": {:.4}, \"stream_sum_ns_per_atom\": {:.4}, \
                         \"stream_transform_ns_per_atom\": {:.4}, \"grid_build_ns_per_atom\": {:.4}}}",
                        per(t_map),
                        per(t_sum),
                        per(t_rx),
                        per(t_grid)
                    ));
                }
            });
        }
    }
    println!(
        "JSON: {{\"repeats\": {repeats}, \"tol\": {TOL}, \"rows\": [{}]}}",
        rows.join(", ")
    );
}
