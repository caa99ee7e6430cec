//! Criterion benchmark of point-group detection in the core (`detect::find_point_group`,
//! no Python) next to counting the unshifted atoms of the operations it finds
//! (`count::count_unshifted`), in the same run: the ratio of the two is the measure
//! (issue 14). Every operation is verified against all atoms below the verify-all limit.
//!
//! Run: `cargo bench --bench detect_kernel` (release profile; a filter may follow `--`).
//! Workloads: benzene, C60, a 2057-atom Mackay icosahedron, 100 C1 conformers of a 30-atom
//! molecule (one call each, timed together; again at 10 × the tolerance, as
//! `improper_within` detects chiral structures), and the Mackay icosahedra and fcc spheres of
//! about 10³ and 10⁴ atoms; `DETECT_KERNEL_BIG=1` adds those of 10⁵ and 10⁶ atoms. Ids are
//! `detect/{workload}/{detection|counting}`. Each answer is checked once, outside the
//! timed calls. Threads: the default pool (all cores), as in an analysis.

use _core::count::count_unshifted;
use _core::detect::{find_point_group, DetectOptions};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::Duration;

#[path = "common/shapes.rs"]
mod shapes;

use shapes::{benzene, c1_conformers, c60, fcc_sphere, mackay, Vec3};

const TOL: f64 = 0.01;

struct Workload {
    name: String,
    group: &'static str,
    structures: Vec<(Vec<Vec3>, Vec<i64>)>,
    tol: f64,
}

fn one(name: &str, group: &'static str, pos: Vec<Vec3>, numbers: Vec<i64>) -> Workload {
    Workload {
        name: name.to_string(),
        group,
        structures: vec![(pos, numbers)],
        tol: TOL,
    }
}

fn workloads() -> Vec<Workload> {
    let gold = |p: Vec<Vec3>| {
        let n = p.len();
        (p, vec![79_i64; n])
    };
    let (bz, bz_z) = benzene();
    let c = c60();
    let n60 = c.len();
    let mut out = vec![
        one("benzene", "D6h", bz, bz_z),
        one("C60", "Ih", c, vec![6; n60]),
    ];
    let (p, z) = gold(mackay(8));
    out.push(one("Ih-2057", "Ih", p, z));
    out.push(Workload {
        name: "C1-30-atoms-x100".into(),
        group: "C1",
        structures: c1_conformers(100, 20_260_707),
        tol: TOL,
    });
    // The same at 10 × the tolerance: near-symmetries pass the screen there and fail at tol.
    out.push(Workload {
        name: "C1-30-atoms-x100-at-10-tol".into(),
        group: "C1",
        structures: c1_conformers(100, 20_260_707),
        tol: 10.0 * TOL,
    });
    let big = std::env::var("DETECT_KERNEL_BIG").is_ok_and(|v| v == "1");
    let sizes: &[(usize, f64)] = if big {
        &[(6, 16.0), (14, 35.0), (31, 75.0), (67, 160.0)]
    } else {
        &[(6, 16.0), (14, 35.0)]
    };
    for &(shells, radius) in sizes {
        let (p, z) = gold(mackay(shells));
        out.push(one(&format!("Ih-{}", p.len()), "Ih", p, z));
        let (p, z) = gold(fcc_sphere(radius));
        out.push(one(&format!("Oh-{}", p.len()), "Oh", p, z));
    }
    out
}

fn detect_kernel(c: &mut Criterion) {
    let mut group = c.benchmark_group("detect");
    group
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    for w in workloads() {
        let opts = DetectOptions {
            tol: w.tol,
            ..DetectOptions::default()
        };
        // Checked once, outside the timed calls: the group, and the counts of E.
        let found: Vec<_> = w
            .structures
            .iter()
            .map(|(p, z)| {
                let sym =
                    find_point_group(p, z, &opts).unwrap_or_else(|e| panic!("{}: {e}", w.name));
                assert_eq!(sym.point_group, w.group, "{}", w.name);
                let all = p.len() * sym.ops.len() <= opts.verify_all_limit;
                let verified = if all {
                    sym.ops.len()
                } else {
                    1 + sym.generators.len()
                };
                assert_eq!(sym.verified.len(), verified, "{}", w.name);
                let ops: Vec<[[f64; 3]; 3]> = sym.ops.iter().map(|o| o.matrix).collect();
                assert_eq!(
                    count_unshifted(p, sym.center, &ops, w.tol)[0],
                    p.len() as u64
                );
                (sym.center, ops)
            })
            .collect();
        group.bench_function(format!("{}/detection", w.name), |b| {
            b.iter(|| {
                for (p, z) in &w.structures {
                    black_box(find_point_group(black_box(p), z, &opts).ok());
                }
            })
        });
        group.bench_function(format!("{}/counting", w.name), |b| {
            b.iter(|| {
                for ((p, _), (center, ops)) in w.structures.iter().zip(&found) {
                    black_box(count_unshifted(black_box(p), *center, ops, w.tol));
                }
            })
        });
    }
    group.finish();
}

criterion_group!(benches, detect_kernel);
criterion_main!(benches);
