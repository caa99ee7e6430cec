//! Many structures at once: detection plus unshifted-atom counts for every operation, in
//! parallel on a rayon pool of its own, results in input order for any thread count.
//!
//! Structures arrive as ragged arrays: all positions concatenated, with `offsets` (length
//! n_structures + 1) marking where each starts. One bad structure never stops the batch: its
//! slot carries the error, and a panic in the core (a bug) is caught and reported the same way.

use crate::count;
use crate::detect::{self, DetectOptions};
use crate::error::{Error, Result};
use crate::parallel;

/// Per-structure results of [`summarize_batch`], all vectors in input order.
#[derive(Debug, Default)]
pub struct BatchSummary {
    /// Schoenflies name, empty for a failed structure.
    pub point_group: Vec<String>,
    /// Number of operations found (of the finite subgroup for linear molecules); 0 on error.
    pub order: Vec<i64>,
    /// Largest image distance over the verified operations, Å (NaN on error).
    pub max_deviation: Vec<f64>,
    /// Number of proper operations.
    pub n_proper: Vec<i64>,
    /// Standard frame of each structure (rows = x, y, z axes in input coordinates).
    pub frames: Vec<[[f64; 3]; 3]>,
    /// All operations of all structures, concatenated (input frame).
    pub operations: Vec<[[f64; 3]; 3]>,
    /// Proper/improper flag of each operation.
    pub proper: Vec<bool>,
    /// Angle of each operation, degrees in [0, 180].
    pub angle: Vec<f64>,
    /// Where each structure's operations start in `operations` (length n_structures + 1).
    pub op_offsets: Vec<usize>,
    /// Unshifted atoms of each operation.
    pub unshifted: Vec<u64>,
    /// The error of each failed structure.
    pub errors: Vec<Option<Error>>,
    /// With details only: the orbit of every atom (all structures concatenated, numbered per
    /// structure in order of first atom, as [`count::orbits`]); atoms of a failed structure
    /// are absent, so structure k's ids start where the atoms of the structures before it
    /// that succeeded end.
    pub orbit_ids: Vec<u32>,
    /// With details only: the smallest tolerance at which an improper operation holds, Å
    /// ([`improper_within`]); NaN when none does up to the last tolerance of the ladder (and
    /// for a failed structure).
    pub improper_within: Vec<f64>,
}

struct One {
    point_group: String,
    max_deviation: f64,
    frame: [[f64; 3]; 3],
    ops: Vec<crate::ops::PointOp>,
    unshifted: Vec<u64>,
    orbit_ids: Vec<u32>,
    improper_within: f64,
}

fn analyse_one(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    opts: &DetectOptions,
    details: Option<&[f64]>,
) -> Result<One> {
    let sym = detect::find_point_group_with_masses(positions, numbers, masses, opts)?;
    let unshifted = unshifted_atoms(positions, &sym, opts.tol)?;
    let (orbit_ids, improper) = match details {
        Some(ladder) => (
            count::orbits(positions.len(), &sym.permutations)?,
            improper_within(positions, numbers, masses, opts, &sym, ladder)?.unwrap_or(f64::NAN),
        ),
        None => (Vec::new(), f64::NAN),
    };
    Ok(One {
        point_group: sym.point_group,
        max_deviation: sym.max_deviation,
        frame: sym.frame,
        ops: sym.ops,
        unshifted,
        orbit_ids,
        improper_within: improper,
    })
}

/// Atoms each operation of `sym` leaves unshifted. Every operation is counted when detection
/// verified every one; otherwise (huge structures) the first operation of each class is
/// counted and stands for its class, as verification stands on the generators
/// ([`count::count_unshifted_by_class`]).
pub fn unshifted_atoms(
    positions: &[[f64; 3]],
    sym: &detect::Symmetry,
    tol: f64,
) -> Result<Vec<u64>> {
    let mats: Vec<[[f64; 3]; 3]> = sym.ops.iter().map(|o| o.matrix).collect();
    let per_class = sym.verified.len() != sym.ops.len();
    count::count_unshifted_by_class(positions, sym.center, &mats, &sym.class_of, per_class, tol)
}

