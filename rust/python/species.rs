//! Isotopes: nuclide symbols (`D`, `T`) and the species of atoms (element and mass) with
//! their symbols, from rust/structure.rs.

use super::arrays::slice1;
use super::{exception_class, CoreError};
use crate::error::Error;
use crate::structure;
use numpy::ndarray::Array1;
use numpy::{IntoPyArray, PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;

pub(super) type Nuclides<'py> = (Bound<'py, PyArray1<i64>>, Option<Bound<'py, PyArray1<f64>>>);

/// Atomic numbers and masses (u) of symbols that name an element or a nuclide (`D`, `T`):
/// the masses are None when no symbol names a nuclide, else the nuclide masses with the
/// standard atomic weight for element symbols. The error names the position of a bad one.
#[pyfunction]
pub(super) fn nuclides<'py>(py: Python<'py>, symbols: Vec<String>) -> PyResult<Nuclides<'py>> {
    let mut numbers = Vec::with_capacity(symbols.len());
    let mut given = Vec::with_capacity(symbols.len());
    for (i, s) in symbols.iter().enumerate() {
        match structure::nuclide(s) {
            Ok((z, m)) => {
                numbers.push(z);
                given.push(m);
            }
            Err(e) => {
                let class = py
                    .import("gammatrace.errors")?
                    .getattr(exception_class(&e))?;
                return Err(PyErr::from_value(class.call1((format!("atom {i}: {e}"),))?));
            }
        }
    }
    let masses = if given.iter().any(Option::is_some) {
        let standard = structure::standard_masses(&numbers).map_err(CoreError)?;
        let m: Vec<f64> = given
            .iter()
            .zip(standard)
            .map(|(g, std)| g.unwrap_or(std))
            .collect();
        Some(Array1::from(m).into_pyarray(py))
    } else {
        None
    };
    Ok((Array1::from(numbers).into_pyarray(py), masses))
}

pub(super) type SpeciesData<'py> = (Bound<'py, PyArray1<i64>>, Vec<String>);

/// Species codes (equal ⇔ same element and mass) and species symbols (`C`, `D`, `13C`) of
/// atoms with the given numbers and masses (u; None = standard atomic weights).
#[pyfunction]
#[pyo3(signature = (numbers, masses=None))]
pub(super) fn species<'py>(
    py: Python<'py>,
    numbers: PyReadonlyArray1<'py, i64>,
    masses: Option<PyReadonlyArray1<'py, f64>>,
) -> PyResult<SpeciesData<'py>> {
    let num = slice1(&numbers, "numbers")?;
    let mass = masses.as_ref().map(|m| slice1(m, "masses")).transpose()?;
    let (codes, symbols) = py
        .detach(|| {
            let sp = structure::Species::new(num, mass)?;
            let symbols = sp.symbols(num)?;
            Ok::<_, Error>((sp.codes, symbols))
        })
        .map_err(CoreError)?;
    Ok((Array1::from(codes).into_pyarray(py), symbols))
}
