//! Characters by counting (rust/count/): unshifted atoms, shells, π orbitals, bonds, vector
//! sets, and orbits.

use super::arrays::{coords, index_rows, matrices, slice1};
use super::{guarded, CoreError};
use crate::count;
use numpy::{
    IntoPyArray, PyArray1, PyArray2, PyReadonlyArray1, PyReadonlyArray2, PyReadonlyArray3,
    PyUntypedArrayMethods,
};
use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;

/// Unshifted atoms per operation.
#[pyfunction]
pub(super) fn count_unshifted<'py>(
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

/// Unshifted atoms per operation of a group (float64), every operation counted or, with
/// `per_class`, the first of each class standing for its class (`class_of`: the first
/// operation's index of each operation's class).
#[pyfunction]
pub(super) fn unshifted_atoms<'py>(
    py: Python<'py>,
    positions: PyReadonlyArray2<'py, f64>,
    center: [f64; 3],
    operations: PyReadonlyArray3<'py, f64>,
    class_of: PyReadonlyArray1<'py, i64>,
    per_class: bool,
    tol: f64,
) -> PyResult<Bound<'py, PyArray1<f64>>> {
    let pos = coords(&positions, "positions")?;
    let ops = matrices(&operations, "operations")?;
    let classes = slice1(&class_of, "class_of")?
        .iter()
        .map(|&c| {
            usize::try_from(c)
                .map_err(|_| PyValueError::new_err(format!("class_of: negative index {c}")))
        })
        .collect::<PyResult<Vec<usize>>>()?;
    let run = || count::count_unshifted_by_class(pos, center, ops, &classes, per_class, tol);
    let counts = if pos.len() * ops.len() <= SMALL_WORK {
        run()
    } else {
        py.detach(run)
    }
    .map_err(CoreError)?;
    Ok(PyArray1::from_iter(
        py,
        counts.into_iter().map(|c| c as f64),
    ))
}

/// `(mult, ok)` of [`reduce_counts`].
pub(super) type ReducedArrays<'py> = (Bound<'py, PyArray2<i64>>, Bound<'py, PyArray1<bool>>);

/// Multiplicities of k structures of one group from their unshifted counts through a
/// prepared linear map (rust/reduce.rs): `(mult int64 (k, m), ok bool (k,))`.
#[pyfunction]
pub(super) fn reduce_counts<'py>(
    py: Python<'py>,
    counts: PyReadonlyArray2<'py, f64>,
    class_first: PyReadonlyArray1<'py, i64>,
    first: PyReadonlyArray1<'py, i64>,
    map: PyReadonlyArray2<'py, f64>,
    offset: PyReadonlyArray1<'py, f64>,
    tol: f64,
) -> PyResult<ReducedArrays<'py>> {
    let k = counts.shape()[0];
    let h = counts.shape()[1];
    let m = offset.len();
    let index = |a: &PyReadonlyArray1<'py, i64>, name: &str| -> PyResult<Vec<usize>> {
        slice1(a, name)?
            .iter()
            .map(|&i| {
                usize::try_from(i)
                    .map_err(|_| PyValueError::new_err(format!("{name}: negative index {i}")))
            })
            .collect()
    };
    let cf = index(&class_first, "class_first")?;
    let fi = index(&first, "first")?;
    let raw = counts
        .as_slice()
        .map_err(|_| PyValueError::new_err("counts: array must be C-contiguous"))?;
    let mp = map
        .as_slice()
        .map_err(|_| PyValueError::new_err("map: array must be C-contiguous"))?;
    let off = slice1(&offset, "offset")?;
    let out = crate::reduce::reduce_counts(raw, h, &cf, &fi, mp, off, tol).map_err(CoreError)?;
    let mult = numpy::ndarray::Array2::from_shape_vec((k, m), out.mult)
        .map_err(|e| PyValueError::new_err(e.to_string()))?;
    Ok((mult.into_pyarray(py), PyArray1::from_vec(py, out.ok)))
}

/// Up to this many atom-operation pairs a count runs without releasing the GIL (it takes
/// about a microsecond).
const SMALL_WORK: usize = 4096;

/// Characters of a basis of angular-momentum shells on the atoms, per operation.
#[pyfunction]
#[allow(clippy::too_many_arguments)]
pub(super) fn shell_characters<'py>(
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
pub(super) fn orbital_contributions<'py>(
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

/// Characters of one p orbital per π centre along its normal (a zero row: no orbital).
#[pyfunction]
pub(super) fn pi_characters<'py>(
    py: Python<'py>,
    positions: PyReadonlyArray2<'py, f64>,
    center: [f64; 3],
    operations: PyReadonlyArray3<'py, f64>,
    normals: PyReadonlyArray2<'py, f64>,
    tol: f64,
) -> PyResult<Bound<'py, PyArray1<f64>>> {
    let pos = coords(&positions, "positions")?;
    let ops = matrices(&operations, "operations")?;
    let nrm = coords(&normals, "normals")?;
    let out = py
        .detach(|| guarded(|| count::pi_characters(pos, center, ops, nrm, tol)))
        .map_err(CoreError)?;
    Ok(out.into_pyarray(py))
}

/// Bonds from covalent radii: (n_bonds, 2) int64 atom pairs.
#[pyfunction]
pub(super) fn find_bonds<'py>(
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
pub(super) fn bond_characters<'py>(
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
pub(super) fn vector_set_characters<'py>(
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
        .detach(|| guarded(|| count::vector_set_characters(pos, center, ops, vec, per_atom, tol)))
        .map_err(CoreError)?;
    Ok(out.into_pyarray(py))
}

/// Orbit index of each atom under the group generated by the permutations (those of `rows`
/// alone when given: a generating set's rows give the same orbits).
#[pyfunction]
#[pyo3(signature = (n_atoms, permutations, rows=None))]
pub(super) fn orbits<'py>(
    py: Python<'py>,
    n_atoms: usize,
    permutations: PyReadonlyArray2<'py, i64>,
    rows: Option<PyReadonlyArray1<'py, i64>>,
) -> PyResult<Bound<'py, PyArray1<i64>>> {
    let shape = permutations.shape().to_vec();
    let raw = permutations
        .as_slice()
        .map_err(|_| PyValueError::new_err("permutations: array must be C-contiguous"))?;
    let all: Vec<&[i64]> = raw.chunks(shape[1].max(1)).take(shape[0]).collect();
    let chosen: Vec<&[i64]> = match &rows {
        None => all,
        Some(r) => slice1(r, "rows")?
            .iter()
            .map(|&j| {
                usize::try_from(j)
                    .ok()
                    .and_then(|j| all.get(j).copied())
                    .ok_or_else(|| {
                        PyValueError::new_err(format!(
                            "rows: {j} is not a row of the {} permutations",
                            all.len()
                        ))
                    })
            })
            .collect::<PyResult<_>>()?,
    };
    let mut perms = Vec::with_capacity(chosen.len());
    for row in chosen {
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
    let run = || count::orbits(n_atoms, &perms);
    let out = if n_atoms * perms.len() <= SMALL_WORK {
        run()
    } else {
        py.detach(run)
    }
    .map_err(CoreError)?;
    Ok(PyArray1::from_iter(py, out.into_iter().map(i64::from)))
}
