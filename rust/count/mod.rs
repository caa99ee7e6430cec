//! Characters of reducible representations by counting what an operation leaves in place.
//!
//! DESIGN.md §2: the character of a representation built on atoms (or bonds) under an
//! operation R depends only on the atoms (bonds) that R leaves unshifted and on the type of R,
//! so every function here counts; no matrix of a representation is ever formed.
//!
//! Conventions shared by every function:
//! - `ops[k]` is a 3×3 matrix, row-major (`ops[k][row][col]`), acting on centred coordinates
//!   `x - center`. `proper[k]` and `angle_deg[k]` say what it is: R = C(θ) when proper,
//!   R = σh·C(θ) when improper, θ in degrees (normally in [0, 180]; the formulas are even and
//!   periodic, so any finite θ gives the character of that rotation).
//! - Atom i is unshifted by R when |R(x_i - c) - (x_i - c)| <= tol (Å).
//! - A NaN coordinate (or a NaN in an operation, or a NaN/negative `tol`) never compares
//!   `<= tol`, so such an atom is never unshifted and contributes 0; nothing panics. Callers
//!   validate coordinates beforehand (structure.rs) when they want an error instead.
//! - Work is split into fixed chunks (parallel.rs). Above [`PARALLEL_THRESHOLD`] items the
//!   chunks run on the current rayon pool (wrap a call in `parallel::install` to choose the
//!   thread count); counts are integers and float partial sums are added in chunk order, so
//!   every result is bit-identical for any number of threads.
//!
//! Files by basis: `atoms` (unshifted atoms, Cartesian displacements), `orbitals` (shells of
//! angular momentum l), `pi` (one p orbital per π centre along its normal), `bonds` (bond search, stretches
//! and bond vectors), `vectors` (a user's vector set per atom), `orbits` (union-find over
//! permutations).

mod atoms;
mod bonds;
mod orbitals;
mod orbits;
mod pi;
#[cfg(test)]
mod tests;
mod vectors;

pub use crate::parallel::CHUNK;
pub use atoms::{cartesian_characters, count_unshifted, count_unshifted_by_class};
pub use bonds::{bond_characters, find_bonds};
pub use orbitals::{orbital_character, orbital_contributions, shell_characters};
pub use orbits::orbits;
pub use pi::{pi_characters, PI_ALIGNMENT};
pub use vectors::{vector_set_characters, SPAN_RESIDUAL};

use crate::error::{Error, Result};
use crate::parallel;
use std::ops::Range;

/// Above this many atoms (or bonds) the kernels run their chunks in parallel.
pub const PARALLEL_THRESHOLD: usize = 20_000;

/// Runs `f` on consecutive chunks of `0..n`, in parallel above [`PARALLEL_THRESHOLD`];
/// results in chunk order.
pub(super) fn map_chunks<T, F>(n: usize, f: F) -> Vec<T>
where
    T: Send,
    F: Fn(Range<usize>) -> T + Sync + Send,
{
    parallel::map_chunks(n, PARALLEL_THRESHOLD, f)
}

/// A point operation as a row-major 3×3 matrix.
pub(super) type Op = [[f64; 3]; 3];

#[inline]
pub(super) fn apply(r: &Op, d: [f64; 3]) -> [f64; 3] {
    [
        r[0][0] * d[0] + r[0][1] * d[1] + r[0][2] * d[2],
        r[1][0] * d[0] + r[1][1] * d[1] + r[1][2] * d[2],
        r[2][0] * d[0] + r[2][1] * d[1] + r[2][2] * d[2],
    ]
}

#[inline]
pub(super) fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// True when |a - b|² <= tol2. NaN anywhere gives false.
#[inline]
pub(super) fn close(a: [f64; 3], b: [f64; 3], tol2: f64) -> bool {
    let d = sub(a, b);
    d[0] * d[0] + d[1] * d[1] + d[2] * d[2] <= tol2
}

/// tol², or a negative number (nothing is ever close) for a negative or NaN tolerance.
#[inline]
pub(super) fn tol_squared(tol: f64) -> f64 {
    if tol >= 0.0 {
        tol * tol
    } else {
        -1.0
    }
}

pub(super) fn invalid(name: &str, reason: String) -> Error {
    Error::InvalidArgument {
        name: name.to_string(),
        reason,
    }
}

pub(super) fn check_op_lengths(n_ops: usize, proper: &[bool], angle_deg: &[f64]) -> Result<()> {
    if proper.len() != n_ops {
        return Err(invalid(
            "proper",
            format!(
                "{} flags for {} operations: they must match",
                proper.len(),
                n_ops
            ),
        ));
    }
    if angle_deg.len() != n_ops {
        return Err(invalid(
            "angle_deg",
            format!(
                "{} angles for {} operations: they must match",
                angle_deg.len(),
                n_ops
            ),
        ));
    }
    if let Some(k) = angle_deg.iter().position(|a| !a.is_finite()) {
        return Err(invalid(
            "angle_deg",
            format!(
                "operation {k} has angle {}, not a finite number of degrees",
                angle_deg[k]
            ),
        ));
    }
    Ok(())
}
