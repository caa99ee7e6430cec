//! Reading XYZ files and text (rust/readers/) into ragged numpy arrays, and the element
//! table (symbols, numbers, masses, radii).

use super::arrays::slice1;
use super::{error_pair, exception_class, guarded, CoreError};
use crate::error::Error;
use crate::{readers, structure};
use numpy::ndarray::{Array1, Array2};
use numpy::{IntoPyArray, PyArray1, PyArray2, PyReadonlyArray1};
use pyo3::exceptions::{PyIndexError, PyValueError};
use pyo3::prelude::*;
use pyo3::pyclass::CompareOp;
use pyo3::types::{PyInt, PyList, PySlice, PyString, PyTuple};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;

/// Every frame of a file as ragged arrays (see _core.pyi): the reader's buffers handed to
/// numpy as they are, no copy; comments, info and errors as [`FrameColumn`]s, which make
/// their items on access (no Python object per frame).
#[pyclass(frozen, get_all, module = "gammatrace._core")]
pub(super) struct XyzFrames {
    positions: Py<PyArray2<f64>>,
    numbers: Py<PyArray1<i64>>,
    masses: Py<PyArray1<f64>>,
    offsets: Py<PyArray1<i64>>,
    comments: Py<FrameColumn>,
    info: Py<FrameColumn>,
    errors: Py<FrameColumn>,
}

/// What a [`FrameColumn`] reads its items from (shared, never copied).
#[derive(Clone)]
enum Column {
    /// The comment line of each frame.
    Comments(Arc<readers::Comments>),
    /// The `key=value` pairs of each comment line, parsed on access.
    Info(Arc<readers::Comments>),
    /// `None` or (error type, message) of each of `n` frames; only bad frames are stored.
    Errors {
        n: usize,
        failed: Arc<Vec<(usize, Error)>>,
    },
}

impl Column {
    fn name(&self) -> &'static str {
        match self {
            Column::Comments(_) => "comments",
            Column::Info(_) => "info",
            Column::Errors { .. } => "errors",
        }
    }

    fn len(&self) -> usize {
        match self {
            Column::Comments(c) | Column::Info(c) => c.len(),
            Column::Errors { n, .. } => *n,
        }
    }

    /// The item of frame `k` (< len).
    fn item<'py>(&self, py: Python<'py>, k: usize) -> PyResult<Bound<'py, PyAny>> {
        match self {
            Column::Comments(c) => Ok(PyString::new(py, c.get(k).unwrap_or_default()).into_any()),
            Column::Info(c) => {
                let pairs = c.get(k).map(readers::comment_info).unwrap_or_default();
                Ok(PyList::new(py, pairs)?.into_any())
            }
            Column::Errors { failed, .. } => match failed.binary_search_by_key(&k, |(f, _)| *f) {
                Ok(i) => Ok(error_pair(&failed[i].1).into_pyobject(py)?.into_any()),
                Err(_) => Ok(py.None().into_bound(py)),
            },
        }
    }
}

/// One value per frame of an `XyzFrames` (comments, info or errors), made when asked for: a
/// read-only sequence (`len`, indexing with negative indices, slices as lists, iteration,
/// `==` with a list, a tuple or another column).
#[pyclass(frozen, module = "gammatrace._core")]
pub(super) struct FrameColumn {
    column: Column,
}

#[pymethods]
impl FrameColumn {
    #[allow(non_upper_case_globals)]
    const __hash__: Option<Py<PyAny>> = None;

    fn __len__(&self) -> usize {
        self.column.len()
    }

