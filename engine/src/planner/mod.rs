//! # The correction planner
//!
//! Finds, with the full model, the dose of one fluid that brings the
//! change of serum sodium at a chosen time into a goal range while no
//! guideline limit of the scenario is crossed: an infusion rate
//! ([`Form::Rate`]) or a number and size of boluses ([`Form::Bolus`]).
//! The patient, the cause and everything else the scenario does (its
//! background: habitual intake, fasting, its own treatments and rules)
//! come from the scenario; the planner adds the candidate dose to its plan
//! and runs it.
//!
//! * [`Request`] says what is asked: the fluid, the [`Goal`] (a range of
//!   the sodium change at a time, signed: a rise is positive), the form.
//! * An [`Evaluator`] runs the scenario with extra streams and returns the
//!   [`Trajectory`]; [`ScenarioEvaluator`] is the one for a script.
//! * [`find_dose`] brackets the dose from zero and from the Adrogué–Madias
//!   estimate (a first guess only), then narrows it with Brent's method
//!   ([`root`]) aiming at the middle of the goal; if that dose crosses a
//!   limit it searches the largest dose that does not. It returns an
//!   [`Answer`]: the dose, its [`Outcome`] (course, largest rises, margin
//!   to every rule in force, volume given) and a [`Verdict`].
//! * [`relower`] plans a re-lowering after an overshoot (5 % dextrose with
//!   or without a desmopressin clamp); [`uncertainty`] reruns a dose over
//!   members drawn from the plausible unknowns.
//!
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.

mod check;
pub(crate) mod dose;
mod outcome;
pub mod relower;
pub mod root;
pub mod uncertainty;

pub use dose::{describe, find_dose, Answer, Constraint, Verdict};
pub use outcome::{CoursePoint, Margin, Outcome};

use crate::error::InputError;
use crate::fluids::Fluid;
use crate::plan::{Plan, Stream};
use crate::scenario::Scenario;
use crate::trajectory::Trajectory;
use serde::Serialize;

/// The sodium goal: the change `Na(by_h) − Na(0)` within `[low, high]`
/// mmol/L (negative for a fall).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Goal {
    /// Lowest change accepted, mmol/L.
    pub low_mmol_l: f64,
    /// Highest change accepted, mmol/L.
    pub high_mmol_l: f64,
    /// Time at which the change is measured, h from the start.
    pub by_h: f64,
}

impl Goal {
    /// The middle of the range, which the planner aims at.
    pub fn middle(&self) -> f64 {
        0.5 * (self.low_mmol_l + self.high_mmol_l)
    }

    /// Whether a change lies in the range (with a rounding allowance of
    /// 0.05 mmol/L, below what a laboratory reports).
    pub fn holds(&self, change: f64) -> bool {
        change >= self.low_mmol_l - GOAL_SLACK && change <= self.high_mmol_l + GOAL_SLACK
    }
}

/// Allowance on the goal's edges, mmol/L: laboratories report sodium to
/// 1 mmol/L, so 0.05 is far inside what can be measured (common practice).
pub const GOAL_SLACK: f64 = 0.05;

/// How the dose is given.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "form", rename_all = "snake_case")]
pub enum Form {
    /// A constant infusion from `from_h` for `for_h` hours; the planner
    /// finds the rate.
    Rate {
        /// Start, h.
        from_h: f64,
        /// Duration, h.
        for_h: f64,
        /// Highest rate the planner may propose, mL/h.
        max_rate_ml_h: f64,
    },
    /// Boluses of `bolus_h` each, one every `every_h` from `from_h`; the
    /// planner finds the smallest count (up to `max_count`) whose bolus
    /// volume, found for that count, is at most `max_bolus_ml`.
    Bolus {
        /// First bolus, h.
        from_h: f64,
        /// Duration of one bolus, h.
        bolus_h: f64,
        /// Start-to-start interval, h.
        every_h: f64,
        /// Most boluses.
        max_count: usize,
        /// Largest single bolus, mL.
        max_bolus_ml: f64,
    },
}

/// A dose of the fluid.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "form", rename_all = "snake_case")]
pub enum Dose {
    /// A constant infusion.
    Rate {
        /// Rate, mL/h.
        rate_ml_h: f64,
        /// Start, h.
        from_h: f64,
        /// Duration, h.
        for_h: f64,
    },
    /// Equal boluses.
    Bolus {
        /// Volume of each, mL.
        volume_ml: f64,
        /// How many.
        count: usize,
        /// First, h.
        from_h: f64,
        /// Duration of each, h.
        bolus_h: f64,
        /// Start-to-start interval, h.
        every_h: f64,
    },
}