/// The smallest deviation among the improper operations of `sym` that detection verified,
/// or, when it verified none, among all its improper operations mapped atom by atom; `None`
/// for a group without improper operations.
fn best_improper(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    sym: &detect::Symmetry,
    tol: f64,
) -> Result<Option<f64>> {
    if let Some(best) = sym.best_verified_improper() {
        return Ok(Some(best));
    }
    let improper: Vec<[[f64; 3]; 3]> = sym
        .ops
        .iter()
        .filter(|o| !o.proper)
        .map(|o| o.matrix)
        .collect();
    if improper.is_empty() {
        return Ok(None);
    }
    let (_, devs) = detect::map_operations(positions, numbers, masses, sym.center, &improper, tol)?;
    Ok(Some(devs.iter().copied().fold(f64::INFINITY, f64::min)))
}

/// The smallest tolerance at which the structure has an improper operation (a mirror, the
/// inversion or an S_n): the deviation of its best improper operation when `sym` has one,
/// else the same at the first tolerance of `ladder` (ascending, above `opts.tol`) where
/// detection finds one (a tolerance where detection fails finds none). `None` when
/// detection at the last tolerance of the ladder (the search bound, tried first) finds none.
/// The rule of `gammatrace.group.chirality.improper_within`, which passes its ladder in.
///
/// # Errors
/// Those of mapping improper operations atom by atom (when detection verified none).
pub fn improper_within(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    opts: &DetectOptions,
    sym: &detect::Symmetry,
    ladder: &[f64],
) -> Result<Option<f64>> {
    if sym.ops.iter().any(|o| !o.proper) {
        return best_improper(positions, numbers, masses, sym, opts.tol);
    }
    // Detection at a ladder tolerance that fails (a structure at the edge of that
    // tolerance) finds nothing there; the search goes on.
    let improper_at = |t: f64| -> Option<detect::Symmetry> {
        let at = DetectOptions {
            tol: t,
            ..opts.clone()
        };
        detect::find_point_group_with_masses(positions, numbers, masses, &at)
            .ok()
            .filter(|wider| wider.ops.iter().any(|o| !o.proper))
    };
    // Nothing improper at the bound (tried first): the search stops there, so one detection
    // settles most chiral structures.
    match ladder.last() {
        Some(&bound) if improper_at(bound).is_some() => {}
        _ => return Ok(None),
    }
    for &t in ladder {
        if let Some(wider) = improper_at(t) {
            return best_improper(positions, numbers, masses, &wider, t);
        }
    }
    Ok(None)
}

fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "unknown panic".to_string()
    }
}

