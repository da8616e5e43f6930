//! Python bindings of Tidewater: the extension module `tidewater._native`,
//! which the pure-Python package `tidewater` (python/tidewater/) wraps
//! with DataFrames and type stubs.
//!
//! * `scenario.rs`: `run_script`, a scenario script (file or
//!   text) with settings, run as `tidewater run` runs it.
//! * `plan.rs`: `Patient` and `Plan` (the engine's plan builder), with
//!   `actions.rs` (`infuse`, `drink`, `stop`, ...) and `rules.rs` (Python
//!   callables as the engine's `Controller`, with `Labs`).
//! * `results.rs`: the samples and summary of a run, from the command
//!   line's own code (`tidewater_cli::samples`, `tidewater_cli::summary`).
//! * `sweep.rs`: the engine's parallel sweep; `tables.rs`: parameters
//!   and fluids.
//! * `errors.rs`: the engine's errors as `tidewater.InputError`,
//!   `tidewater.SimulationError` and `tidewater.RuleError`.
//!
//! The engine always runs detached from the interpreter; Python rules
//! attach to it for their calls.

use pyo3::prelude::*;

mod actions;
mod errors;
mod plan;
mod results;
mod rules;
mod scenario;
mod sweep;
mod tables;

/// The extension module.
#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    errors::register(m)?;
    actions::register(m)?;
    m.add_class::<plan::Patient>()?;
    m.add_class::<plan::Plan>()?;
    m.add_class::<rules::Labs>()?;
    m.add_function(wrap_pyfunction!(scenario::run_script, m)?)?;
    m.add_function(wrap_pyfunction!(sweep::sweep_csv, m)?)?;
    m.add_function(wrap_pyfunction!(tables::params_table, m)?)?;
    m.add_function(wrap_pyfunction!(tables::fluids_table, m)?)?;
    m.add("CAUTION", tidewater::CAUTION)?;
    m.add("COLUMNS", tidewater_cli::samples::COLUMNS.to_vec())?;
    m.add("VERSION", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