impl Dose {
    /// Total volume given, mL.
    pub fn volume_ml(&self) -> f64 {
        match *self {
            Dose::Rate {
                rate_ml_h, for_h, ..
            } => rate_ml_h * for_h,
            Dose::Bolus {
                volume_ml, count, ..
            } => volume_ml * count as f64,
        }
    }

    /// The streams that give it (none for a zero dose).
    pub fn streams(&self, fluid: &Fluid) -> Result<Vec<(f64, Stream)>, InputError> {
        let label = format!("planned {}", fluid.id);
        Ok(match *self {
            Dose::Rate {
                rate_ml_h,
                from_h,
                for_h,
            } => {
                if rate_ml_h <= 0.0 {
                    Vec::new()
                } else {
                    vec![(
                        from_h,
                        Stream::give(fluid, rate_ml_h * for_h / 1000.0, for_h)?.labelled(&label),
                    )]
                }
            }
            Dose::Bolus {
                volume_ml,
                count,
                from_h,
                bolus_h,
                every_h,
            } => {
                if volume_ml <= 0.0 {
                    Vec::new()
                } else {
                    (0..count)
                        .map(|k| {
                            Ok((
                                from_h + every_h * k as f64,
                                Stream::give(fluid, volume_ml / 1000.0, bolus_h)?.labelled(&label),
                            ))
                        })
                        .collect::<Result<_, InputError>>()?
                }
            }
        })
    }

    /// The same dose with another amount (rate or bolus volume).
    pub(crate) fn with_amount(&self, amount: f64) -> Dose {
        let mut d = *self;
        match &mut d {
            Dose::Rate { rate_ml_h, .. } => *rate_ml_h = amount,
            Dose::Bolus { volume_ml, .. } => *volume_ml = amount,
        }
        d
    }

    /// The amount the planner searches (rate or bolus volume).
    pub fn amount(&self) -> f64 {
        match *self {
            Dose::Rate { rate_ml_h, .. } => rate_ml_h,
            Dose::Bolus { volume_ml, .. } => volume_ml,
        }
    }
}

/// What the planner is asked.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    /// The fluid to give.
    pub fluid: Fluid,
    /// The goal.
    pub goal: Goal,
    /// Rate or boluses.
    pub form: Form,
}

/// Why a plan could not be evaluated.
#[derive(Debug, thiserror::Error)]
pub enum PlanError {
    /// A request that cannot be planned (names the option).
    #[error("{0}")]
    Input(#[from] InputError),
    /// A run of the scenario failed.
    #[error("the run with {dose} failed: {message}")]
    Run {
        /// The dose tried.
        dose: String,
        /// What went wrong.
        message: String,
    },
}

/// Runs the scenario with extra streams.
pub trait Evaluator {
    /// The scenario's plan (the background).
    fn plan(&self) -> &Plan;
    /// Run the background plus `extra` (start time, stream), with parameter
    /// or patient overrides (sweep names: `patient.<field>` or a parameter).
    fn run(
        &mut self,
        extra: &[(f64, Stream)],
        overrides: &[(String, f64)],
    ) -> Result<Trajectory, String>;
}

/// An [`Evaluator`] for a scenario script: its rules and background run
/// with every candidate.
pub struct ScenarioEvaluator {
    /// The scenario.
    pub scenario: Scenario,
    /// Solver tolerance for every run (none: the plan's).
    pub rtol: Option<f64>,
    /// A plan in place of the script's (for example the fitted patient's,
    /// [`crate::fit::FitModel::plan`]); none: the script's.
    pub base: Option<Plan>,
}

impl ScenarioEvaluator {
    /// An evaluator of the script's own plan.
    pub fn new(scenario: Scenario) -> Self {
        ScenarioEvaluator {
            scenario,
            rtol: None,
            base: None,
        }
    }
}

impl Evaluator for ScenarioEvaluator {
    fn plan(&self) -> &Plan {
        self.base.as_ref().unwrap_or_else(|| self.scenario.plan())
    }

    fn run(
        &mut self,
        extra: &[(f64, Stream)],
        overrides: &[(String, f64)],
    ) -> Result<Trajectory, String> {
        let mut plan = self.plan().clone();
        crate::sweep::apply_overrides(&mut plan, overrides)?;
        for (t, s) in extra {
            plan = plan.start(*t, s.clone());
        }
        if let Some(rtol) = self.rtol {
            plan.tolerances.rtol = rtol;
        }
        self.scenario
            .run_with_plan(plan)
            .map(|r| r.trajectory)
            .map_err(|e| e.to_string())
    }
}

#[cfg(test)]
mod tests;
