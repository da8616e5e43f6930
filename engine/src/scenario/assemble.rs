//! What the top level of a script said, assembled into a checked plan: the
//! patient, the run, its sampling and check interval, parameter overrides,
//! and the planned actions built for this patient. Every error names the
//! line that caused it.

use super::actions::BuildContext;
use super::diagnose::script_error;
use super::error::ScenarioError;
use super::expect::Expectation;
use super::units;
use super::words::{RuleDef, Shared};
use crate::error::{InputError, SimulationError};
use crate::numeric::gcd;
use crate::plan::Plan;
use crate::simulate::Simulation;
use std::path::Path;

/// A script's top level, assembled.
#[derive(Debug)]
pub(super) struct Assembled {
    /// The checked plan.
    pub plan: Plan,
    /// What actions are built with (parameters, weight, habitual intake).
    pub build: BuildContext,
    /// The rules, in the order of the script.
    pub rules: Vec<RuleDef>,
    /// The expectations, in the order of the script.
    pub expectations: Vec<Expectation>,
    /// `title(...)`, or the file name without its extension.
    pub title: String,
    /// `description(...)`, or empty.
    pub description: String,
    /// Planned starts: (time, h; script line).
    pub started: Vec<(f64, usize)>,
}

/// Turn what the script said into a checked plan.
pub(super) fn assemble(
    state: &Shared,
    file: &str,
    source: &str,
) -> Result<Assembled, ScenarioError> {
    let s = state.borrow();
    let err = |line: usize, message: String| script_error(file, source, line, 0, message);
    let Some((patient, patient_line)) = s.patient.clone() else {
        return Err(err(
            0,
            "the script describes no patient: add patient(#{ sex: \"female\", age_years: 60, weight_kg: 65, na: 120 })".into(),
        ));
    };
    let mut plan = Plan::new(patient);
    if s.closed.is_some() {
        plan = plan.closed_system();
    }
    if let Some((h, _)) = s.run_for {
        plan = plan.run_for(h);
    }
    if let Some((h, line)) = s.sample_every {
        if h > plan.duration_h {
            return Err(err(
                line,
                format!(
                    "sample_every: the interval is longer than the run ({} h)",
                    plan.duration_h
                ),
            ));
        }
        plan = plan.sample_every(h);
    }
    if let Some((choice, _)) = &s.limits {
        plan.limits = choice.clone();
    }
    for (name, value, line) in &s.overrides {
        plan = plan
            .set_param(name, *value)
            .map_err(|e| err(*line, format!("set_param: {e}")))?;
    }
    if !s.rules.is_empty() {
        let mut g = 0u64;
        for r in &s.rules {
            if r.interval_h > plan.duration_h + 1e-9 {
                return Err(err(
                    r.line,
                    format!(
                        "every: the interval ({} h) is longer than the run ({} h)",
                        r.interval_h, plan.duration_h
                    ),
                ));
            }
            g = gcd(g, (r.interval_h * 60.0).round() as u64);
        }
        plan = plan.check_every(g as f64 / 60.0);
    }
    let line_of_field = |field: &str| -> usize {
        match field {
            "run_for" => s.run_for.map_or(0, |r| r.1),
            "sample_every" => s.sample_every.map_or(0, |r| r.1),
            "check_every" => s.rules.first().map_or(0, |r| r.line),
            "limits" => s.limits.as_ref().map_or(0, |r| r.1),
            f => s
                .overrides
                .iter()
                .find(|o| o.0 == f)
                .map_or(patient_line, |o| o.2),
        }
    };
    let input_err = |e: SimulationError| match e {
        SimulationError::Input(ie) => {
            let line = line_of_field(ie.field());
            err(line, ie.to_string())
        }
        other => ScenarioError::Simulation {
            file: file.to_string(),
            line: 0,
            source: other,
        },
    };
    let sim = Simulation::new(plan.clone()).map_err(input_err)?;
    let build = BuildContext {
        params: sim.model().params.clone(),
        weight_kg: sim.patient().weight_kg,
        habitual: sim.model().habitual_inputs(),
    };
    for p in &s.events {
        if p.time_h > plan.duration_h + 1e-9 {
            return Err(err(
                p.line,
                format!(
                    "at({}): this is after the end of the run ({}); lengthen it with run_for(...)",
                    units::Duration { hours: p.time_h },
                    units::Duration {
                        hours: plan.duration_h
                    }
                ),
            ));
        }
        let actions = p
            .action
            .spec
            .build(p.action.label.as_deref(), &build)
            .map_err(|e: InputError| err(p.blamed_line(), format!("{}: {e}", p.action.spec)))?;
        for a in actions {
            plan = plan.at(p.time_h, a);
        }
    }
    Simulation::new(plan.clone()).map_err(input_err)?;
    let title = s.title.clone().unwrap_or_else(|| {
        Path::new(file)
            .file_stem()
            .map_or(file.to_string(), |x| x.to_string_lossy().into_owned())
    });
    let started = s
        .events
        .iter()
        .filter(|p| p.action.spec.starts_something())
        .map(|p| (p.time_h, p.blamed_line()))
        .collect();
    Ok(Assembled {
        plan,
        build,
        rules: s.rules.clone(),
        expectations: s.expectations.clone(),
        title,
        description: s.description.clone().unwrap_or_default(),
        started,
    })
}
