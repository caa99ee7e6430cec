//! gammatrace core: point-group detection, unshifted-atom counting, readers and batches.
//!
//! Every module except this file is plain Rust (no pyo3, no numpy), unit-tested with
//! `cargo test`. This file holds the crate root and, behind the `python` feature that
//! maturin switches on, the only Python-aware code: array conversion and error mapping.
//! Each glue function (1) borrows read-only views and checks shapes with the GIL held,
//! (2) releases the GIL and calls exactly one core function, (3) moves the result into
//! numpy and maps the error.
#![cfg_attr(
    not(test),
    deny(clippy::unwrap_used, clippy::expect_used, clippy::panic)
)]
#![warn(missing_docs)]

pub mod batch;
pub mod count;
pub mod detect;
pub mod error;
pub mod grid;
pub mod lookup;
pub mod ops;
pub mod parallel;
pub mod readers;
pub mod structure;
#[cfg(test)]
mod testutil;

pub use error::{Error, Result};

#[cfg(feature = "python")]
mod glue {
    use crate::detect::canonical;
    use crate::error::Error;
    use crate::{batch, count, detect, readers, structure};
    use numpy::ndarray::{Array1, Array2, Array3};
    use numpy::{
        IntoPyArray, PyArray1, PyArray2, PyArray3, PyReadonlyArray1, PyReadonlyArray2,
        PyReadonlyArray3, PyUntypedArrayMethods,
    };
    use pyo3::exceptions::{PyException, PyValueError};
    use pyo3::prelude::*;
    use pyo3::types::{PyDict, PyList};