/// Detect the point group of every structure and count unshifted atoms per operation.
///
/// `positions` (Å), `numbers` and `masses` (u, optional: `None` = standard atomic weights
/// for every atom) hold all structures concatenated; structure k is
/// `offsets[k]..offsets[k+1]`. Atoms are matched by species, as in
/// [`detect::find_point_group_with_masses`]. `n_threads = 0` uses all cores. Errors:
/// `InvalidArgument` when the offsets or masses do not describe the arrays (the whole call
/// fails); per-structure problems land in `errors` and the rest go on. `details` =
/// `Some(ladder)` adds each structure's orbits and [`improper_within`] (searched over the
/// tolerances of `ladder`).
#[allow(clippy::too_many_arguments)]
pub fn summarize_batch(
    positions: &[[f64; 3]],
    numbers: &[i64],
    masses: Option<&[f64]>,
    offsets: &[usize],
    opts: &DetectOptions,
    n_threads: usize,
    details: Option<&[f64]>,
) -> Result<BatchSummary> {
    if positions.len() != numbers.len() {
        return Err(Error::LengthMismatch {
            n_positions: positions.len(),
            n_numbers: numbers.len(),
        });
    }
    if let Some(m) = masses {
        if m.len() != numbers.len() {
            return Err(Error::InvalidArgument {
                name: "masses".into(),
                reason: format!(
                    "{} masses for {} atoms: they must match",
                    m.len(),
                    numbers.len()
                ),
            });
        }
    }
    if offsets.is_empty() {
        return Ok(BatchSummary {
            op_offsets: vec![0],
            ..Default::default()
        });
    }
    for (k, w) in offsets.windows(2).enumerate() {
        if w[1] < w[0] {
            return Err(Error::InvalidArgument {
                name: "offsets".into(),
                reason: format!(
                    "entry {} ({}) is smaller than entry {k} ({})",
                    k + 1,
                    w[1],
                    w[0]
                ),
            });
        }
    }
    let last = offsets[offsets.len() - 1];
    if last > positions.len() {
        return Err(Error::InvalidArgument {
            name: "offsets".into(),
            reason: format!(
                "last offset {last} beyond the {} atoms given",
                positions.len()
            ),
        });
    }
    let pool = parallel::pool(n_threads)?;
    let n = offsets.len() - 1;
    let results: Vec<Result<One>> = pool.install(|| {
        use rayon::prelude::*;
        (0..n)
            .into_par_iter()
            .map(|k| {
                let (a, b) = (offsets[k], offsets[k + 1]);
                let run = std::panic::AssertUnwindSafe(|| {
                    analyse_one(
                        &positions[a..b],
                        &numbers[a..b],
                        masses.map(|m| &m[a..b]),
                        opts,
                        details,
                    )
                });
                match std::panic::catch_unwind(run) {
                    Ok(r) => r,
                    Err(payload) => Err(Error::Internal {
                        structure: k,
                        reason: panic_message(payload.as_ref()),
                    }),
                }
            })
            .collect()
    });
    let mut out = BatchSummary {
        op_offsets: Vec::with_capacity(n + 1),
        ..Default::default()
    };
    out.op_offsets.push(0);
    for r in results {
        match r {
            Ok(one) => {
                out.point_group.push(one.point_group);
                out.order.push(one.ops.len() as i64);
                out.max_deviation.push(one.max_deviation);
                out.n_proper
                    .push(one.ops.iter().filter(|o| o.proper).count() as i64);
                out.frames.push(one.frame);
                for o in &one.ops {
                    out.operations.push(o.matrix);
                    out.proper.push(o.proper);
                    out.angle.push(o.angle);
                }
                out.unshifted.extend_from_slice(&one.unshifted);
                out.orbit_ids.extend_from_slice(&one.orbit_ids);
                out.improper_within.push(one.improper_within);
                out.errors.push(None);
            }
            Err(e) => {
                out.point_group.push(String::new());
                out.order.push(0);
                out.max_deviation.push(f64::NAN);
                out.n_proper.push(0);
                out.frames.push([[0.0; 3]; 3]);
                out.improper_within.push(f64::NAN);
                out.errors.push(Some(e));
            }
        }
        out.op_offsets.push(out.operations.len());
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn water() -> (Vec<[f64; 3]>, Vec<i64>) {
        (
            vec![
                [0.0, 0.0, 0.1173],
                [0.0, 0.7572, -0.4692],
                [0.0, -0.7572, -0.4692],
            ],
            vec![8, 1, 1],
        )
    }

    #[test]
    fn bad_structure_does_not_stop_the_batch() {
        let (mut pos, mut num) = water();
        let (p2, n2) = water();
        pos.push([f64::NAN, 0.0, 0.0]);
        num.push(6);
        pos.extend(p2);
        num.extend(n2);
        let offsets = [0, 3, 4, 7];
        let res = summarize_batch(
            &pos,
            &num,
            None,
            &offsets,
            &DetectOptions::default(),
            2,
            None,
        )
        .unwrap();
        assert_eq!(
            res.point_group,
            vec!["C2v".to_string(), String::new(), "C2v".into()]
        );
        assert!(res.errors[1].is_some());
        assert_eq!(res.op_offsets, vec![0, 4, 4, 8]);
        // water: unshifted atoms under E, C2 and the two mirrors are 3, 1, 1, 3 in some order
        let mut u = res.unshifted[0..4].to_vec();
        u.sort();
        assert_eq!(u, vec![1, 1, 3, 3]);
    }

    #[test]
    fn results_do_not_depend_on_thread_count() {
        let (p, n) = water();
        let mut pos = Vec::new();
        let mut num = Vec::new();
        let mut offsets = vec![0];
        for k in 0..40 {
            let shift = k as f64;
            pos.extend(p.iter().map(|x| [x[0] + shift, x[1], x[2]]));
            num.extend(n.iter().copied());
            offsets.push(pos.len());
        }
        let a = summarize_batch(
            &pos,
            &num,
            None,
            &offsets,
            &DetectOptions::default(),
            1,
            None,
        )
        .unwrap();
        let b = summarize_batch(
            &pos,
            &num,
            None,
            &offsets,
            &DetectOptions::default(),
            2,
            None,
        )
        .unwrap();
        assert_eq!(a.point_group, b.point_group);
        assert_eq!(a.unshifted, b.unshifted);
        assert_eq!(a.op_offsets, b.op_offsets);
    }

    /// CH2D2 and CH4 on one tetrahedral geometry (C at the centre, H at alternate cube
    /// corners; common practice).
    fn methane() -> (Vec<[f64; 3]>, Vec<i64>) {
        let a = 0.6276;
        (
            vec![
                [0.0, 0.0, 0.0],
                [a, a, a],
                [a, -a, -a],
                [-a, a, -a],
                [-a, -a, a],
            ],
            vec![6, 1, 1, 1, 1],
        )
    }

    #[test]
    fn masses_make_isotopes_different_species_in_a_batch() {
        // CH2D2 is C2v, CH4 Td (Herzberg, Infrared and Raman Spectra, 1945; from memory).
        let (p, n) = methane();
        let pos: Vec<[f64; 3]> = p.iter().chain(&p).copied().collect();
        let num: Vec<i64> = n.iter().chain(&n).copied().collect();
        let d = crate::structure::DEUTERIUM_MASS;
        let masses = [
            12.011, 1.008, 1.008, 1.008, 1.008, 12.011, 1.008, 1.008, d, d,
        ];
        let res = summarize_batch(
            &pos,
            &num,
            Some(&masses),
            &[0, 5, 10],
            &DetectOptions::default(),
            2,
            None,
        )
        .unwrap();
        assert_eq!(res.point_group, vec!["Td".to_string(), "C2v".into()]);
        let plain = summarize_batch(
            &pos,
            &num,
            None,
            &[0, 5, 10],
            &DetectOptions::default(),
            1,
            None,
        )
        .unwrap();
        assert_eq!(plain.point_group, vec!["Td".to_string(), "Td".into()]);
        assert!(summarize_batch(
            &pos,
            &num,
            Some(&masses[..9]),
            &[0, 5, 10],
            &DetectOptions::default(),
            1,
            None,
        )
        .is_err());
    }

    #[test]
    fn details_give_orbits_and_the_improper_margin() {
        // water twice (C2v: O alone, the two H together, a mirror within 0 Å), then a
        // tetrahedral centre with four different substituents (CHFClBr): chiral, and no
        // improper operation at any tolerance (every atom its own species)
        let (mut p, mut n) = water();
        let (w, wn) = water();
        p.extend_from_slice(&w);
        n.extend_from_slice(&wn);
        p.extend_from_slice(&[
            [0.0, 0.0, 0.0],
            [0.63, 0.63, 0.63],
            [-0.78, -0.78, 0.78],
            [-1.02, 1.02, -1.02],
            [1.11, -1.11, -1.11],
        ]);
        n.extend_from_slice(&[6, 1, 9, 17, 35]);
        let ladder = [0.02, 0.05, 0.1];
        let res = summarize_batch(
            &p,
            &n,
            None,
            &[0, 3, 6, 11],
            &DetectOptions::default(),
            1,
            Some(&ladder),
        )
        .unwrap();
        assert_eq!(res.orbit_ids, vec![0, 1, 1, 0, 1, 1, 0, 1, 2, 3, 4]);
        assert!(res.improper_within[0] < 1e-9 && res.improper_within[1] < 1e-9);
        assert_eq!(res.point_group[2], "C1");
        assert!(res.improper_within[2].is_nan());
        let plain = summarize_batch(&p, &n, None, &[0, 3], &DetectOptions::default(), 1, None);
        let plain = plain.unwrap();
        assert!(plain.orbit_ids.is_empty());
    }

    #[test]
    fn offsets_are_checked() {
        let (p, n) = water();
        assert!(
            summarize_batch(&p, &n, None, &[0, 5], &DetectOptions::default(), 1, None).is_err()
        );
        assert!(
            summarize_batch(&p, &n, None, &[2, 1], &DetectOptions::default(), 1, None).is_err()
        );
        let empty = summarize_batch(&p, &n, None, &[], &DetectOptions::default(), 1, None).unwrap();
        assert!(empty.point_group.is_empty());
    }
}
