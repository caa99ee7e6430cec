//! Detection and group arithmetic: `find_point_group`, `canonical_group`, `identify_group`,
//! `locate_operations`, `map_operations`, and the `Detection` / `GroupData` records.

use super::arrays::{
    coords, coords_unchecked, index_array, index_rows, matrices, ops_array, shaped, slice1,
    slice1_unchecked,
};
use super::{guarded, CoreError};
use crate::detect;
use crate::detect::canonical;
use crate::detect::naming;
use numpy::ndarray::{Array1, Ix2};
use numpy::{
    IntoPyArray, PyArray1, PyArray2, PyArray3, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2,
    PyReadonlyArray3, PyUntypedArrayMethods,
};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::sync::PyOnceLock;
use std::sync::Arc;

/// The point group of one structure as detection found it: a frozen record whose numpy
/// arrays (see _core.pyi for each field) are made from the core's result when first read:
/// a caller that reads the name alone pays for no array, and one that counts characters
/// never pays for the permutations (n_atoms × |G| int64). The core's result is kept with
/// the record (its permutations as u32: half the bytes of the array made from them).
#[pyclass(frozen, module = "gammatrace._core")]
pub(super) struct Detection {
    #[pyo3(get)]
    point_group: String,
    #[pyo3(get)]
    max_deviation: f64,
    #[pyo3(get)]
    best_verified_improper: Option<f64>,
    /// The core's result, from which each array is made.
    sym: detect::Symmetry,
    n_atoms: usize,
    center: PyOnceLock<Py<PyArray1<f64>>>,
    frame: PyOnceLock<Py<PyArray2<f64>>>,
    operations: PyOnceLock<Py<PyArray3<f64>>>,
    proper: PyOnceLock<Py<PyArray1<bool>>>,
    angle: PyOnceLock<Py<PyArray1<f64>>>,
    axis: PyOnceLock<Py<PyArray2<f64>>>,
    canonical_index: PyOnceLock<Py<PyArray1<i64>>>,
    class_of: PyOnceLock<Py<PyArray1<i64>>>,
    generators: PyOnceLock<Py<PyArray1<i64>>>,
    verified: PyOnceLock<Py<PyArray1<i64>>>,
    permutations: PyOnceLock<Py<PyArray2<i64>>>,
    deviations: PyOnceLock<Py<PyArray1<f64>>>,
    generator_rows: PyOnceLock<Py<PyArray1<i64>>>,
}

/// The array in `cell`, made by `make` from the core's result on first use.
fn lazy<'py, T>(
    py: Python<'py>,
    cell: &PyOnceLock<Py<T>>,
    sym: &detect::Symmetry,
    make: impl FnOnce(Python<'py>, &detect::Symmetry) -> PyResult<Py<T>>,
) -> PyResult<Bound<'py, T>> {
    if let Some(made) = cell.get(py) {
        return Ok(made.bind(py).clone());
    }
    // Made with the GIL held and set without blocking (an initialisation that waited would
    // first release the GIL): should a reentrant call have set the cell meanwhile, its array
    // is kept and this one dropped.
    let _ = cell.set(py, make(py, sym)?);
    let made = cell
        .get(py)
        .ok_or_else(|| pyo3::exceptions::PyRuntimeError::new_err("detection array not kept"))?;
    Ok(made.bind(py).clone())
}

fn center_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray1<f64>>> {
    Ok(PyArray1::from_slice(py, &sym.center).unbind())
}

fn frame_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray2<f64>>> {
    Ok(shaped(py, sym.frame.concat(), Ix2(3, 3))?.unbind())
}

fn operations_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray3<f64>>> {
    let mats: Vec<[[f64; 3]; 3]> = sym.ops.iter().map(|o| o.matrix).collect();
    ops_array(py, &mats)
}

fn proper_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray1<bool>>> {
    let proper: Vec<bool> = sym.ops.iter().map(|o| o.proper).collect();
    Ok(PyArray1::from_slice(py, &proper).unbind())
}

fn angle_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray1<f64>>> {
    let angle: Vec<f64> = sym.ops.iter().map(|o| o.angle).collect();
    Ok(PyArray1::from_slice(py, &angle).unbind())
}

fn axis_array(py: Python<'_>, sym: &detect::Symmetry) -> PyResult<Py<PyArray2<f64>>> {
    let axis: Vec<[f64; 3]> = sym.ops.iter().map(|o| o.axis).collect();
    Ok(shaped(py, axis.concat(), Ix2(axis.len(), 3))?.unbind())
}