    fn __getitem__<'py>(
        &self,
        py: Python<'py>,
        key: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let n = self.column.len();
        if let Ok(slice) = key.cast::<PySlice>() {
            let s = slice.indices(n as isize)?;
            let items = (0..s.slicelength)
                .map(|i| {
                    self.column
                        .item(py, (s.start + i as isize * s.step) as usize)
                })
                .collect::<PyResult<Vec<_>>>()?;
            return Ok(PyList::new(py, items)?.into_any());
        }
        let out_of_range = || {
            PyIndexError::new_err(format!(
                "{} index {key} is out of range for {n} frames",
                self.column.name()
            ))
        };
        let k: isize = match key.extract() {
            Ok(k) => k,
            // an integer too large for an index is out of range, as for a list
            Err(_) if key.is_instance_of::<PyInt>() => return Err(out_of_range()),
            Err(e) => return Err(e),
        };
        let j = if k < 0 { k + n as isize } else { k };
        if j < 0 || j >= n as isize {
            return Err(out_of_range());
        }
        self.column.item(py, j as usize)
    }

    fn __iter__(&self) -> FrameColumnIter {
        FrameColumnIter {
            column: self.column.clone(),
            next: AtomicUsize::new(0),
        }
    }

    fn __richcmp__<'py>(
        &self,
        py: Python<'py>,
        other: &Bound<'py, PyAny>,
        op: CompareOp,
    ) -> PyResult<Py<PyAny>> {
        let is_sequence = other.is_instance_of::<PyList>()
            || other.is_instance_of::<PyTuple>()
            || other.is_instance_of::<FrameColumn>();
        if !is_sequence || !matches!(op, CompareOp::Eq | CompareOp::Ne) {
            return Ok(py.NotImplemented());
        }
        let n = self.column.len();
        let mut equal = other.len()? == n;
        for k in 0..n {
            if !equal {
                break;
            }
            equal = self.column.item(py, k)?.eq(other.get_item(k)?)?;
        }
        let result = matches!(op, CompareOp::Eq) == equal;
        Ok(result.into_pyobject(py)?.to_owned().into_any().unbind())
    }

    fn __repr__(&self, py: Python<'_>) -> PyResult<String> {
        const SHOWN: usize = 3;
        let n = self.column.len();
        let mut items = Vec::with_capacity(n.min(SHOWN) + 1);
        for k in 0..n.min(SHOWN) {
            items.push(self.column.item(py, k)?.repr()?.to_string());
        }
        if n > SHOWN {
            items.push("...".to_string());
        }
        Ok(format!(
            "<{} of {n} frames: [{}]>",
            self.column.name(),
            items.join(", ")
        ))
    }
}

/// Iterator over a [`FrameColumn`].
#[pyclass(frozen, module = "gammatrace._core")]
pub(super) struct FrameColumnIter {
    column: Column,
    next: AtomicUsize,
}

#[pymethods]
impl FrameColumnIter {
    fn __iter__(slf: PyRef<'_, Self>) -> PyRef<'_, Self> {
        slf
    }

    fn __next__<'py>(&self, py: Python<'py>) -> PyResult<Option<Bound<'py, PyAny>>> {
        let k = self.next.fetch_add(1, Ordering::Relaxed);
        if k >= self.column.len() {
            self.next.store(self.column.len(), Ordering::Relaxed);
            return Ok(None);
        }
        self.column.item(py, k).map(Some)
    }
}

pub(super) fn frames_to_object(py: Python<'_>, frames: readers::XyzFrames) -> PyResult<XyzFrames> {
    let n_frames = frames.n_frames();
    let n = frames.positions.len();
    // the reader's Vec<[f64; 3]> becomes the numpy buffer as it is: no copy
    let flat: Vec<f64> = frames.positions.into_flattened();
    let pos =
        Array2::from_shape_vec((n, 3), flat).map_err(|e| PyValueError::new_err(e.to_string()))?;
    // usize -> i64 in place (same size: the allocation is reused)
    let offsets: Vec<i64> = frames.offsets.into_iter().map(|o| o as i64).collect();
    let comments = Arc::new(frames.comments);
    let column = |column| Py::new(py, FrameColumn { column });
    Ok(XyzFrames {
        positions: pos.into_pyarray(py).unbind(),
        numbers: Array1::from(frames.numbers).into_pyarray(py).unbind(),
        masses: Array1::from(frames.masses).into_pyarray(py).unbind(),
        offsets: Array1::from(offsets).into_pyarray(py).unbind(),
        comments: column(Column::Comments(comments.clone()))?,
        info: column(Column::Info(comments))?,
        errors: column(Column::Errors {
            n: n_frames,
            failed: Arc::new(frames.errors),
        })?,
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