    /// The Python class (in gammatrace.errors) that each core error becomes.
    fn exception_class(err: &Error) -> &'static str {
        match err {
            Error::EmptyStructure
            | Error::LengthMismatch { .. }
            | Error::NonFiniteCoordinate { .. }
            | Error::CoordinateTooLarge { .. }
            | Error::UnknownAtomicNumber { .. }
            | Error::UnknownElement { .. }
            | Error::OverlappingAtoms { .. } => "StructureError",
            Error::BadTolerance { .. } | Error::InvalidArgument { .. } => "InputError",
            Error::NotASymmetry { .. } | Error::AmbiguousImage { .. } => "SymmetryError",
            Error::GroupClosure { .. } => "ToleranceError",
            Error::MalformedXyz { .. } | Error::Io { .. } => "ReadError",
            Error::Internal { .. } => "GammatraceError",
        }
    }

    fn to_pyerr(py: Python<'_>, err: &Error) -> PyErr {
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
    struct CoreError(Error);

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
    fn guarded<T>(f: impl FnOnce() -> crate::Result<T>) -> crate::Result<T> {
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

    fn error_pair(err: &Error) -> (&'static str, String) {
        (exception_class(err), err.to_string())
    }

    fn rows3<'a>(data: &'a [f64], name: &str) -> PyResult<&'a [[f64; 3]]> {
        let (chunks, rest) = data.as_chunks::<3>();
        if !rest.is_empty() {
            return Err(PyValueError::new_err(format!(
                "{name}: expected shape (n, 3), got {} values",
                data.len()
            )));
        }
        Ok(chunks)
    }

    fn mats3<'a>(data: &'a [f64], name: &str) -> PyResult<&'a [[[f64; 3]; 3]]> {
        let rows = rows3(data, name)?;
        let (mats, rest) = rows.as_chunks::<3>();
        if !rest.is_empty() {
            return Err(PyValueError::new_err(format!(
                "{name}: expected shape (k, 3, 3)"
            )));
        }
        Ok(mats)
    }

    fn slice2<'a>(a: &'a PyReadonlyArray2<'_, f64>, name: &str) -> PyResult<&'a [f64]> {
        if a.shape()[1] != 3 {
            return Err(PyValueError::new_err(format!(
                "{name}: expected shape (n, 3), got {:?}",
                a.shape()
            )));
        }
        a.as_slice()
            .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
    }

    fn slice3<'a>(a: &'a PyReadonlyArray3<'_, f64>, name: &str) -> PyResult<&'a [f64]> {
        let s = a.shape();
        if s[1] != 3 || s[2] != 3 {
            return Err(PyValueError::new_err(format!(
                "{name}: expected shape (k, 3, 3), got {s:?}"
            )));
        }
        a.as_slice()
            .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
    }

    /// An `(n, 3)` float64 array as rows of 3 (borrowed, no copy).
    fn coords<'a>(a: &'a PyReadonlyArray2<'_, f64>, name: &str) -> PyResult<&'a [[f64; 3]]> {
        rows3(slice2(a, name)?, name)
    }

    /// A `(k, 3, 3)` float64 array as 3×3 matrices (borrowed, no copy).
    fn matrices<'a>(a: &'a PyReadonlyArray3<'_, f64>, name: &str) -> PyResult<&'a [[[f64; 3]; 3]]> {
        mats3(slice3(a, name)?, name)
    }

    /// Rows of atom indices (permutations, bond pairs) as an int64 `(rows, width)` array.
    fn index_rows<'py, R: AsRef<[u32]>>(
        py: Python<'py>,
        rows: &[R],
        width: usize,
    ) -> PyResult<Bound<'py, PyArray2<i64>>> {
        let flat: Vec<i64> = rows
            .iter()
            .flat_map(|r| r.as_ref().iter().map(|&j| j as i64))
            .collect();
        let arr = Array2::from_shape_vec((rows.len(), width), flat)
            .map_err(|e| PyValueError::new_err(e.to_string()))?;
        Ok(arr.into_pyarray(py))
    }

    fn slice1<'a, T: numpy::Element>(
        a: &'a PyReadonlyArray1<'_, T>,
        name: &str,
    ) -> PyResult<&'a [T]> {
        a.as_slice()
            .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
    }

    fn flat_mats(mats: &[[[f64; 3]; 3]]) -> Vec<f64> {
        mats.iter()
            .flat_map(|m| m.iter().flatten().copied())
            .collect()
    }

    fn index_array(py: Python<'_>, v: &[usize]) -> Py<PyArray1<i64>> {
        let a: Vec<i64> = v.iter().map(|&i| i as i64).collect();
        Array1::from(a).into_pyarray(py).unbind()
    }

    fn ops_array(py: Python<'_>, mats: &[[[f64; 3]; 3]]) -> PyResult<Py<PyArray3<f64>>> {
        let arr = Array3::from_shape_vec((mats.len(), 3, 3), flat_mats(mats))
            .map_err(|e| PyValueError::new_err(e.to_string()))?;
        Ok(arr.into_pyarray(py).unbind())
    }

    /// The point group of one structure as detection found it: a frozen record of numpy
    /// arrays moved out of the core (see _core.pyi for each field).
    #[pyclass(frozen, get_all, module = "gammatrace._core")]
    struct Detection {
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
    struct GroupData {
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
    fn find_point_group(
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
    fn canonical_group(py: Python<'_>, name: &str, linear_n: usize) -> PyResult<GroupData> {
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
    fn locate_operations<'py>(
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

    type MappedOperations<'py> = (Bound<'py, PyArray2<i64>>, Bound<'py, PyArray1<f64>>);

    /// Permutations (k, n) and largest image distances (k,) of the given operations.
    #[pyfunction]
    fn map_operations<'py>(
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

    /// Unshifted atoms per operation.
    #[pyfunction]
    fn count_unshifted<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        center: [f64; 3],
        operations: PyReadonlyArray3<'py, f64>,
        tol: f64,
    ) -> PyResult<Bound<'py, PyArray1<u64>>> {
        let pos = coords(&positions, "positions")?;
        let ops = matrices(&operations, "operations")?;
        let out = py.detach(|| count::count_unshifted(pos, center, ops, tol));
        Ok(out.into_pyarray(py))
    }

    /// Characters of a basis of angular-momentum shells on the atoms, per operation.
    #[pyfunction]
    #[allow(clippy::too_many_arguments)]
    fn shell_characters<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        center: [f64; 3],
        operations: PyReadonlyArray3<'py, f64>,
        proper: PyReadonlyArray1<'py, bool>,
        angle: PyReadonlyArray1<'py, f64>,
        shell_counts: PyReadonlyArray2<'py, u32>,
        tol: f64,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let pos = coords(&positions, "positions")?;
        let ops = matrices(&operations, "operations")?;
        let prop = slice1(&proper, "proper")?;
        let ang = slice1(&angle, "angle")?;
        let n_l = shell_counts.shape()[1];
        let shells = shell_counts
            .as_slice()
            .map_err(|_| PyValueError::new_err("shell_counts: array must be C-contiguous"))?;
        let out = py
            .detach(|| {
                guarded(|| count::shell_characters(pos, center, ops, prop, ang, shells, n_l, tol))
            })
            .map_err(CoreError)?;
        Ok(out.into_pyarray(py))
    }

    /// Contribution of one shell of angular momentum l per unshifted atom, per operation.
    #[pyfunction]
    fn orbital_contributions<'py>(
        py: Python<'py>,
        proper: PyReadonlyArray1<'py, bool>,
        angle: PyReadonlyArray1<'py, f64>,
        l: usize,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let prop = slice1(&proper, "proper")?;
        let ang = slice1(&angle, "angle")?;
        let out = count::orbital_contributions(prop, ang, l).map_err(CoreError)?;
        Ok(out.into_pyarray(py))
    }

    /// Characters of one p orbital per atom perpendicular to the molecular plane.
    #[pyfunction]
    fn pi_characters<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        center: [f64; 3],
        operations: PyReadonlyArray3<'py, f64>,
        normal: [f64; 3],
        tol: f64,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let pos = coords(&positions, "positions")?;
        let ops = matrices(&operations, "operations")?;
        let out = py.detach(|| count::pi_characters(pos, center, ops, normal, tol));
        Ok(out.into_pyarray(py))
    }

    /// Bonds from covalent radii: (n_bonds, 2) int64 atom pairs.
    #[pyfunction]
    fn find_bonds<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        radii: PyReadonlyArray1<'py, f64>,
        scale: f64,
    ) -> PyResult<Bound<'py, PyArray2<i64>>> {
        let pos = coords(&positions, "positions")?;
        let rad = slice1(&radii, "radii")?;
        let bonds = py
            .detach(|| count::find_bonds(pos, rad, scale))
            .map_err(CoreError)?;
        index_rows(py, &bonds, 2)
    }

    /// Characters of bond stretches (oriented=False) or vectors along bonds (oriented=True).
    #[pyfunction]
    fn bond_characters<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        center: [f64; 3],
        operations: PyReadonlyArray3<'py, f64>,
        bonds: PyReadonlyArray2<'py, i64>,
        oriented: bool,
        tol: f64,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let pos = coords(&positions, "positions")?;
        let ops = matrices(&operations, "operations")?;
        if bonds.ndim() != 2 || (bonds.shape()[1] != 2 && bonds.shape()[0] != 0) {
            return Err(PyValueError::new_err(format!(
                "bonds: expected shape (n_bonds, 2), got {:?}",
                bonds.shape()
            )));
        }
        let raw = bonds
            .as_slice()
            .map_err(|_| PyValueError::new_err("bonds: array must be C-contiguous"))?;
        let mut pairs = Vec::with_capacity(raw.len() / 2);
        for (k, p) in raw.chunks_exact(2).enumerate() {
            let ok = |v: i64| v >= 0 && v <= u32::MAX as i64;
            if !ok(p[0]) || !ok(p[1]) {
                return Err(PyValueError::new_err(format!(
                    "bonds: bond {k} names atom indices ({}, {}), which do not exist",
                    p[0], p[1]
                )));
            }
            pairs.push([p[0] as u32, p[1] as u32]);
        }
        let out = py
            .detach(|| guarded(|| count::bond_characters(pos, center, ops, &pairs, oriented, tol)))
            .map_err(CoreError)?;
        Ok(out.into_pyarray(py))
    }

    /// Characters of a user's own set of 3-vectors at every atom.
    #[pyfunction]
    fn vector_set_characters<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        center: [f64; 3],
        operations: PyReadonlyArray3<'py, f64>,
        vectors: PyReadonlyArray2<'py, f64>,
        per_atom: usize,
        tol: f64,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let pos = coords(&positions, "positions")?;
        let ops = matrices(&operations, "operations")?;
        let vec = coords(&vectors, "vectors")?;
        let out = py
            .detach(|| {
                guarded(|| count::vector_set_characters(pos, center, ops, vec, per_atom, tol))
            })
            .map_err(CoreError)?;
        Ok(out.into_pyarray(py))
    }

    /// Orbit index of each atom under the group generated by the permutations.
    #[pyfunction]
    fn orbits<'py>(
        py: Python<'py>,
        n_atoms: usize,
        permutations: PyReadonlyArray2<'py, i64>,
    ) -> PyResult<Bound<'py, PyArray1<u32>>> {
        let shape = permutations.shape().to_vec();
        let raw = permutations
            .as_slice()
            .map_err(|_| PyValueError::new_err("permutations: array must be C-contiguous"))?;
        let mut perms = Vec::with_capacity(shape[0]);
        for row in raw.chunks(shape[1].max(1)).take(shape[0]) {
            let mut p = Vec::with_capacity(row.len());
            for &v in row {
                if v < 0 || v > u32::MAX as i64 {
                    return Err(PyValueError::new_err(format!(
                        "permutations: entry {v} is not an atom index"
                    )));
                }
                p.push(v as u32);
            }
            perms.push(p);
        }
        let out = py
            .detach(|| count::orbits(n_atoms, &perms))
            .map_err(CoreError)?;
        Ok(out.into_pyarray(py))
    }

    fn frames_to_dict<'py>(
        py: Python<'py>,
        frames: readers::XyzFrames,
    ) -> PyResult<Bound<'py, PyDict>> {
        let out = PyDict::new(py);
        let n = frames.positions.len();
        let flat: Vec<f64> = frames.positions.iter().flatten().copied().collect();
        let pos = Array2::from_shape_vec((n, 3), flat)
            .map_err(|e| PyValueError::new_err(e.to_string()))?;
        out.set_item("positions", pos.into_pyarray(py))?;
        out.set_item("numbers", Array1::from(frames.numbers).into_pyarray(py))?;
        let offsets: Vec<i64> = frames.offsets.iter().map(|&o| o as i64).collect();
        out.set_item("offsets", Array1::from(offsets).into_pyarray(py))?;
        out.set_item("comments", PyList::new(py, &frames.comments)?)?;
        out.set_item("info", PyList::new(py, &frames.info)?)?;
        let errors: Vec<Option<(&'static str, String)>> = frames
            .errors
            .iter()
            .map(|e| e.as_ref().map(error_pair))
            .collect();
        out.set_item("errors", PyList::new(py, &errors)?)?;
        Ok(out)
    }

    fn element_number(symbol: &str) -> Option<i64> {
        structure::atomic_number(symbol).ok()
    }

    /// Read a (multi-frame, extended) XYZ file; bad frames carry an error, the rest are read.
    #[pyfunction]
    fn read_xyz_path<'py>(
        py: Python<'py>,
        path: &str,
        source: &str,
    ) -> PyResult<Bound<'py, PyDict>> {
        let p = std::path::PathBuf::from(path);
        let frames = py
            .detach(|| guarded(|| readers::read_xyz_path(&p, source, &element_number)))
            .map_err(CoreError)?;
        frames_to_dict(py, frames)
    }

    /// Read XYZ text held in memory (for standard input).
    #[pyfunction]
    fn read_xyz_bytes<'py>(
        py: Python<'py>,
        data: &[u8],
        source: &str,
    ) -> PyResult<Bound<'py, PyDict>> {
        let frames = py.detach(|| readers::read_xyz_bytes(data, source, &element_number));
        frames_to_dict(py, frames)
    }

    /// Atomic numbers of element symbols (error names the position of a bad one).
    #[pyfunction]
    fn atomic_numbers<'py>(
        py: Python<'py>,
        symbols: Vec<String>,
    ) -> PyResult<Bound<'py, PyArray1<i64>>> {
        let mut out = Vec::with_capacity(symbols.len());
        for (i, s) in symbols.iter().enumerate() {
            match structure::atomic_number(s) {
                Ok(z) => out.push(z),
                Err(e) => {
                    let msg = format!("atom {i}: {e}");
                    let class = py
                        .import("gammatrace.errors")?
                        .getattr(exception_class(&e))?;
                    return Err(PyErr::from_value(class.call1((msg,))?));
                }
            }
        }
        Ok(Array1::from(out).into_pyarray(py))
    }

    type ElementData<'py> = (
        Bound<'py, PyArray1<f64>>,
        Bound<'py, PyArray1<f64>>,
        Vec<String>,
    );

    /// Element data for atomic numbers: (masses, covalent radii, symbols).
    #[pyfunction]
    fn element_data<'py>(
        py: Python<'py>,
        numbers: PyReadonlyArray1<'py, i64>,
    ) -> PyResult<ElementData<'py>> {
        let num = slice1(&numbers, "numbers")?;
        let mut masses = Vec::with_capacity(num.len());
        let mut radii = Vec::with_capacity(num.len());
        let mut symbols = Vec::with_capacity(num.len());
        for (i, &z) in num.iter().enumerate() {
            match (
                structure::mass(z),
                structure::covalent_radius(z),
                structure::symbol(z),
            ) {
                (Some(m), Some(r), Some(s)) => {
                    masses.push(m);
                    radii.push(r);
                    symbols.push(s.to_string());
                }
                _ => {
                    return Err(CoreError(Error::UnknownAtomicNumber { atom: i, number: z }).into())
                }
            }
        }
        Ok((
            Array1::from(masses).into_pyarray(py),
            Array1::from(radii).into_pyarray(py),
            symbols,
        ))
    }

    /// Detect many structures at once (ragged: concatenated positions + offsets), in parallel.
    #[pyfunction]
    #[pyo3(signature = (positions, numbers, offsets, tol, linear_n, n_threads))]
    fn find_point_groups_batch<'py>(
        py: Python<'py>,
        positions: PyReadonlyArray2<'py, f64>,
        numbers: PyReadonlyArray1<'py, i64>,
        offsets: PyReadonlyArray1<'py, i64>,
        tol: f64,
        linear_n: usize,
        n_threads: usize,
    ) -> PyResult<Bound<'py, PyDict>> {
        let pos = coords(&positions, "positions")?;
        let num = slice1(&numbers, "numbers")?;
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
        let res = py
            .detach(|| batch::summarize_batch(pos, num, &off, &opts, n_threads))
            .map_err(CoreError)?;
        let out = PyDict::new(py);
        out.set_item("point_group", PyList::new(py, &res.point_group)?)?;
        out.set_item("order", Array1::from(res.order).into_pyarray(py))?;
        out.set_item(
            "max_deviation",
            Array1::from(res.max_deviation).into_pyarray(py),
        )?;
        out.set_item("n_proper", Array1::from(res.n_proper).into_pyarray(py))?;
        let n_struct = res.frames.len();
        let flat: Vec<f64> = res.frames.iter().flatten().flatten().copied().collect();
        let frames = Array3::from_shape_vec((n_struct, 3, 3), flat)
            .map_err(|e| PyValueError::new_err(e.to_string()))?;
        out.set_item("frame", frames.into_pyarray(py))?;
        let op_flat: Vec<f64> = res.operations.iter().flatten().flatten().copied().collect();
        let ops = Array3::from_shape_vec((res.operations.len(), 3, 3), op_flat)
            .map_err(|e| PyValueError::new_err(e.to_string()))?;
        out.set_item("operations", ops.into_pyarray(py))?;
        let op_off: Vec<i64> = res.op_offsets.iter().map(|&o| o as i64).collect();
        out.set_item("op_offsets", Array1::from(op_off).into_pyarray(py))?;
        out.set_item("proper", Array1::from(res.proper).into_pyarray(py))?;
        out.set_item("angle", Array1::from(res.angle).into_pyarray(py))?;
        out.set_item("unshifted", Array1::from(res.unshifted).into_pyarray(py))?;
        let errors: Vec<Option<(&'static str, String)>> = res
            .errors
            .iter()
            .map(|e| e.as_ref().map(error_pair))
            .collect();
        out.set_item("errors", PyList::new(py, &errors)?)?;
        Ok(out)
    }

    /// The compiled core of gammatrace (private: use the gammatrace package).
    #[pymodule]
    fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
        m.add_function(wrap_pyfunction!(find_point_group, m)?)?;
        m.add_function(wrap_pyfunction!(count_unshifted, m)?)?;
        m.add_function(wrap_pyfunction!(map_operations, m)?)?;
        m.add_function(wrap_pyfunction!(shell_characters, m)?)?;
        m.add_function(wrap_pyfunction!(pi_characters, m)?)?;
        m.add_function(wrap_pyfunction!(orbital_contributions, m)?)?;
        m.add_function(wrap_pyfunction!(find_bonds, m)?)?;
        m.add_function(wrap_pyfunction!(bond_characters, m)?)?;
        m.add_function(wrap_pyfunction!(vector_set_characters, m)?)?;
        m.add_function(wrap_pyfunction!(orbits, m)?)?;
        m.add_function(wrap_pyfunction!(read_xyz_path, m)?)?;
        m.add_function(wrap_pyfunction!(read_xyz_bytes, m)?)?;
        m.add_function(wrap_pyfunction!(atomic_numbers, m)?)?;
        m.add_function(wrap_pyfunction!(element_data, m)?)?;
        m.add_function(wrap_pyfunction!(find_point_groups_batch, m)?)?;
        m.add_function(wrap_pyfunction!(canonical_group, m)?)?;
        m.add_function(wrap_pyfunction!(locate_operations, m)?)?;
        m.add_class::<Detection>()?;
        m.add_class::<GroupData>()?;
        m.add("DEFAULT_TOLERANCE", detect::DEFAULT_TOLERANCE)?;
        m.add("LINEAR_SUBGROUP_N", detect::LINEAR_SUBGROUP_N)?;
        m.add("VERIFY_ALL_LIMIT", detect::DEFAULT_VERIFY_ALL_LIMIT)?;
        Ok(())
    }
}
