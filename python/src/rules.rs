//! Rules written in Python: callables `rule(labs) -> list of actions`,
//! called at their check times through the engine's [`Controller`] trait.
//! The simulation runs detached from the interpreter; each check attaches
//! to it for the call, so other Python threads run meanwhile. A rule that
//! raises stops the run with a `tidewater.RuleError` naming the rule and
//! the simulated time, the rule's own exception as its `__cause__`.

use crate::actions::Action;
use crate::errors::RuleError;
use pyo3::exceptions::{PyAttributeError, PyKeyError};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use tidewater::scenario::actions::BuildContext;
use tidewater::scenario::rules::{HISTORY_LABS, OBS_LABS};
use tidewater::{Controller, Snapshot};

/// The labs a rule sees at a check: the same names as a script rule's
/// `labs` (`labs.na`, `labs.na_change_24h`, `labs.urine_ml_h`, ...; see
/// `Labs.names()`), and `labs.running(label)`.
#[pyclass(module = "tidewater", name = "Labs", frozen)]
pub struct Labs {
    snapshot: Snapshot,
}

/// A lab by its script name.
fn lab(s: &Snapshot, name: &str) -> Option<f64> {
    match name {
        "time_h" => Some(s.time_h),
        "na_start" => Some(s.na_start),
        "na_change_since_start" => Some(s.na_change_since_start),
        "na_change_24h" => Some(s.na_change_24h),
        "na_change_48h" => Some(s.na_change_48h),
        _ => OBS_LABS
            .iter()
            .find(|d| d.name == name)
            .map(|d| (d.get)(&s.obs)),
    }
}

fn names() -> Vec<&'static str> {
    tidewater::scenario::rules::lab_names().collect()
}

#[pymethods]
impl Labs {
    fn __getattr__(&self, name: &str) -> PyResult<f64> {
        lab(&self.snapshot, name).ok_or_else(|| {
            PyAttributeError::new_err(format!(
                "labs has no \"{name}\"{}; the labs are: {}",
                tidewater::suggest::closest(name, names().into_iter())
                    .map(|s| format!(" (did you mean \"{s}\"?)"))
                    .unwrap_or_default(),
                names().join(", ")
            ))
        })
    }

    fn __getitem__(&self, name: &str) -> PyResult<f64> {
        lab(&self.snapshot, name).ok_or_else(|| PyKeyError::new_err(name.to_string()))
    }

    /// Whether a stream labelled `label` is running now.
    fn running(&self, label: &str) -> bool {
        self.snapshot.running.iter().any(|r| r == label)
    }

    /// Labels of the streams running now.
    #[getter]
    fn running_streams(&self) -> Vec<String> {
        self.snapshot.running.to_vec()
    }

    /// Every lab name with its unit.
    #[staticmethod]
    fn units() -> Vec<(&'static str, &'static str)> {
        HISTORY_LABS
            .iter()
            .copied()
            .chain(OBS_LABS.iter().map(|d| (d.name, d.unit)))
            .collect()
    }

    /// Every lab as a dict (name to value).
    fn as_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let d = PyDict::new(py);
        for name in names() {
            if let Some(v) = lab(&self.snapshot, name) {
                d.set_item(name, v)?;
            }
        }
        Ok(d)
    }

    fn __repr__(&self) -> String {
        format!(
            "<Labs at {:.2} h: Na {:.1} mmol/L>",
            self.snapshot.time_h, self.snapshot.obs.na_mmol_l
        )
    }
}

/// One Python rule.
pub struct Rule {
    /// Its name (the function's, unless given).
    pub name: String,
    /// Check interval, h.
    pub every_h: f64,
    /// The callable.
    pub func: Py<PyAny>,
}

/// Whether a rule of interval `every_h` is due at `t` (as a script's
/// rules are).
fn due(t: f64, every_h: f64) -> bool {
    let k = (t / every_h).round();
    (k * every_h - t).abs() < 1e-6
}

/// Calls the Python rules at the engine's check times.
pub struct PythonRules<'a> {
    /// The rules, in the order they were added.
    pub rules: &'a [Rule],
    /// What the actions are built with.
    pub build: BuildContext,
    /// The run log (what the rules did).
    pub log: Vec<String>,
    /// The exception that stopped the run.
    pub failure: Option<PyErr>,
}

impl PythonRules<'_> {
    fn call(
        &mut self,
        py: Python<'_>,
        rule: &Rule,
        snapshot: &Snapshot,
    ) -> PyResult<Vec<tidewater::Action>> {
        let t = snapshot.time_h;
        let labs = Labs {
            snapshot: snapshot.clone(),
        };
        let returned = rule.func.bind(py).call1((labs,))?;
        let actions: Vec<Action> = if returned.is_none() {
            Vec::new()
        } else if let Ok(one) = returned.extract::<Action>() {
            vec![one]
        } else {
            returned.extract().map_err(|_| {
                pyo3::exceptions::PyTypeError::new_err(format!(
                    "a rule returns a list of tidewater actions (or None), not {}",
                    returned
                        .get_type()
                        .name()
                        .map_or("this".into(), |n| n.to_string())
                ))
            })?
        };
        let mut out = Vec::new();
        for a in actions {
            let built = a.build(&self.build).map_err(|f| f.into_pyerr(py))?;
            let shown = if a.spec.starts_something() {
                format!(
                    "{} [{}]",
                    a.spec,
                    a.label.clone().unwrap_or_else(|| a.spec.default_label())
                )
            } else {
                a.spec.to_string()
            };
            self.log.push(format!(
                "t = {t:.2} h: rule {}: {shown} (Na {:.1} mmol/L)",
                rule.name, snapshot.obs.na_mmol_l
            ));
            out.extend(built);
        }
        Ok(out)
    }
}

impl Controller for PythonRules<'_> {
    fn check(&mut self, snapshot: &Snapshot) -> Result<Vec<tidewater::Action>, String> {
        let mut actions = Vec::new();
        let t = snapshot.time_h;
        for rule in self.rules {
            if !due(t, rule.every_h) {
                continue;
            }
            let called = Python::attach(|py| {
                self.call(py, rule, snapshot).map_err(|cause| {
                    let err = RuleError::new_err(format!(
                        "rule {} failed at t = {t:.2} h: {cause}",
                        rule.name
                    ));
                    let v = err.value(py);
                    let _ = v.setattr("rule", rule.name.clone());
                    let _ = v.setattr("time_h", t);
                    let _ = v.setattr("pool", py.None());
                    let _ = v.setattr("file", py.None());
                    let _ = v.setattr("line", py.None());
                    err.set_cause(py, Some(cause));
                    err
                })
            });
            match called {
                Ok(a) => actions.extend(a),
                Err(e) => {
                    let message = e.to_string();
                    self.failure = Some(e);
                    return Err(message);
                }
            }
        }
        Ok(actions)
    }
}
