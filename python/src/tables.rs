//! `tidewater.params()` and `tidewater.fluids()`: the engine's parameter
//! table and fluid library as columns (the package makes DataFrames).

use pyo3::prelude::*;
use pyo3::types::PyDict;
use tidewater::FluidKind;
use tidewater::{FluidLibrary, PARAMETERS};

/// Every model parameter: name, unit, default, min, max, meaning, source.
#[pyfunction]
pub fn params_table(py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
    let d = PyDict::new(py);
    let p = PARAMETERS.iter();
    d.set_item("name", p.clone().map(|i| i.name).collect::<Vec<_>>())?;
    d.set_item("unit", p.clone().map(|i| i.unit).collect::<Vec<_>>())?;
    d.set_item("default", p.clone().map(|i| i.default).collect::<Vec<_>>())?;
    d.set_item("min", p.clone().map(|i| i.min).collect::<Vec<_>>())?;
    d.set_item("max", p.clone().map(|i| i.max).collect::<Vec<_>>())?;
    d.set_item("meaning", p.clone().map(|i| i.meaning).collect::<Vec<_>>())?;
    d.set_item("source", p.map(|i| i.source).collect::<Vec<_>>())?;
    Ok(d)
}

/// How one column of the fluid table is read from a fluid.
type Composition = fn(&tidewater::Fluid) -> f64;

/// The bundled fluid library: id, name, kind and composition (mmol/L;
/// albumin g/L; osmolarity mOsm/L).
#[pyfunction]
pub fn fluids_table(py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
    let lib = FluidLibrary::bundled();
    let f = lib.fluids.iter();
    let d = PyDict::new(py);
    d.set_item("id", f.clone().map(|x| x.id.clone()).collect::<Vec<_>>())?;
    d.set_item(
        "name",
        f.clone().map(|x| x.name.clone()).collect::<Vec<_>>(),
    )?;
    d.set_item(
        "kind",
        f.clone()
            .map(|x| match x.kind {
                FluidKind::Given => "given",
                FluidKind::Loss => "loss",
            })
            .collect::<Vec<_>>(),
    )?;
    let columns: [(&str, Composition); 10] = [
        ("na_mmol_l", |x| x.na),
        ("k_mmol_l", |x| x.k),
        ("cl_mmol_l", |x| x.cl),
        ("buffer_mmol_l", |x| x.buffer),
        ("calcium_mmol_l", |x| x.calcium),
        ("magnesium_mmol_l", |x| x.magnesium),
        ("glucose_mmol_l", |x| x.glucose),
        ("urea_mmol_l", |x| x.urea),
        ("albumin_g_l", |x| x.albumin_g_l),
        ("osmolarity_mosm_l", |x| x.osmolarity()),
    ];
    for (name, get) in columns {
        d.set_item(name, f.clone().map(get).collect::<Vec<_>>())?;
    }
    Ok(d)
}
