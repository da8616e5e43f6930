//! `tidewater.sweep(spec)`: the engine's sweep (`tidewater::sweep::run_sweep`)
//! on worker threads, detached from the interpreter, into the same result
//! file `tidewater sweep` writes (a temporary file, read back and removed).

use crate::errors::Failure;
use pyo3::prelude::*;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use tidewater::scenario::Scenario;
use tidewater::sweep::{self, ScenarioRunner, Shard, SweepSpec};

/// A result file of this process that no other call uses.
fn scratch_file() -> PathBuf {
    static NEXT: AtomicUsize = AtomicUsize::new(0);
    let n = NEXT.fetch_add(1, Ordering::Relaxed);
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos());
    std::env::temp_dir().join(format!(
        "tidewater-sweep-{}-{n}-{nanos}.csv",
        std::process::id()
    ))
}

/// Removes the scratch file however the sweep ends.
struct Scratch(PathBuf);

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

fn run(spec_path: &Path, threads: usize) -> Result<String, Failure> {
    let file = spec_path.display().to_string();
    let text = tidewater::textfile::read_text(spec_path).map_err(|e| {
        Failure::input(
            &tidewater::InputError::DataFile {
                file: file.clone(),
                location: None,
                message: format!("cannot read the file: {e}"),
            },
            None,
        )
    })?;
    let spec = SweepSpec::from_yaml(&text, &file).map_err(Failure::sweep)?;
    let script = spec_path
        .parent()
        .unwrap_or(Path::new("."))
        .join(&spec.scenario);
    let scenario = Scenario::load(&script).map_err(Failure::scenario)?;
    sweep::check_script_settings(&spec, &text, &file, &scenario).map_err(Failure::sweep)?;
    let duration_h = scenario.plan().duration_h;
    let out = Scratch(scratch_file());
    sweep::run_sweep(
        &spec,
        duration_h,
        &out.0,
        Shard::ALL,
        threads.max(1),
        || {
            Scenario::load(&script)
                .map(|scenario| ScenarioRunner {
                    scenario,
                    rtol: spec.rtol,
                })
                .map_err(|e| e.to_string())
        },
        &(),
    )
    .map_err(Failure::sweep)?;
    std::fs::read_to_string(&out.0).map_err(|e| {
        Failure::input(
            &tidewater::InputError::DataFile {
                file: out.0.display().to_string(),
                location: None,
                message: format!("cannot read the sweep's results back: {e}"),
            },
            None,
        )
    })
}

/// Run the sweep of the spec file `spec_path` on `threads` workers (the
/// interpreter released meanwhile) and return the text of its result
/// file, the same bytes `tidewater sweep` writes into `results.csv`.
#[pyfunction]
#[pyo3(signature = (spec_path, threads=1))]
pub fn sweep_csv(py: Python<'_>, spec_path: PathBuf, threads: usize) -> PyResult<String> {
    py.detach(|| run(&spec_path, threads))
        .map_err(|f| f.into_pyerr(py))
}
