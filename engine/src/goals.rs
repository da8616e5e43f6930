//! Minimum-correction goals beside the guideline limits (as data in
//! `scenarios/limits.yaml`), their evaluation on a sodium series, and the
//! warning when sodium falls back below its start during a hyponatremia
//! correction. Pure functions of the series; the limits are in
//! [`crate::limits`].

use crate::limits::{Direction, LimitChoice, OnsetCondition, Situation, StartDisorder};
use crate::patient::Symptoms;
use crate::trajectory::interpolate;
use serde::{Deserialize, Serialize};

/// A minimum correction: at least `min_mmol_l` of change (in `direction`)
/// since the start, reached by `by_h` hours.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Goal {
    /// Rise or fall.
    pub direction: Direction,
    /// Smallest change since the start that meets the goal, mmol/L.
    pub min_mmol_l: f64,
    /// Time by which the change is due, h (from the start of the run).
    pub by_h: f64,
    /// Short description.
    pub label: String,
    /// Published source ("from memory" where recalled).
    pub source: String,
    /// The starting disorder the goal is meant for.
    #[serde(default)]
    pub start: StartDisorder,
    /// The onset the goal is meant for.
    #[serde(default)]
    pub onset: OnsetCondition,
    /// The symptoms the goal is meant for (none given: any).
    #[serde(default)]
    pub symptoms: Option<Symptoms>,
}

impl Goal {
    /// Whether the goal applies in `situation`.
    pub fn applies(&self, situation: &Situation) -> bool {
        self.start.holds(situation.start_na_mmol_l)
            && self.onset.holds(situation.onset)
            && self.symptoms.is_none_or(|s| s == situation.symptoms)
    }
}

/// How a goal fared.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GoalStatus {
    /// The change at the goal's time reached its minimum.
    Met,
    /// The change at the goal's time fell short.
    Missed,
    /// The run ended before the goal's time: not judged.
    RunTooShort,
}

/// A goal judged on a run. Not a limit crossing: it does not count as a
/// [`crate::limits::Flag`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GoalResult {
    /// The goal.
    pub goal: Goal,
    /// Met, missed or not judged.
    pub status: GoalStatus,
    /// Change since the start (in the goal's direction) at `time_h`, mmol/L.
    pub change_mmol_l: f64,
    /// When the change was read: the goal's time, or the end of a run
    /// that stopped before it, h.
    pub time_h: f64,
    /// First sample time at which the change reached the goal's minimum
    /// (at any time in the run), h.
    pub reached_h: Option<f64>,
}

/// Judge `goals` on a sodium series (times in h from the start of the run).
pub fn evaluate(times: &[f64], na: &[f64], goals: &[&Goal]) -> Vec<GoalResult> {
    let (Some(&t0), Some(&na0), Some(&t_end)) = (times.first(), na.first(), times.last()) else {
        return Vec::new();
    };
    goals
        .iter()
        .map(|goal| {
            let sign = match goal.direction {
                Direction::Rise => 1.0,
                Direction::Fall => -1.0,
            };
            let due = t0 + goal.by_h;
            let read_at = due.min(t_end);
            let change = sign * (interpolate(times, na, read_at) - na0);
            let status = if t_end < due - 1e-9 {
                GoalStatus::RunTooShort
            } else if change >= goal.min_mmol_l - 1e-9 {
                GoalStatus::Met
            } else {
                GoalStatus::Missed
            };
            let reached_h = times
                .iter()
                .zip(na)
                .find(|(_, &v)| sign * (v - na0) >= goal.min_mmol_l - 1e-9)
                .map(|(&t, _)| t);
            GoalResult {
                goal: (*goal).clone(),
                status,
                change_mmol_l: change,
                time_h: read_at,
                reached_h,
            }
        })
        .collect()
}

/// Judge the goals of `choice` that apply in `situation`.
pub fn check(
    times: &[f64],
    na: &[f64],
    choice: &LimitChoice,
    situation: &Situation,
) -> Vec<GoalResult> {
    evaluate(times, na, &choice.applicable_goals(situation))
}

/// How far below its start sodium must fall before the warning is given,
/// mmol/L: serum sodium is reported to whole mmol/L, so a dip of less than
/// half a unit would not show on a laboratory report (common practice).
pub const BELOW_START_TOLERANCE_MMOL_L: f64 = 0.5;

/// Sodium fell back below its start during a hyponatremia correction.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BelowStart {
    /// Serum sodium at the start, mmol/L.
    pub start_mmol_l: f64,
    /// First sample time more than [`BELOW_START_TOLERANCE_MMOL_L`] below
    /// the start, h.
    pub first_time_h: f64,
    /// Lowest serum sodium of the run, mmol/L.
    pub lowest_mmol_l: f64,
    /// When it was lowest, h.
    pub lowest_time_h: f64,
}

/// The warning when a hyponatremic start (see [`Situation::hyponatremic`])
/// is followed by sodium more than [`BELOW_START_TOLERANCE_MMOL_L`] below
/// its start value; none otherwise. Correction aims to raise sodium, and a
/// fall below the start worsens the disorder being treated (common
/// practice).
pub fn below_start(times: &[f64], na: &[f64], situation: &Situation) -> Option<BelowStart> {
    if !situation.hyponatremic() {
        return None;
    }
    let na0 = *na.first()?;
    let first = na
        .iter()
        .position(|&v| v < na0 - BELOW_START_TOLERANCE_MMOL_L)?;
    let (lowest_time_h, lowest_mmol_l) = times
        .iter()
        .copied()
        .zip(na.iter().copied())
        .fold((times[0], na0), |a, b| if b.1 < a.1 { b } else { a });
    Some(BelowStart {
        start_mmol_l: na0,
        first_time_h: times[first],
        lowest_mmol_l,
        lowest_time_h,
    })
}

#[cfg(test)]
#[path = "goals_tests.rs"]
mod tests;
