//! Many structures at once (rust/batch.rs): detection and counts in parallel.

use super::arrays::{coords, slice1};
use super::{error_pair, CoreError};
use crate::{batch, detect};
use numpy::ndarray::{Array1, Array3};
use numpy::{IntoPyArray, PyArray1, PyArray3, PyReadonlyArray1, PyReadonlyArray2};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyList;

/// What a batch found, one entry per structure (operations ragged by `op_offsets`; see
/// _core.pyi): the core's vectors handed to numpy, no copy.
#[pyclass(frozen, get_all, module = "gammatrace._core")]
pub(super) struct BatchResult {
    point_group: Py<PyList>,
    order: Py<PyArray1<i64>>,
    max_deviation: Py<PyArray1<f64>>,
    n_proper: Py<PyArray1<i64>>,
    frame: Py<PyArray3<f64>>,
    operations: Py<PyArray3<f64>>,
    op_offsets: Py<PyArray1<i64>>,
    proper: Py<PyArray1<bool>>,
    angle: Py<PyArray1<f64>>,
    unshifted: Py<PyArray1<u64>>,
    errors: Py<PyList>,
    orbit_ids: Py<PyArray1<u32>>,
    improper_within: Py<PyArray1<f64>>,
}

/// Detect many structures at once (ragged: concatenated positions + offsets), in parallel;
/// `masses` (concatenated like the numbers, u) make isotopes different species;
/// `improper_ladder` (tolerances, ascending) asks for each structure's orbits and
/// improper_within as well.
#[pyfunction]
#[pyo3(signature = (positions, numbers, offsets, tol, linear_n, n_threads, masses=None, improper_ladder=None))]
#[allow(clippy::too_many_arguments)]
pub(super) fn find_point_groups_batch<'py>(
    py: Python<'py>,
    positions: PyReadonlyArray2<'py, f64>,
    numbers: PyReadonlyArray1<'py, i64>,
    offsets: PyReadonlyArray1<'py, i64>,
    tol: f64,
    linear_n: usize,
    n_threads: usize,
    masses: Option<PyReadonlyArray1<'py, f64>>,
    improper_ladder: Option<PyReadonlyArray1<'py, f64>>,
) -> PyResult<BatchResult> {
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let mass = masses.as_ref().map(|m| slice1(m, "masses")).transpose()?;
    let off_raw = slice1(&offsets, "offsets")?;
    let mut off = Vec::with_capacity(off_raw.len());
    for &o in off_raw {
        if o < 0 {
            return Err(PyValueError::new_err(format!(
                "offsets: negative entry {o}"
            )));
        }
        off.push(o as usize);
    }
    let opts = detect::DetectOptions {
        tol,
        linear_n,
        ..Default::default()
    };
    let ladder = improper_ladder
        .as_ref()
        .map(|l| slice1(l, "improper_ladder"))
        .transpose()?;
    let res = py
        .detach(|| batch::summarize_batch(pos, num, mass, &off, &opts, n_threads, ladder))
        .map_err(CoreError)?;
    let n_struct = res.frames.len();
    let flat: Vec<f64> = res.frames.iter().flatten().flatten().copied().collect();
    let frames = Array3::from_shape_vec((n_struct, 3, 3), flat)
        .map_err(|e| PyValueError::new_err(e.to_string()))?;
    let op_flat: Vec<f64> = res.operations.iter().flatten().flatten().copied().collect();
    let ops = Array3::from_shape_vec((res.operations.len(), 3, 3), op_flat)
        .map_err(|e| PyValueError::new_err(e.to_string()))?;
    let op_off: Vec<i64> = res.op_offsets.iter().map(|&o| o as i64).collect();
    let errors: Vec<Option<(&'static str, String)>> = res
        .errors
        .iter()
        .map(|e| e.as_ref().map(error_pair))
        .collect();
    Ok(BatchResult {
        point_group: PyList::new(py, &res.point_group)?.unbind(),
        order: Array1::from(res.order).into_pyarray(py).unbind(),
        max_deviation: Array1::from(res.max_deviation).into_pyarray(py).unbind(),
        n_proper: Array1::from(res.n_proper).into_pyarray(py).unbind(),
        frame: frames.into_pyarray(py).unbind(),
        operations: ops.into_pyarray(py).unbind(),
        op_offsets: Array1::from(op_off).into_pyarray(py).unbind(),
        proper: Array1::from(res.proper).into_pyarray(py).unbind(),
        angle: Array1::from(res.angle).into_pyarray(py).unbind(),
        unshifted: Array1::from(res.unshifted).into_pyarray(py).unbind(),
        errors: PyList::new(py, &errors)?.unbind(),
        orbit_ids: Array1::from(res.orbit_ids).into_pyarray(py).unbind(),
        improper_within: Array1::from(res.improper_within).into_pyarray(py).unbind(),
    })
}

/// The smallest tolerance at which a structure has an improper operation (see
/// `batch::improper_within`): detection at `tol`, then the tolerances of `ladder`
/// (ascending, the search bound last). None when none holds.
#[pyfunction]
#[pyo3(signature = (positions, numbers, tol, linear_n, verify_all_limit, ladder, masses=None))]
#[allow(clippy::too_many_arguments)]
pub(super) fn improper_within(
    py: Python<'_>,
    positions: PyReadonlyArray2<'_, f64>,
    numbers: PyReadonlyArray1<'_, i64>,
    tol: f64,
    linear_n: usize,
    verify_all_limit: usize,
    ladder: PyReadonlyArray1<'_, f64>,
    masses: Option<PyReadonlyArray1<'_, f64>>,
) -> PyResult<Option<f64>> {
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let mass = masses.as_ref().map(|m| slice1(m, "masses")).transpose()?;
    let lad = slice1(&ladder, "ladder")?;
    let opts = detect::DetectOptions {
        tol,
        linear_n,
        verify_all_limit,
    };
    py.detach(|| {
        super::guarded(|| {
            let sym = detect::find_point_group_with_masses(pos, num, mass, &opts)?;
            batch::improper_within(pos, num, mass, &opts, &sym, lad)
        })
    })
    .map_err(|e| CoreError(e).into())
}
