//! Re-lowering after an overshoot: the rate of a hypotonic fluid (5 %
//! dextrose by default), given from a time `from_h`, with or without a
//! desmopressin clamp, that brings sodium at `by_h` back under the rise
//! limits of the guideline set without falling below a floor.
//!
//! Re-lowering after an overcorrection, with 5 % dextrose and desmopressin
//! to stop the water diuresis, is advised by both guideline sets in
//! `scenarios/limits.yaml` (Spasovski et al. 2014; Verbalis et al. 2013,
//! from memory); the aim of this module is a sodium at `by_h` between 1
//! and 3 mmol/L under the highest value the limits allow there, which is
//! Tidewater's choice (a margin a laboratory's 1 mmol/L resolution can
//! see; common practice aims "below the limit", without a number).

use super::dose::{solve, Constraint, Search};
use super::{Answer, Evaluator, Form, Goal, PlanError, Request};
use crate::error::InputError;
use crate::fluids::Fluid;
use crate::limits::{self, Direction, Rule, Severity};
use crate::plan::{Route, Stream};
use crate::trajectory::{interpolate, Trajectory};
use serde::Serialize;

/// Aim this far under the ceiling at `by_h` at least, mmol/L.
pub const AIM_BELOW_CEILING_MIN: f64 = 1.0;
/// And at most this far under it, mmol/L.
pub const AIM_BELOW_CEILING_MAX: f64 = 3.0;

/// A desmopressin clamp: a dose IV at the start of the re-lowering and
/// every `every_h` until its end.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Clamp {
    /// Dose, micrograms.
    pub dose_ug: f64,
    /// Interval, h.
    pub every_h: f64,
}

/// What is asked of a re-lowering.
#[derive(Debug, Clone, PartialEq)]
pub struct RelowerRequest {
    /// The hypotonic fluid.
    pub fluid: Fluid,
    /// Start of the re-lowering, h.
    pub from_h: f64,
    /// Time by which the rise must be back under the limits, h.
    pub by_h: f64,
    /// Desmopressin clamp, if any.
    pub clamp: Option<Clamp>,
    /// Lowest sodium allowed from `from_h`, mmol/L (none: the start's).
    pub floor_mmol_l: Option<f64>,
    /// Highest rate proposed, mL/h.
    pub max_rate_ml_h: f64,
}

/// The re-lowering planned.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Relowering {
    /// The dose search's answer (goal as the change since the start).
    #[serde(flatten)]
    pub answer: Answer,
    /// The clamp given with the fluid.
    pub clamp: Option<Clamp>,
    /// Start of the re-lowering, h.
    pub from_h: f64,
    /// Highest sodium the rise limits allow at `by_h`, mmol/L.
    pub ceiling_mmol_l: f64,
    /// The rule that sets the ceiling.
    pub ceiling_rule: String,
    /// The floor, mmol/L.
    pub floor_mmol_l: f64,
    /// Sodium at `from_h` without re-lowering, mmol/L.
    pub na_at_from_mmol_l: f64,
    /// Limits the course had crossed by `from_h` without re-lowering.
    pub crossed_by_from: Vec<String>,
    /// Rise within the ceiling rule's window at `by_h` with the dose
    /// proposed, mmol/L (must be at most the rule's largest).
    pub window_rise_at_by_mmol_l: f64,
}

/// Plan a re-lowering (see the [module](self) docs).
pub fn relower<E: Evaluator>(eval: &mut E, req: &RelowerRequest) -> Result<Relowering, PlanError> {
    let plan = eval.plan().clone();
    check(req, plan.duration_h)?;
    let background = eval.run(&[], &[]).map_err(|message| PlanError::Run {
        dose: "the scenario alone".into(),
        message,
    })?;
    let rules: Vec<Rule> = background
        .limits
        .applicable_rules(&background.situation)
        .into_iter()
        .cloned()
        .collect();
    let times = background.times();
    let na = background.sodium();
    let na0 = na[0];
    let floor = req.floor_mmol_l.unwrap_or(na0);
    let (ceiling, rule) = ceiling(&times, &na, &rules, req.from_h, req.by_h)?;
    let crossed_by_from = background
        .flags
        .iter()
        .filter(|f| f.rule.severity == Severity::Limit && f.time_h <= req.from_h + 1e-9)
        .map(|f| f.rule.label.clone())
        .collect();
    let high = ceiling - AIM_BELOW_CEILING_MIN;
    let low = floor.max(ceiling - AIM_BELOW_CEILING_MAX);
    if low > high {
        return Err(PlanError::Input(InputError::BadChoice {
            field: "floor".into(),
            value: floor.to_string(),
            expected: format!(
                "a floor at most {high:.1} mmol/L: the limits allow at most {ceiling:.1} mmol/L at {} h",
                req.by_h
            ),
        }));
    }
    let request = Request {
        fluid: req.fluid.clone(),
        goal: Goal {
            low_mmol_l: low - na0,
            high_mmol_l: high - na0,
            by_h: req.by_h,
        },
        form: Form::Rate {
            from_h: req.from_h,
            for_h: req.by_h - req.from_h,
            max_rate_ml_h: req.max_rate_ml_h,
        },
    };
    let fixed = match req.clamp {
        Some(c) => clamp_streams(c, req.from_h, req.by_h, &plan.params)?,
        None => Vec::new(),
    };
    let search = Search {
        eval,
        request: &request,
        fixed: fixed.clone(),
        constraint: Constraint::Floor {
            from_h: req.from_h,
            floor_mmol_l: floor,
        },
        runs: 1,
    };
    let answer = solve(search)?;
    // The rise in the ceiling rule's window at `by_h`, read off the run of
    // the dose proposed.
    let mut streams = fixed;
    streams.extend(answer.outcome.dose.streams(&req.fluid)?);
    let run = eval.run(&streams, &[]).map_err(|message| PlanError::Run {
        dose: super::dose::describe(&answer.outcome.dose, &req.fluid.id),
        message,
    })?;
    let window_rise = window_rise_at(&run, &rule, req.by_h);
    Ok(Relowering {
        answer,
        clamp: req.clamp,
        from_h: req.from_h,
        ceiling_mmol_l: ceiling,
        ceiling_rule: rule.label.clone(),
        floor_mmol_l: floor,
        na_at_from_mmol_l: interpolate(&times, &na, req.from_h),
        crossed_by_from,
        window_rise_at_by_mmol_l: window_rise,
    })
}

