//! Array conversion: borrowed numpy views as Rust slices (shapes checked) and owned results
//! moved into numpy.

use numpy::ndarray::Array1;
use numpy::{
    IntoPyArray, PyArray1, PyArray2, PyArray3, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2,
    PyReadonlyArray3, PyUntypedArrayMethods,
};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;

pub(super) fn rows3<'a>(data: &'a [f64], name: &str) -> PyResult<&'a [[f64; 3]]> {
    let (chunks, rest) = data.as_chunks::<3>();
    if !rest.is_empty() {
        return Err(PyValueError::new_err(format!(
            "{name}: expected shape (n, 3), got {} values",
            data.len()
        )));
    }
    Ok(chunks)
}

pub(super) fn mats3<'a>(data: &'a [f64], name: &str) -> PyResult<&'a [[[f64; 3]; 3]]> {
    let rows = rows3(data, name)?;
    let (mats, rest) = rows.as_chunks::<3>();
    if !rest.is_empty() {
        return Err(PyValueError::new_err(format!(
            "{name}: expected shape (k, 3, 3)"
        )));
    }
    Ok(mats)
}

pub(super) fn slice2<'a>(a: &'a PyReadonlyArray2<'_, f64>, name: &str) -> PyResult<&'a [f64]> {
    if a.shape()[1] != 3 {
        return Err(PyValueError::new_err(format!(
            "{name}: expected shape (n, 3), got {:?}",
            a.shape()
        )));
    }
    a.as_slice()
        .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
}

pub(super) fn slice3<'a>(a: &'a PyReadonlyArray3<'_, f64>, name: &str) -> PyResult<&'a [f64]> {
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
pub(super) fn coords<'a>(a: &'a PyReadonlyArray2<'_, f64>, name: &str) -> PyResult<&'a [[f64; 3]]> {
    rows3(slice2(a, name)?, name)
}

/// An `(n, 3)` float64 array as rows of 3, read in place without registering a borrow.
///
/// # Safety
/// Nothing may write to the array while the slice lives: the caller holds the GIL
/// throughout, runs no Python code, and no mutable borrow of the array is held.
pub(super) unsafe fn coords_unchecked<'a>(
    a: &'a Bound<'_, PyArray2<f64>>,
    name: &str,
) -> PyResult<&'a [[f64; 3]]> {
    if a.shape()[1] != 3 {
        return Err(PyValueError::new_err(format!(
            "{name}: expected shape (n, 3), got {:?}",
            a.shape()
        )));
    }
    let data = unsafe { a.as_slice() }
        .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))?;
    rows3(data, name)
}

/// A 1-d array as a slice, read in place without registering a borrow.
///
/// # Safety
/// As [`coords_unchecked`].
pub(super) unsafe fn slice1_unchecked<'a, T: numpy::Element>(
    a: &'a Bound<'_, PyArray1<T>>,
    name: &str,
) -> PyResult<&'a [T]> {
    unsafe { a.as_slice() }
        .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
}

/// A `(k, 3, 3)` float64 array as 3×3 matrices (borrowed, no copy).
pub(super) fn matrices<'a>(
    a: &'a PyReadonlyArray3<'_, f64>,
    name: &str,
) -> PyResult<&'a [[[f64; 3]; 3]]> {
    mats3(slice3(a, name)?, name)
}

/// Rows of atom indices (permutations, bond pairs) as an int64 `(rows, width)` array.
pub(super) fn index_rows<'py, R: AsRef<[u32]>>(
    py: Python<'py>,
    rows: &[R],
    width: usize,
) -> PyResult<Bound<'py, PyArray2<i64>>> {
    let flat: Vec<i64> = rows
        .iter()
        .flat_map(|r| r.as_ref().iter().map(|&j| j as i64))
        .collect();
    if flat.len() != rows.len() * width {
        return Err(PyValueError::new_err(format!(
            "rows of {width} expected, got {} values in {} rows",
            flat.len(),
            rows.len()
        )));
    }
    shaped(py, flat, numpy::ndarray::Ix2(rows.len(), width))
}

pub(super) fn slice1<'a, T: numpy::Element>(
    a: &'a PyReadonlyArray1<'_, T>,
    name: &str,
) -> PyResult<&'a [T]> {
    a.as_slice()
        .map_err(|_| PyValueError::new_err(format!("{name}: array must be C-contiguous")))
}

pub(super) fn flat_mats(mats: &[[[f64; 3]; 3]]) -> Vec<f64> {
    mats.iter()
        .flat_map(|m| m.iter().flatten().copied())
        .collect()
}

/// Arrays up to this many elements are copied into numpy-owned memory (one Python object);
/// larger ones are moved (no copy, but a container object that owns the Rust buffer).
const COPY_BELOW: usize = 4096;

/// An owned `Vec` as a numpy array of the given shape: copied when small, moved otherwise.
pub(super) fn shaped<T: numpy::Element + Copy, D: numpy::ndarray::Dimension>(
    py: Python<'_>,
    data: Vec<T>,
    shape: D,
) -> PyResult<Bound<'_, numpy::PyArray<T, D>>> {
    let bad = |e: numpy::ndarray::ShapeError| PyValueError::new_err(e.to_string());
    if data.len() <= COPY_BELOW {
        let view = numpy::ndarray::ArrayView::from_shape(shape, &data).map_err(bad)?;
        return Ok(numpy::ToPyArray::to_pyarray(&view, py));
    }
    let arr = numpy::ndarray::Array::from_shape_vec(shape, data).map_err(bad)?;
    Ok(arr.into_pyarray(py))
}

pub(super) fn index_array(py: Python<'_>, v: &[usize]) -> Py<PyArray1<i64>> {
    let a: Vec<i64> = v.iter().map(|&i| i as i64).collect();
    if a.len() <= COPY_BELOW {
        return PyArray1::from_slice(py, &a).unbind();
    }
    Array1::from(a).into_pyarray(py).unbind()
}

pub(super) fn ops_array(py: Python<'_>, mats: &[[[f64; 3]; 3]]) -> PyResult<Py<PyArray3<f64>>> {
    Ok(shaped(py, flat_mats(mats), numpy::ndarray::Ix3(mats.len(), 3, 3))?.unbind())
}
