//! The only Python-aware code of the crate (cargo feature `python`, switched on by maturin):
//! the `_core` module, error mapping and array conversion. Every other module of the crate
//! is plain Rust.
//!
//! Each glue function (1) borrows read-only views and checks shapes with the GIL held,
//! (2) releases the GIL and calls exactly one core function, (3) moves the result into
//! numpy and maps the error. (`find_point_group` keeps the GIL for structures up to 64
//! atoms, reads their arrays in place without registering a borrow, and makes the arrays
//! of its record when they are first read.) Files by job: `arrays` (conversion helpers), `detect`
//! (detection and group arithmetic), `count` (characters), `io` (readers and the element
//! table), `species` (nuclide symbols and isotopes as species), `batch` (many structures at
//! once).

mod arrays;
mod batch;
mod count;
mod detect;
mod io;
mod species;

use crate::error::Error;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;

/// The Python class (in gammatrace.errors) that each core error becomes.
pub(super) fn exception_class(err: &Error) -> &'static str {
    match err {
        Error::EmptyStructure
        | Error::LengthMismatch { .. }
        | Error::NonFiniteCoordinate { .. }
        | Error::CoordinateTooLarge { .. }
        | Error::UnknownAtomicNumber { .. }
        | Error::BadMass { .. }
        | Error::UnknownElement { .. }
        | Error::OverlappingAtoms { .. } => "StructureError",
        Error::BadTolerance { .. } | Error::InvalidArgument { .. } => "InputError",
        Error::NotASymmetry { .. } | Error::AmbiguousImage { .. } => "SymmetryError",
        Error::GroupClosure { .. } => "ToleranceError",
        Error::MalformedXyz { .. } | Error::Io { .. } => "ReadError",
        Error::Internal { .. } => "GammatraceError",
    }
}

pub(super) fn to_pyerr(py: Python<'_>, err: &Error) -> PyErr {
    let message = err.to_string();
    let class = py
        .import("gammatrace.errors")
        .and_then(|m| m.getattr(exception_class(err)));
    match class {
        Ok(cls) => match cls.call1((message.clone(),)) {
            Ok(instance) => PyErr::from_value(instance),
            Err(_) => PyException::new_err(message),
        },
        Err(_) => PyException::new_err(message),
    }
}

/// Wrapper so that `?` maps core errors through the one place above.
pub(super) struct CoreError(Error);

impl From<Error> for CoreError {
    fn from(e: Error) -> Self {
        CoreError(e)
    }
}

impl From<CoreError> for PyErr {
    fn from(e: CoreError) -> PyErr {
        Python::attach(|py| to_pyerr(py, &e.0))
    }
}

/// Run one core call; a panic (a bug) becomes `Error::Internal` instead of crossing into
/// Python as a BaseException.
pub(super) fn guarded<T>(f: impl FnOnce() -> crate::Result<T>) -> crate::Result<T> {
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(f)) {
        Ok(r) => r,
        Err(payload) => {
            let reason = payload
                .downcast_ref::<&str>()
                .map(|s| (*s).to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown panic".to_string());
            Err(Error::Internal {
                structure: 0,
                reason,
            })
        }
    }
}

pub(super) fn error_pair(err: &Error) -> (&'static str, String) {
    (exception_class(err), err.to_string())
}

/// The compiled core of gammatrace (private: use the gammatrace package).
#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(detect::find_point_group, m)?)?;
    m.add_function(wrap_pyfunction!(count::count_unshifted, m)?)?;
    m.add_function(wrap_pyfunction!(count::unshifted_atoms, m)?)?;
    m.add_function(wrap_pyfunction!(count::reduce_counts, m)?)?;
    m.add_function(wrap_pyfunction!(detect::map_operations, m)?)?;
    m.add_function(wrap_pyfunction!(count::shell_characters, m)?)?;
    m.add_function(wrap_pyfunction!(count::pi_characters, m)?)?;
    m.add_function(wrap_pyfunction!(count::orbital_contributions, m)?)?;
    m.add_function(wrap_pyfunction!(count::find_bonds, m)?)?;
    m.add_function(wrap_pyfunction!(count::bond_characters, m)?)?;
    m.add_function(wrap_pyfunction!(count::vector_set_characters, m)?)?;
    m.add_function(wrap_pyfunction!(count::orbits, m)?)?;
    m.add_function(wrap_pyfunction!(io::read_xyz_path, m)?)?;
    m.add_function(wrap_pyfunction!(io::read_xyz_bytes, m)?)?;
    m.add_function(wrap_pyfunction!(io::atomic_numbers, m)?)?;
    m.add_function(wrap_pyfunction!(io::element_data, m)?)?;
    m.add_function(wrap_pyfunction!(species::nuclides, m)?)?;
    m.add_function(wrap_pyfunction!(species::species, m)?)?;
    m.add_function(wrap_pyfunction!(batch::find_point_groups_batch, m)?)?;
    m.add_function(wrap_pyfunction!(batch::improper_within, m)?)?;
    m.add_function(wrap_pyfunction!(detect::canonical_group, m)?)?;
    m.add_function(wrap_pyfunction!(detect::locate_operations, m)?)?;
    m.add_function(wrap_pyfunction!(detect::identify_group, m)?)?;
    m.add_class::<detect::Detection>()?;
    m.add_class::<detect::GroupData>()?;
    m.add_class::<io::XyzFrames>()?;
    m.add_class::<io::FrameColumn>()?;
    m.add_class::<batch::BatchResult>()?;
    m.add("DEFAULT_TOLERANCE", crate::detect::DEFAULT_TOLERANCE)?;
    m.add("LINEAR_SUBGROUP_N", crate::detect::LINEAR_SUBGROUP_N)?;
    m.add("VERIFY_ALL_LIMIT", crate::detect::DEFAULT_VERIFY_ALL_LIMIT)?;
    m.add("PI_ALIGNMENT", crate::count::PI_ALIGNMENT)?;
    m.add("MASS_TOLERANCE", crate::structure::MASS_TOLERANCE)?;
    Ok(())
}
