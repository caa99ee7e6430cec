//! Detection and group arithmetic: `find_point_group`, `canonical_group`,
//! `locate_operations`, `map_operations`, and the `Detection` / `GroupData` records.

use super::arrays::{coords, index_array, index_rows, matrices, ops_array, slice1};
use super::{guarded, CoreError};
use crate::detect;
use crate::detect::canonical;
use numpy::ndarray::{Array1, Array2};
use numpy::{
    IntoPyArray, PyArray1, PyArray2, PyArray3, PyReadonlyArray1, PyReadonlyArray2, PyReadonlyArray3,
};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;

/// The point group of one structure as detection found it: a frozen record of numpy
/// arrays moved out of the core (see _core.pyi for each field).
#[pyclass(frozen, get_all, module = "gammatrace._core")]
pub(super) struct Detection {
    point_group: String,
    center: Py<PyArray1<f64>>,
    frame: Py<PyArray2<f64>>,
    operations: Py<PyArray3<f64>>,
    proper: Py<PyArray1<bool>>,
    angle: Py<PyArray1<f64>>,
    axis: Py<PyArray2<f64>>,
    canonical_index: Py<PyArray1<i64>>,
    class_of: Py<PyArray1<i64>>,
    generators: Py<PyArray1<i64>>,
    verified: Py<PyArray1<i64>>,
    permutations: Py<PyArray2<i64>>,
    max_deviation: f64,
}

/// The canonical operations of one group and their arithmetic (see _core.pyi).
#[pyclass(frozen, get_all, module = "gammatrace._core")]
pub(super) struct GroupData {
    name: String,
    operations: Py<PyArray3<f64>>,
    generators: Py<PyArray1<i64>>,
    class_of: Py<PyArray1<i64>>,
    inverse: Py<PyArray1<i64>>,
    square: Py<PyArray1<i64>>,
}

/// Point-group detection: a `Detection` (see _core.pyi).
#[pyfunction]
#[pyo3(signature = (positions, numbers, tol, linear_n, verify_all_limit))]
pub(super) fn find_point_group(
    py: Python<'_>,
    positions: PyReadonlyArray2<'_, f64>,
    numbers: PyReadonlyArray1<'_, i64>,
    tol: f64,
    linear_n: usize,
    verify_all_limit: usize,
) -> PyResult<Detection> {
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let opts = detect::DetectOptions {
        tol,
        linear_n,
        verify_all_limit,
    };
    let sym = py
        .detach(|| guarded(|| detect::find_point_group(pos, num, &opts)))
        .map_err(CoreError)?;
    let n = pos.len();
    let mats: Vec<[[f64; 3]; 3]> = sym.ops.iter().map(|o| o.matrix).collect();
    let proper: Vec<bool> = sym.ops.iter().map(|o| o.proper).collect();
    let angle: Vec<f64> = sym.ops.iter().map(|o| o.angle).collect();
    let axis: Vec<[f64; 3]> = sym.ops.iter().map(|o| o.axis).collect();
    Ok(Detection {
        point_group: sym.point_group,
        center: Array1::from(sym.center.to_vec()).into_pyarray(py).unbind(),
        frame: Array2::from(sym.frame.to_vec()).into_pyarray(py).unbind(),
        operations: ops_array(py, &mats)?,
        proper: Array1::from(proper).into_pyarray(py).unbind(),
        angle: Array1::from(angle).into_pyarray(py).unbind(),
        axis: Array2::from(axis).into_pyarray(py).unbind(),
        canonical_index: index_array(py, &sym.canonical_index),
        class_of: index_array(py, &sym.class_of),
        generators: index_array(py, &sym.generators),
        verified: index_array(py, &sym.verified),
        permutations: index_rows(py, &sym.permutations, n)?.unbind(),
        max_deviation: sym.max_deviation,
    })
}

/// The canonical operations of a group named as `Family::name` spells it.
#[pyfunction]
#[pyo3(signature = (name, linear_n))]
pub(super) fn canonical_group(py: Python<'_>, name: &str, linear_n: usize) -> PyResult<GroupData> {
    let fam = canonical::Family::from_name(name, linear_n)
        .ok_or_else(|| PyValueError::new_err(format!("no canonical group named {name:?}")))?;
    let data = py
        .detach(|| guarded(|| canonical::group_data(fam)))
        .map_err(CoreError)?;
    Ok(GroupData {
        name: fam.name(),
        operations: ops_array(py, &data.ops)?,
        generators: index_array(py, &data.generators),
        class_of: index_array(py, &data.class_of),
        inverse: index_array(py, &data.inverse),
        square: index_array(py, &data.square),
    })
}

/// Index of each query matrix among a group's canonical operations (exact membership).
#[pyfunction]
pub(super) fn locate_operations<'py>(
    py: Python<'py>,
    operations: PyReadonlyArray3<'py, f64>,
    queries: PyReadonlyArray3<'py, f64>,
) -> PyResult<Bound<'py, PyArray1<i64>>> {
    let ops = matrices(&operations, "operations")?;
    let q = matrices(&queries, "queries")?;
    let found = py
        .detach(|| guarded(|| canonical::locate(ops, q)))
        .map_err(CoreError)?;
    Ok(index_array(py, &found).into_bound(py))
}

pub(super) type MappedOperations<'py> = (Bound<'py, PyArray2<i64>>, Bound<'py, PyArray1<f64>>);

/// Permutations (k, n) and largest image distances (k,) of the given operations.
#[pyfunction]
pub(super) fn map_operations<'py>(
    py: Python<'py>,
    positions: PyReadonlyArray2<'py, f64>,
    numbers: PyReadonlyArray1<'py, i64>,
    center: [f64; 3],
    operations: PyReadonlyArray3<'py, f64>,
    tol: f64,
) -> PyResult<MappedOperations<'py>> {
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let ops = matrices(&operations, "operations")?;
    let (perms, devs) = py
        .detach(|| guarded(|| detect::map_operations(pos, num, center, ops, tol)))
        .map_err(CoreError)?;
    Ok((
        index_rows(py, &perms, pos.len())?,
        Array1::from(devs).into_pyarray(py),
    ))
}
