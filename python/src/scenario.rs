//! Running a scenario script (a file or its text) with settings, as the
//! command line's `tidewater run` does, into the samples and the summary.

use crate::errors::{bad_argument, Failure};
use crate::results::Outcome;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use std::path::Path;
use tidewater::scenario::Scenario;

/// Load and run a script; `settings` are `(name, value)` pairs named as in
/// a sweep spec: `script.<name>` for the script's `setting(name,
/// default)`, `patient.<field>` for a numeric patient field, anything else
/// an engine parameter.
fn run(script: &str, is_path: bool, settings: &[(String, f64)]) -> Result<Outcome, Failure> {
    let script_settings: Vec<(String, f64)> = settings
        .iter()
        .filter_map(|(n, v)| n.strip_prefix("script.").map(|s| (s.to_string(), *v)))
        .collect();
    let (scenario, name, source) = if is_path {
        let path = Path::new(script);
        let stem = path
            .file_stem()
            .unwrap_or_default()
            .to_string_lossy()
            .to_string();
        let s = Scenario::load_with_settings(path, &script_settings).map_err(Failure::scenario)?;
        (
            s,
            tidewater_cli::input::slug(&stem),
            path.display().to_string(),
        )
    } else {
        let s = Scenario::from_source_with_settings(
            "<script>",
            script,
            Path::new("."),
            &script_settings,
        )
        .map_err(Failure::scenario)?;
        (s, "script".to_string(), "<script>".to_string())
    };
    // A script setting the script never reads would change nothing.
    let read = scenario.settings_read();
    for (name, _) in &script_settings {
        if !read.contains(name) && !scenario.source().contains(&format!("\"{name}\"")) {
            return Err(bad_argument(
                &format!("script.{name}"),
                format!(
                    "script.{name}: the script reads no setting \"{name}\" (it reads: {})",
                    if read.is_empty() {
                        "none".to_string()
                    } else {
                        read.join(", ")
                    }
                ),
            ));
        }
    }
    let mut plan = scenario.plan().clone();
    for (name, value) in settings.iter().filter(|(n, _)| !n.starts_with("script.")) {
        tidewater::sweep::apply_overrides(&mut plan, &[(name.clone(), *value)])
            .map_err(|m| bad_argument(name, m))?;
    }
    let ran = scenario
        .run_with_plan(plan.clone())
        .map_err(Failure::scenario)?;
    let input = tidewater_cli::input::from_scenario_run(&scenario, &plan, ran, name, source)
        .map_err(|e| Failure::Input(format!("{e:#}"), Default::default()))?;
    Ok(Outcome::of(&input))
}

/// Run a scenario script (`is_path`: `script` is a file name, else the
/// script's text, whose data files are looked up in the working folder).
/// The interpreter is released while it runs. Returns the raw result the
/// package wraps in `tidewater.Result`.
#[pyfunction]
#[pyo3(signature = (script, is_path, settings))]
pub fn run_script<'py>(
    py: Python<'py>,
    script: String,
    is_path: bool,
    settings: Vec<(String, f64)>,
) -> PyResult<Bound<'py, PyDict>> {
    let outcome = py
        .detach(|| run(&script, is_path, &settings))
        .map_err(|f| f.into_pyerr(py))?;
    outcome.into_dict(py)
}
