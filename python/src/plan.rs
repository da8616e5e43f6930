//! `tidewater.Patient` and `tidewater.Plan`: the engine's plan builder
//! (`Plan::new(patient).run_for(..).at(..)`) for Python, with units in the
//! keyword names, and rules as Python callables.

use crate::actions::Action;
use crate::errors::{bad_argument, Failure};
use crate::results::Outcome;
use crate::rules::{PythonRules, Rule};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use tidewater::scenario::actions::BuildContext;
use tidewater::Simulation;

/// A patient: sex, age (years) and weight (kg), and optionally the labs
/// and the situation (serum sodium `na`, mmol/L; `onset`, `symptoms`,
/// `cause`; ...). Values not given take the engine's defaults for a
/// healthy adult. Checked when made.
#[pyclass(module = "tidewater", name = "Patient", frozen)]
#[derive(Debug, Clone)]
pub struct Patient {
    /// The engine's description.
    pub inner: tidewater::Patient,
}

#[pymethods]
impl Patient {
    #[new]
    #[pyo3(signature = (sex, age_years, weight_kg, *, na=None, k=None, height_cm=None,
        water_fraction=None, water_method=None, glucose_mmol_l=None, glucose_mg_dl=None,
        urea_mmol_l=None, bun_mg_dl=None, albumin_g_l=None, hematocrit=None, onset=None,
        symptoms=None, cause=None))]
    #[allow(clippy::too_many_arguments)]
    fn new(
        py: Python<'_>,
        sex: &str,
        age_years: f64,
        weight_kg: f64,
        na: Option<f64>,
        k: Option<f64>,
        height_cm: Option<f64>,
        water_fraction: Option<f64>,
        water_method: Option<String>,
        glucose_mmol_l: Option<f64>,
        glucose_mg_dl: Option<f64>,
        urea_mmol_l: Option<f64>,
        bun_mg_dl: Option<f64>,
        albumin_g_l: Option<f64>,
        hematocrit: Option<f64>,
        onset: Option<String>,
        symptoms: Option<String>,
        cause: Option<String>,
    ) -> PyResult<Patient> {
        // A word is checked where it is given, naming its field.
        fn word<W: tidewater::Word>(py: Python<'_>, text: Option<String>) -> PyResult<Option<W>> {
            text.map(|t| W::parse(&t).map_err(|e| Failure::input(&e, None).into_pyerr(py)))
                .transpose()
        }
        let sex = <tidewater::Sex as tidewater::Word>::parse(sex)
            .map_err(|e| Failure::input(&e, None).into_pyerr(py))?;
        let (water_method, onset) = (word(py, water_method)?, word(py, onset)?);
        let (symptoms, cause) = (word(py, symptoms)?, word(py, cause)?);
        let inner = tidewater::Patient {
            na,
            k,
            height_cm,
            water_fraction,
            water_method,
            glucose_mmol_l,
            glucose_mg_dl,
            urea_mmol_l,
            bun_mg_dl,
            albumin_g_l,
            hematocrit,
            onset,
            symptoms,
            cause,
            ..tidewater::Patient::healthy(sex, age_years, weight_kg)
        };
        // The whole start is checked now (a bad value fails here, naming
        // its field), not at the first run.
        Simulation::new(tidewater::Plan::new(inner.clone()))
            .map_err(|e| Failure::simulation(&e, None, 0).into_pyerr(py))?;
        Ok(Patient { inner })
    }

    /// The patient as resolved, with the start's volumes, contents and
    /// balance: a list of (label, value with unit), as the report's table.
    fn describe(&self, py: Python<'_>) -> PyResult<Vec<(String, String)>> {
        let sim = Simulation::new(tidewater::Plan::new(self.inner.clone()))
            .map_err(|e| Failure::simulation(&e, None, 0).into_pyerr(py))?;
        Ok(tidewater_cli::input::patient_rows(&sim)
            .into_iter()
            .map(|r| (r.label, r.value))
            .collect())
    }

    fn __repr__(&self) -> String {
        let p = &self.inner;
        format!(
            "<Patient {} {} years {} kg{}>",
            p.sex,
            p.age_years,
            p.weight_kg,
            p.na.map(|n| format!(", Na {n} mmol/L")).unwrap_or_default()
        )
    }
}

