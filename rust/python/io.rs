//! Reading XYZ files and text (rust/readers/) into ragged numpy arrays, and the element
//! table (symbols, numbers, masses, radii).

use super::arrays::slice1;
use super::{error_pair, exception_class, guarded, CoreError};
use crate::error::Error;
use crate::{readers, structure};
use numpy::ndarray::{Array1, Array2};
use numpy::{IntoPyArray, PyArray1, PyArray2, PyReadonlyArray1};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use pyo3::types::PyList;

/// Every frame of a file as ragged arrays (see _core.pyi): the reader's buffers handed to
/// numpy as they are, no copy.
#[pyclass(frozen, get_all, module = "gammatrace._core")]
pub(super) struct XyzFrames {
    positions: Py<PyArray2<f64>>,
    numbers: Py<PyArray1<i64>>,
    masses: Py<PyArray1<f64>>,
    offsets: Py<PyArray1<i64>>,
    comments: Py<PyList>,
    info: Py<PyList>,
    errors: Py<PyList>,
}

pub(super) fn frames_to_object(py: Python<'_>, frames: readers::XyzFrames) -> PyResult<XyzFrames> {
    let n = frames.positions.len();
    // the reader's Vec<[f64; 3]> becomes the numpy buffer as it is: no copy
    let flat: Vec<f64> = frames.positions.into_flattened();
    let pos =
        Array2::from_shape_vec((n, 3), flat).map_err(|e| PyValueError::new_err(e.to_string()))?;
    let offsets: Vec<i64> = frames.offsets.iter().map(|&o| o as i64).collect();
    let errors: Vec<Option<(&'static str, String)>> = frames
        .errors
        .iter()
        .map(|e| e.as_ref().map(error_pair))
        .collect();
    Ok(XyzFrames {
        positions: pos.into_pyarray(py).unbind(),
        numbers: Array1::from(frames.numbers).into_pyarray(py).unbind(),
        masses: Array1::from(frames.masses).into_pyarray(py).unbind(),
        offsets: Array1::from(offsets).into_pyarray(py).unbind(),
        comments: PyList::new(py, &frames.comments)?.unbind(),
        info: PyList::new(py, &frames.info)?.unbind(),
        errors: PyList::new(py, &errors)?.unbind(),
    })
}

pub(super) fn element_number(symbol: &str) -> Option<(i64, Option<f64>)> {
    structure::nuclide(symbol).ok()
}

/// Read a (multi-frame, extended) XYZ file; bad frames carry an error, the rest are read.
#[pyfunction]
pub(super) fn read_xyz_path<'py>(py: Python<'py>, path: &str, source: &str) -> PyResult<XyzFrames> {
    let p = std::path::PathBuf::from(path);
    let frames = py
        .detach(|| guarded(|| readers::read_xyz_path(&p, source, &element_number)))
        .map_err(CoreError)?;
    frames_to_object(py, frames)
}

/// Read XYZ text held in memory (for standard input).
#[pyfunction]
pub(super) fn read_xyz_bytes<'py>(
    py: Python<'py>,
    data: &[u8],
    source: &str,
) -> PyResult<XyzFrames> {
    let frames = py.detach(|| readers::read_xyz_bytes(data, source, &element_number));
    frames_to_object(py, frames)
}

/// Atomic numbers of element symbols (error names the position of a bad one).
#[pyfunction]
pub(super) fn atomic_numbers<'py>(
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

pub(super) type ElementData<'py> = (
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Vec<String>,
);

/// Element data for atomic numbers: (masses, covalent radii, symbols).
#[pyfunction]
pub(super) fn element_data<'py>(
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
            _ => return Err(CoreError(Error::UnknownAtomicNumber { atom: i, number: z }).into()),
        }
    }
    Ok((
        Array1::from(masses).into_pyarray(py),
        Array1::from(radii).into_pyarray(py),
        symbols,
    ))
}
