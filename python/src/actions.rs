//! Actions a plan takes at a time or a rule takes now, as Python values
//! (`tidewater.infuse(...)`, `tidewater.stop(...)`, ...): each holds the
//! scenario language's [`ActionSpec`], so a Python plan and a script build
//! the same engine streams. Units ride in the keyword names.

use crate::errors::{bad_argument, Failure};
use pyo3::prelude::*;
use tidewater::scenario::actions::{ActionSpec, BuildContext};
use tidewater::scenario::units::{Rate, Volume};
use tidewater::{Fluid, FluidLibrary, Route};

/// Something a plan or a rule does: start a fluid, a drug or a loss,
/// stop a stream, change a parameter.
#[pyclass(module = "tidewater", name = "Action", frozen)]
#[derive(Debug, Clone)]
pub struct Action {
    /// What it does.
    pub spec: ActionSpec,
    /// The label of what it starts (None: the default label).
    pub label: Option<String>,
}

#[pymethods]
impl Action {
    /// The same action with its stream labelled (for `stop(label)` and the
    /// summary's `given` table).
    fn labelled(&self, py: Python<'_>, label: String) -> PyResult<Action> {
        if !self.spec.starts_something() {
            return Err(bad_argument(
                "label",
                format!("{} starts nothing, so it takes no label", self.spec),
            )
            .into_pyerr(py));
        }
        Ok(Action {
            spec: self.spec.clone(),
            label: Some(label),
        })
    }

    /// The label of the stream(s) it starts (for a stop: the label stopped).
    #[getter]
    fn label(&self) -> String {
        self.label
            .clone()
            .unwrap_or_else(|| self.spec.default_label())
    }

    fn __repr__(&self) -> String {
        if self.spec.starts_something() {
            format!("<Action {} [{}]>", self.spec, self.label())
        } else {
            format!("<Action {}>", self.spec)
        }
    }
}

impl Action {
    fn new(spec: ActionSpec, label: Option<String>) -> Action {
        Action { spec, label }
    }

    /// The engine actions for this action (needs the final parameters and
    /// the patient's weight, as a script's actions do).
    pub fn build(&self, ctx: &BuildContext) -> Result<Vec<tidewater::Action>, Failure> {
        self.spec
            .build(self.label.as_deref(), ctx)
            .map_err(|e| Failure::input(&e, None))
    }
}

fn fluid(id: &str) -> Result<Fluid, Failure> {
    FluidLibrary::bundled()
        .get(id)
        .cloned()
        .map_err(|e| Failure::input(&e, None))
}

fn route(text: &str) -> Result<Route, Failure> {
    Route::parse(text).map_err(|e| Failure::input(&e, None))
}

fn ml(volume_ml: f64) -> Volume {
    Volume {
        litres: volume_ml / 1000.0,
        per_kg: false,
    }
}

fn done(py: Python<'_>, r: Result<Action, Failure>) -> PyResult<Action> {
    r.map_err(|f| f.into_pyerr(py))
}

/// An infusion of a bundled fluid: `volume_ml` over `duration_h`, or at
/// `rate_ml_h` until stopped.
#[pyfunction]
#[pyo3(signature = (fluid_id, volume_ml=None, duration_h=None, *, rate_ml_h=None, label=None))]
pub fn infuse(
    py: Python<'_>,
    fluid_id: &str,
    volume_ml: Option<f64>,
    duration_h: Option<f64>,
    rate_ml_h: Option<f64>,
    label: Option<String>,
) -> PyResult<Action> {
    let made = fluid(fluid_id).and_then(|fluid| match (volume_ml, duration_h, rate_ml_h) {
        (Some(v), Some(d), None) => Ok(ActionSpec::Give {
            fluid,
            volume: ml(v),
            duration_h: d,
        }),
        (None, None, Some(r)) => Ok(ActionSpec::GiveAtRate {
            fluid,
            rate: Rate {
                l_per_h: r / 1000.0,
                per_kg: false,
            },
        }),
        _ => Err(bad_argument(
            "rate_ml_h",
            "infuse: give volume_ml and duration_h, or rate_ml_h alone".into(),
        )),
    });
    done(py, made.map(|spec| Action::new(spec, label)))
}

/// A bundled fluid drunk (or given by tube into the gut): `volume_ml` over
/// `duration_h`.
#[pyfunction]
#[pyo3(signature = (fluid_id, volume_ml, duration_h, *, label=None))]
pub fn drink(
    py: Python<'_>,
    fluid_id: &str,
    volume_ml: f64,
    duration_h: f64,
    label: Option<String>,
) -> PyResult<Action> {
    let made = fluid(fluid_id).map(|fluid| ActionSpec::Drink {
        fluid,
        volume: ml(volume_ml),
        duration_h,
    });
    done(py, made.map(|spec| Action::new(spec, label)))
}