/// A plan for a patient: actions at times, rules at check intervals, the
/// run length, sampling, guideline set and parameter overrides. Every
/// method that adds to the plan returns the plan, so calls chain.
#[pyclass(module = "tidewater", name = "Plan", subclass)]
pub struct Plan {
    patient: tidewater::Patient,
    duration_h: f64,
    sample_every_h: Option<f64>,
    limits: (String, bool),
    title: String,
    overrides: Vec<(String, f64)>,
    events: Vec<(f64, Action)>,
    rules: Vec<Rule>,
}

#[pymethods]
impl Plan {
    #[new]
    #[pyo3(signature = (patient, *, hours=48.0, sample_every_h=None, limits="europe-2014", high_risk=false, title=None))]
    fn new(
        patient: Patient,
        hours: f64,
        sample_every_h: Option<f64>,
        limits: &str,
        high_risk: bool,
        title: Option<String>,
    ) -> Plan {
        Plan {
            patient: patient.inner,
            duration_h: hours,
            sample_every_h,
            limits: (limits.to_string(), high_risk),
            title: title.unwrap_or_else(|| "Plan from Python".into()),
            overrides: Vec::new(),
            events: Vec::new(),
            rules: Vec::new(),
        }
    }

    /// Set the run length, h.
    fn run_for(mut slf: PyRefMut<'_, Self>, hours: f64) -> PyRefMut<'_, Self> {
        slf.duration_h = hours;
        slf
    }

    /// Take `action` at `time_h` (h from the start).
    fn at(mut slf: PyRefMut<'_, Self>, time_h: f64, action: Action) -> PyRefMut<'_, Self> {
        slf.events.push((time_h, action));
        slf
    }

    /// Infuse a bundled fluid from `at_h`: `volume_ml` over `duration_h`,
    /// or at `rate_ml_h` until stopped.
    #[pyo3(signature = (fluid_id, volume_ml=None, duration_h=None, *, rate_ml_h=None, at_h=0.0, label=None))]
    #[allow(clippy::too_many_arguments)]
    fn infuse<'py>(
        mut slf: PyRefMut<'py, Self>,
        py: Python<'py>,
        fluid_id: &str,
        volume_ml: Option<f64>,
        duration_h: Option<f64>,
        rate_ml_h: Option<f64>,
        at_h: f64,
        label: Option<String>,
    ) -> PyResult<PyRefMut<'py, Self>> {
        let a = crate::actions::infuse(py, fluid_id, volume_ml, duration_h, rate_ml_h, label)?;
        slf.events.push((at_h, a));
        Ok(slf)
    }

    /// Drink a bundled fluid from `at_h`: `volume_ml` over `duration_h`.
    #[pyo3(signature = (fluid_id, volume_ml, duration_h, *, at_h=0.0, label=None))]
    fn drink<'py>(
        mut slf: PyRefMut<'py, Self>,
        py: Python<'py>,
        fluid_id: &str,
        volume_ml: f64,
        duration_h: f64,
        at_h: f64,
        label: Option<String>,
    ) -> PyResult<PyRefMut<'py, Self>> {
        let a = crate::actions::drink(py, fluid_id, volume_ml, duration_h, label)?;
        slf.events.push((at_h, a));
        Ok(slf)
    }

    /// Override a model parameter (name as in `tidewater.params()`, value
    /// in its unit); checked now.
    fn set_param<'py>(
        mut slf: PyRefMut<'py, Self>,
        py: Python<'py>,
        name: String,
        value: f64,
    ) -> PyResult<PyRefMut<'py, Self>> {
        tidewater::Params::default()
            .set(&name, value)
            .map_err(|e| Failure::input(&e, None).into_pyerr(py))?;
        slf.overrides.push((name, value));
        Ok(slf)
    }

    /// Call `rule(labs)` every `hours` (or `minutes`) from the start; it
    /// returns a list of actions to take now (or None). `name` names it in
    /// the log and in errors (default: the function's name).
    #[pyo3(signature = (*, rule, hours=None, minutes=None, name=None))]
    fn every<'py>(
        mut slf: PyRefMut<'py, Self>,
        py: Python<'py>,
        rule: Bound<'py, PyAny>,
        hours: Option<f64>,
        minutes: Option<f64>,
        name: Option<String>,
    ) -> PyResult<PyRefMut<'py, Self>> {
        let every_h = match (hours, minutes) {
            (Some(h), None) => h,
            (None, Some(m)) => m / 60.0,
            _ => {
                return Err(
                    bad_argument("hours", "every: give hours or minutes, not both".into())
                        .into_pyerr(py),
                )
            }
        };
        // Check times fall on whole minutes, as a script's do.
        let whole_minutes = (every_h * 60.0).round();
        if !every_h.is_finite()
            || whole_minutes < 1.0
            || (whole_minutes - every_h * 60.0).abs() > 1e-9
        {
            return Err(bad_argument(
                "hours",
                format!("every: the interval must be a whole number of minutes, at least 1 (got {every_h} h)"),
            )
            .into_pyerr(py));
        }
        if !rule.is_callable() {
            return Err(
                bad_argument("rule", "every: rule must be a callable rule(labs)".into())
                    .into_pyerr(py),
            );
        }
        let name = match name {
            Some(n) => n,
            None => rule
                .getattr("__name__")
                .and_then(|n| n.extract::<String>())
                .unwrap_or_else(|_| format!("{}", slf.rules.len() + 1)),
        };
        slf.rules.push(Rule {
            name,
            every_h,
            func: rule.unbind(),
        });
        Ok(slf)
    }

    /// Simulate the plan (the interpreter is released while the engine
    /// integrates; rules attach to it for their calls). Returns the raw
    /// result the package wraps in `tidewater.Result`.
    fn _run<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let outcome = self.simulate(py).map_err(|f| f.into_pyerr(py))?;
        outcome.into_dict(py)
    }

    fn __repr__(&self) -> String {
        format!(
            "<Plan {} h, {} actions, {} rules>",
            self.duration_h,
            self.events.len(),
            self.rules.len()
        )
    }
}

fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

impl Plan {
    /// The engine plan without its actions, and what actions are built with.
    fn base(&self) -> Result<(tidewater::Plan, BuildContext), Failure> {
        let mut plan = tidewater::Plan::new(self.patient.clone()).run_for(self.duration_h);
        if let Some(h) = self.sample_every_h {
            plan = plan.sample_every(h);
        }
        plan.limits = tidewater::limits::choose(&self.limits.0, self.limits.1)
            .map_err(|e| Failure::input(&e, None))?;
        for (name, value) in &self.overrides {
            plan = plan
                .set_param(name, *value)
                .map_err(|e| Failure::input(&e, None))?;
        }
        if !self.rules.is_empty() {
            let g = self
                .rules
                .iter()
                .fold(0, |g, r| gcd(g, (r.every_h * 60.0).round() as u64));
            plan = plan.check_every(g as f64 / 60.0);
        }
        let sim = Simulation::new(plan.clone()).map_err(|e| Failure::simulation(&e, None, 0))?;
        let build = BuildContext {
            params: sim.model().params.clone(),
            weight_kg: sim.patient().weight_kg,
            habitual: sim.model().habitual_inputs(),
        };
        Ok((plan, build))
    }

    fn simulate(&self, py: Python<'_>) -> Result<Outcome, Failure> {
        let (mut plan, build) = self.base()?;
        for (t, a) in &self.events {
            for built in a.build(&build)? {
                plan = plan.at(*t, built);
            }
        }
        let mut rules = PythonRules {
            rules: &self.rules,
            build,
            log: Vec::new(),
            failure: None,
        };
        let title = self.title.clone();
        let ran = py.detach(|| {
            let sim =
                Simulation::new(plan.clone()).map_err(|e| Failure::simulation(&e, None, 0))?;
            let run = sim.run_with(&mut rules);
            match run {
                Ok(trajectory) => Ok((plan, trajectory)),
                Err(e) => Err(e),
            }
            .map_err(|e| Failure::simulation(&e, None, 0))
        });
        if let Some(e) = rules.failure.take() {
            return Err(Failure::Python(e));
        }
        let (plan, trajectory) = ran?;
        let heading = tidewater_cli::input::Heading {
            name: tidewater_cli::input::slug(&title),
            title,
            description: String::new(),
            source: "python".into(),
        };
        py.detach(|| {
            let input = tidewater_cli::input::RunInput::assemble(
                heading,
                &plan,
                trajectory,
                Vec::new(),
                rules.log,
            )
            .map_err(|e| Failure::Input(format!("{e:#}"), Default::default()))?;
            Ok(Outcome::of(&input))
        })
    }
}
