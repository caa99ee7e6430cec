//! Criterion benchmark of the lookup kernel (`lookup::map_atoms`) next to plain streaming
//! passes over the same coordinates in the same run (the memory-bandwidth floor), and the
//! cost of building the cell grid.
//!
//! Run: `cargo bench --bench lookup_kernel` (release profile); a filter may follow `--`
//! (e.g. `-- lookup_1t`). Sizes: Mackay icosahedra of `LOOKUP_KERNEL_SHELLS` shells
//! (comma-separated, default 6,14,31,67: about 10³…10⁶ atoms); `LOOKUP_KERNEL_SAMPLES`
//! criterion samples per benchmark (default and minimum 10, 2 s each). Thread counts: 1 and all cores. Benchmark ids are
//! `lookup_{threads}t/{kind}/{n_atoms}`, kind one of `grid_build`, `stream_sum`,
//! `map_atoms_{op}`, `stream_transform_{op}`; `python -m benches.report` reads the medians
//! from `target/criterion/`. Each mapping is checked once, outside the timed calls.

use _core::lookup::{map_atoms, Grid};
use criterion::{criterion_group, criterion_main, Bencher, BenchmarkId, Criterion, Throughput};
use rayon::prelude::*;
use std::hint::black_box;
use std::time::{Duration, Instant};

#[path = "common/shapes.rs"]
mod shapes;

use shapes::{mackay, Mat3, Vec3, GOLDEN};

const TOL: f64 = 0.01;

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

fn shells() -> Vec<usize> {
    std::env::var("LOOKUP_KERNEL_SHELLS")
        .ok()
        .map(|v| v.split(',').filter_map(|s| s.trim().parse().ok()).collect())
        .filter(|v: &Vec<usize>| !v.is_empty())
        .unwrap_or_else(|| vec![6, 14, 31, 67])
}

/// Times `iters` calls of `f` inside `pool` (entering the pool once, outside the clock).
fn on_pool(b: &mut Bencher, pool: &rayon::ThreadPool, mut f: impl FnMut() + Send) {
    b.iter_custom(|iters| {
        pool.install(|| {
            let start = Instant::now();
            for _ in 0..iters {
                f();
            }
            start.elapsed()
        })
    });
}

fn lookup_kernel(c: &mut Criterion) {
    let n_cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let mut threads = vec![1, n_cores];
    threads.dedup();
    let clusters: Vec<Vec<Vec3>> = shells().into_iter().map(mackay).collect();
    let samples = std::env::var("LOOKUP_KERNEL_SAMPLES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(10usize)
        .max(10);
    for &t in &threads {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .expect("a rayon pool");
        let parallel = t > 1;
        let mut group = c.benchmark_group(format!("lookup_{t}t"));
        group
            .sample_size(samples)
            .warm_up_time(Duration::from_millis(500))
            .measurement_time(Duration::from_secs(2));
        for pos in &clusters {
            let n = pos.len();
            let numbers = vec![79_i64; n];
            let mut out = vec![[0.0; 3]; n];
            group.throughput(Throughput::Elements(n as u64));
            group.bench_with_input(BenchmarkId::new("grid_build", n), pos, |b, pos| {
                on_pool(b, &pool, || {
                    black_box(Grid::build(black_box(pos), &numbers, TOL).ok());
                })
            });
            let grid = Grid::build(pos, &numbers, TOL).expect("the cell grid");
            group.bench_with_input(BenchmarkId::new("stream_sum", n), pos, |b, pos| {
                on_pool(b, &pool, || {
                    black_box(stream_sum(black_box(pos), parallel));
                })
            });
            for (name, op) in operations() {
                // Checked once, outside the timed calls: every atom finds its image.
                let (perm, dev) = pool
                    .install(|| map_atoms(&grid, pos, &numbers, &op, TOL))
                    .unwrap_or_else(|e| panic!("{name} on {n} atoms: {e}"));
                assert!(perm.len() == n && dev < TOL, "{name} on {n} atoms");
                group.bench_with_input(
                    BenchmarkId::new(format!("map_atoms_{name}"), n),
                    pos,
                    |b, pos| {
                        on_pool(b, &pool, || {
                            black_box(map_atoms(&grid, black_box(pos), &numbers, &op, TOL).ok());
                        })
                    },
                );
                group.bench_with_input(
                    BenchmarkId::new(format!("stream_transform_{name}"), n),
                    pos,
                    |b, pos| {
                        on_pool(b, &pool, || {
                            stream_transform(black_box(pos), &mut out, &op, parallel);
                            black_box(&out);
                        })
                    },
                );
            }
        }
        group.finish();
    }
}

criterion_group!(benches, lookup_kernel);
criterion_main!(benches);