/// A loss of `volume_ml` over `duration_h` of a loss fluid's composition
/// (`"blood"`: whole blood).
#[pyfunction]
#[pyo3(signature = (fluid_id, volume_ml, duration_h, *, label=None))]
pub fn lose(
    py: Python<'_>,
    fluid_id: &str,
    volume_ml: f64,
    duration_h: f64,
    label: Option<String>,
) -> PyResult<Action> {
    let composition = if fluid_id == "blood" {
        Ok(None)
    } else {
        fluid(fluid_id).map(Some)
    };
    let made = composition.map(|fluid| ActionSpec::Lose {
        fluid,
        volume: ml(volume_ml),
        duration_h,
    });
    done(py, made.map(|spec| Action::new(spec, label)))
}

/// A dose of desmopressin, micrograms, by `route` (`"iv"`, `"sc"`, `"oral"`, ...).
#[pyfunction]
#[pyo3(signature = (dose_ug, route="iv", *, label=None))]
pub fn desmopressin(
    py: Python<'_>,
    dose_ug: f64,
    route: &str,
    label: Option<String>,
) -> PyResult<Action> {
    let made = self::route(route).map(|route| ActionSpec::Desmopressin { dose_ug, route });
    done(py, made.map(|spec| Action::new(spec, label)))
}

/// A loop diuretic, furosemide-equivalent mg, by `route` (`"iv"` or `"oral"`).
#[pyfunction]
#[pyo3(signature = (dose_mg, route="iv", *, label=None))]
pub fn loop_diuretic(
    py: Python<'_>,
    dose_mg: f64,
    route: &str,
    label: Option<String>,
) -> PyResult<Action> {
    let made = self::route(route).map(|route| ActionSpec::LoopDiuretic { dose_mg, route });
    done(py, made.map(|spec| Action::new(spec, label)))
}

/// An oral V2 antagonist, mg.
#[pyfunction]
#[pyo3(signature = (dose_mg, *, label=None))]
pub fn v2_antagonist(dose_mg: f64, label: Option<String>) -> Action {
    Action::new(ActionSpec::V2Antagonist { dose_mg }, label)
}

/// A daily thiazide, until stopped.
#[pyfunction]
#[pyo3(signature = (*, label=None))]
pub fn thiazide(label: Option<String>) -> Action {
    Action::new(ActionSpec::Thiazide, label)
}

/// Tablets by mouth: sodium and potassium, mmol; urea, g.
#[pyfunction]
#[pyo3(signature = (*, na_mmol=0.0, k_mmol=0.0, urea_g=0.0, label=None))]
pub fn tablets(na_mmol: f64, k_mmol: f64, urea_g: f64, label: Option<String>) -> Action {
    Action::new(
        ActionSpec::Tablets {
            na_mmol,
            k_mmol,
            urea_g,
        },
        label,
    )
}

/// Fluid restriction to `litres_per_day` of water drunk evenly (the
/// habitual drinking stops; food goes on).
#[pyfunction]
#[pyo3(signature = (litres_per_day, *, label=None))]
pub fn restrict(litres_per_day: f64, label: Option<String>) -> Action {
    Action::new(ActionSpec::Restrict { litres_per_day }, label)
}

/// Nothing by mouth: the habitual intake stops.
#[pyfunction]
pub fn nil_by_mouth() -> Action {
    Action::new(ActionSpec::NilByMouth, None)
}

/// Stop every running stream labelled `label`.
#[pyfunction]
pub fn stop(label: String) -> Action {
    Action::new(ActionSpec::Stop(label), None)
}

/// Stop every running stream.
#[pyfunction]
pub fn stop_all() -> Action {
    Action::new(ActionSpec::StopAll, None)
}

/// Change a model parameter from now on (name as in `tidewater.params()`,
/// value in its unit).
#[pyfunction]
pub fn change_param(py: Python<'_>, name: String, value: f64) -> PyResult<Action> {
    tidewater::check_change(&name, value).map_err(|e| Failure::input(&e, None).into_pyerr(py))?;
    Ok(Action::new(ActionSpec::ChangeParam { name, value }, None))
}

/// The patient's cause goes away from now on.
#[pyfunction]
pub fn resolve_cause() -> Action {
    Action::new(ActionSpec::ResolveCause, None)
}

/// Add the action type and its constructors to the module.
pub fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<Action>()?;
    m.add_function(wrap_pyfunction!(infuse, m)?)?;
    m.add_function(wrap_pyfunction!(drink, m)?)?;
    m.add_function(wrap_pyfunction!(lose, m)?)?;
    m.add_function(wrap_pyfunction!(desmopressin, m)?)?;
    m.add_function(wrap_pyfunction!(loop_diuretic, m)?)?;
    m.add_function(wrap_pyfunction!(v2_antagonist, m)?)?;
    m.add_function(wrap_pyfunction!(thiazide, m)?)?;
    m.add_function(wrap_pyfunction!(tablets, m)?)?;
    m.add_function(wrap_pyfunction!(restrict, m)?)?;
    m.add_function(wrap_pyfunction!(nil_by_mouth, m)?)?;
    m.add_function(wrap_pyfunction!(stop, m)?)?;
    m.add_function(wrap_pyfunction!(stop_all, m)?)?;
    m.add_function(wrap_pyfunction!(change_param, m)?)?;
    m.add_function(wrap_pyfunction!(resolve_cause, m)?)?;
    Ok(())
}