#[pymethods]
impl Detection {
    #[getter]
    fn center<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<f64>>> {
        lazy(py, &self.center, &self.sym, center_array)
    }
    #[getter]
    fn frame<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray2<f64>>> {
        lazy(py, &self.frame, &self.sym, frame_array)
    }
    #[getter]
    fn operations<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray3<f64>>> {
        lazy(py, &self.operations, &self.sym, operations_array)
    }
    #[getter]
    fn proper<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<bool>>> {
        lazy(py, &self.proper, &self.sym, proper_array)
    }
    #[getter]
    fn angle<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<f64>>> {
        lazy(py, &self.angle, &self.sym, angle_array)
    }
    #[getter]
    fn axis<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray2<f64>>> {
        lazy(py, &self.axis, &self.sym, axis_array)
    }
    #[getter]
    fn canonical_index<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<i64>>> {
        lazy(py, &self.canonical_index, &self.sym, |py, s| {
            Ok(index_array(py, &s.canonical_index))
        })
    }
    #[getter]
    fn class_of<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<i64>>> {
        lazy(py, &self.class_of, &self.sym, |py, s| {
            Ok(index_array(py, &s.class_of))
        })
    }
    #[getter]
    fn generators<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<i64>>> {
        lazy(py, &self.generators, &self.sym, |py, s| {
            Ok(index_array(py, &s.generators))
        })
    }
    #[getter]
    fn verified<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<i64>>> {
        lazy(py, &self.verified, &self.sym, |py, s| {
            Ok(index_array(py, &s.verified))
        })
    }
    #[getter]
    fn permutations<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray2<i64>>> {
        let n = self.n_atoms;
        lazy(py, &self.permutations, &self.sym, |py, s| {
            Ok(index_rows(py, &s.permutations, n)?.unbind())
        })
    }
    #[getter]
    fn deviations<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<f64>>> {
        lazy(py, &self.deviations, &self.sym, |py, s| {
            Ok(PyArray1::from_slice(py, &s.deviations).unbind())
        })
    }
    #[getter]
    fn generator_rows<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray1<i64>>> {
        lazy(py, &self.generator_rows, &self.sym, |py, s| {
            Ok(index_array(py, &s.generator_rows()))
        })
    }
}

impl Detection {
    /// The record of a detection: arrays made when first read.
    fn new(sym: detect::Symmetry, n_atoms: usize) -> Self {
        Detection {
            point_group: sym.point_group.clone(),
            max_deviation: sym.max_deviation,
            best_verified_improper: sym.best_verified_improper(),
            sym,
            n_atoms,
            center: PyOnceLock::new(),
            frame: PyOnceLock::new(),
            operations: PyOnceLock::new(),
            proper: PyOnceLock::new(),
            angle: PyOnceLock::new(),
            axis: PyOnceLock::new(),
            canonical_index: PyOnceLock::new(),
            class_of: PyOnceLock::new(),
            generators: PyOnceLock::new(),
            verified: PyOnceLock::new(),
            permutations: PyOnceLock::new(),
            deviations: PyOnceLock::new(),
            generator_rows: PyOnceLock::new(),
        }
    }
}

/// The canonical operations of one group and their arithmetic (see _core.pyi).
#[pyclass(frozen, module = "gammatrace._core")]
pub(super) struct GroupData {
    #[pyo3(get)]
    name: String,
    #[pyo3(get)]
    operations: Py<PyArray3<f64>>,
    #[pyo3(get)]
    generators: Py<PyArray1<i64>>,
    #[pyo3(get)]
    class_of: Py<PyArray1<i64>>,
    #[pyo3(get)]
    inverse: Py<PyArray1<i64>>,
    #[pyo3(get)]
    square: Py<PyArray1<i64>>,
    /// The core's record (shared, immutable): `closure` works on its operations.
    core: Arc<canonical::GroupData>,
}

#[pymethods]
impl GroupData {
    /// Indices (ascending, int64) of the subgroup generated by the given operations.
    fn closure<'py>(
        &self,
        py: Python<'py>,
        generators: PyReadonlyArray1<'py, i64>,
    ) -> PyResult<Bound<'py, PyArray1<i64>>> {
        let gens: Vec<usize> = slice1(&generators, "generators")?
            .iter()
            .map(|&g| {
                usize::try_from(g)
                    .map_err(|_| PyValueError::new_err(format!("generators: negative index {g}")))
            })
            .collect::<PyResult<_>>()?;
        let core = Arc::clone(&self.core);
        let members = py
            .detach(|| guarded(|| naming::closure(&core.ops, &gens)))
            .map_err(CoreError)?;
        Ok(index_array(py, &members).into_bound(py))
    }
}