/// The desmopressin doses of a clamp, at `from_h` and every `every_h`
/// before `by_h`.
fn clamp_streams(
    c: Clamp,
    from_h: f64,
    by_h: f64,
    params: &crate::params::Params,
) -> Result<Vec<(f64, Stream)>, InputError> {
    let mut out = Vec::new();
    let mut t = from_h;
    while t < by_h - 1e-9 {
        out.push((
            t,
            Stream::desmopressin(c.dose_ug, Route::Intravenous, params)?,
        ));
        t += c.every_h;
    }
    Ok(out)
}

/// The highest sodium at `by_h` the rise limits allow, given the course
/// before `from_h` (which the re-lowering cannot change): for each rise
/// limit checked at `by_h`, the lowest sodium of its window before
/// `from_h` plus its largest rise. Returns the lowest, with its rule.
fn ceiling(
    times: &[f64],
    na: &[f64],
    rules: &[Rule],
    from_h: f64,
    by_h: f64,
) -> Result<(f64, Rule), PlanError> {
    let mut best: Option<(f64, Rule)> = None;
    for rule in rules {
        let checked = by_h > rule.from_h + 1e-9 && rule.to_h.is_none_or(|end| by_h <= end + 1e-9);
        if rule.direction != Direction::Rise || rule.severity != Severity::Limit || !checked {
            continue;
        }
        let start = rule.from_h.max(by_h - rule.window_h);
        let lowest = times
            .iter()
            .zip(na)
            .filter(|(t, _)| **t >= start - 1e-9 && **t <= from_h + 1e-9)
            .map(|(_, v)| *v)
            .fold(f64::INFINITY, f64::min);
        // A window that opens after the re-lowering starts holds only the
        // re-lowered course: the rule then bounds the change within it,
        // which a falling course keeps; the other rules decide.
        if !lowest.is_finite() {
            continue;
        }
        let c = lowest + rule.max_mmol_l;
        if best.as_ref().is_none_or(|b| c < b.0) {
            best = Some((c, rule.clone()));
        }
    }
    best.ok_or_else(|| {
        PlanError::Input(InputError::BadChoice {
            field: "by".into(),
            value: by_h.to_string(),
            expected: "a time at which a rise limit of the guideline set is checked".into(),
        })
    })
}

/// The rise within `rule`'s window ending at `t`, mmol/L.
fn window_rise_at(traj: &Trajectory, rule: &Rule, t: f64) -> f64 {
    let times = traj.times();
    let na = traj.sodium();
    let changes = limits::window_changes(&times, &na, rule);
    interpolate(&times, &changes, t)
}

fn check(req: &RelowerRequest, duration_h: f64) -> Result<(), PlanError> {
    let bad = |field: &str, value: f64, expected: String| {
        Err(PlanError::Input(InputError::BadChoice {
            field: field.into(),
            value: value.to_string(),
            expected,
        }))
    };
    if !(req.from_h >= 0.0 && req.from_h < duration_h) {
        return bad(
            "from",
            req.from_h,
            format!("a time inside the run (0 to {duration_h} h)"),
        );
    }
    if !(req.by_h > req.from_h && req.by_h <= duration_h) {
        return bad(
            "by",
            req.by_h,
            format!(
                "a time after --from ({} h), at most {duration_h} h",
                req.from_h
            ),
        );
    }
    if req.fluid.na + req.fluid.k >= 130.0 {
        return bad(
            "fluid",
            req.fluid.na + req.fluid.k,
            format!(
                "a hypotonic fluid to re-lower with ({} has {:.0} mmol/L of sodium and potassium)",
                req.fluid.id,
                req.fluid.na + req.fluid.k
            ),
        );
    }
    if let Some(c) = req.clamp {
        if !(c.every_h > 0.0 && c.every_h.is_finite()) {
            return bad(
                "clamp-every",
                c.every_h,
                "a positive interval in hours".into(),
            );
        }
    }
    if let Some(f) = req.floor_mmol_l {
        if !(f.is_finite() && f > 90.0 && f < 180.0) {
            return bad("floor", f, "a sodium between 90 and 180 mmol/L".into());
        }
    }
    Ok(())
}

/// The dose of a re-lowering in words.
pub fn describe(r: &Relowering) -> String {
    let dose = super::dose::describe(&r.answer.outcome.dose, &r.answer.fluid);
    match r.clamp {
        Some(c) => format!(
            "{dose}, with desmopressin {} micrograms IV every {} h",
            c.dose_ug, c.every_h
        ),
        None => dose,
    }
}