/// Up to this many atoms detection runs without releasing the GIL.
const KEEP_GIL_MAX_ATOMS: usize = 64;

/// Point-group detection: a `Detection` (see _core.pyi). `masses` (u, one per atom) make
/// atoms of one element with different masses different species; None = standard weights.
/// `search` ("auto", "plain" or "pruned") chooses the search, for tests and diagnosis.
#[pyfunction]
#[pyo3(signature = (positions, numbers, tol, linear_n, verify_all_limit, masses=None, *, search="auto"))]
#[allow(clippy::too_many_arguments)]
pub(super) fn find_point_group<'py>(
    py: Python<'py>,
    positions: &Bound<'py, PyArray2<f64>>,
    numbers: &Bound<'py, PyArray1<i64>>,
    tol: f64,
    linear_n: usize,
    verify_all_limit: usize,
    masses: Option<&Bound<'py, PyArray1<f64>>>,
    search: &str,
) -> PyResult<Detection> {
    let search = match search {
        "auto" => detect::Search::PrunedThenPlain,
        "plain" => detect::Search::Plain,
        "pruned" => detect::Search::Pruned,
        other => {
            return Err(PyValueError::new_err(format!(
                "search must be \"auto\", \"plain\" or \"pruned\", got {other:?}"
            )))
        }
    };
    let opts = detect::DetectOptions {
        tol,
        linear_n,
        verify_all_limit,
    };
    if positions.shape()[0] <= KEEP_GIL_MAX_ATOMS {
        // Small structures: the arrays are read in place with the GIL held throughout (the
        // core runs without releasing it and calls no Python code, so nothing can write to
        // them meanwhile), without registering a shared borrow.
        let pos = unsafe { coords_unchecked(positions, "positions") }?;
        let num = unsafe { slice1_unchecked(numbers, "numbers") }?;
        let mass = masses
            .map(|m| unsafe { slice1_unchecked(m, "masses") })
            .transpose()?;
        let sym = guarded(|| detect::find_point_group_searching(pos, num, mass, &opts, search))
            .map_err(CoreError)?;
        return Ok(Detection::new(sym, pos.len()));
    }
    let positions = positions.try_readonly()?;
    let numbers = numbers.try_readonly()?;
    let masses = masses.map(|m| m.try_readonly()).transpose()?;
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let mass = masses.as_ref().map(|m| slice1(m, "masses")).transpose()?;
    let sym = py
        .detach(|| guarded(|| detect::find_point_group_searching(pos, num, mass, &opts, search)))
        .map_err(CoreError)?;
    Ok(Detection::new(sym, pos.len()))
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
        core: data,
    })
}

/// Schoenflies name of any finite group of orthogonal matrices, named as detection names.
#[pyfunction]
pub(super) fn identify_group<'py>(
    py: Python<'py>,
    operations: PyReadonlyArray3<'py, f64>,
) -> PyResult<String> {
    let ops = matrices(&operations, "operations")?;
    let fam = py
        .detach(|| guarded(|| naming::identify_group(ops)))
        .map_err(CoreError)?;
    Ok(fam.name())
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

/// Permutations (k, n) and largest image distances (k,) of the given operations (atoms
/// matched by element and, with `masses`, by mass).
#[pyfunction]
#[pyo3(signature = (positions, numbers, center, operations, tol, masses=None))]
pub(super) fn map_operations<'py>(
    py: Python<'py>,
    positions: PyReadonlyArray2<'py, f64>,
    numbers: PyReadonlyArray1<'py, i64>,
    center: [f64; 3],
    operations: PyReadonlyArray3<'py, f64>,
    tol: f64,
    masses: Option<PyReadonlyArray1<'py, f64>>,
) -> PyResult<MappedOperations<'py>> {
    let pos = coords(&positions, "positions")?;
    let num = slice1(&numbers, "numbers")?;
    let mass = masses.as_ref().map(|m| slice1(m, "masses")).transpose()?;
    let ops = matrices(&operations, "operations")?;
    let (perms, devs) = py
        .detach(|| guarded(|| detect::map_operations(pos, num, mass, center, ops, tol)))
        .map_err(CoreError)?;
    Ok((
        index_rows(py, &perms, pos.len())?,
        Array1::from(devs).into_pyarray(py),
    ))
}
