//! What a dose does: the sodium course at the times a clinician reads, the
//! largest rises, and the margin to every rule of the guideline set in
//! force, read off one run.

use super::Dose;
use crate::limits::{self, Direction, Rule, Severity};
use crate::trajectory::{interpolate, Trajectory};
use serde::Serialize;

/// Sodium at one time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CoursePoint {
    /// Time, h.
    pub time_h: f64,
    /// Serum sodium, mmol/L.
    pub na_mmol_l: f64,
    /// Change since the start, mmol/L.
    pub na_change_mmol_l: f64,
}

/// How close a run came to one rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Margin {
    /// The rule's label.
    pub label: String,
    /// Rise or fall.
    pub direction: Direction,
    /// Caution or limit.
    pub severity: Severity,
    /// Window, h.
    pub window_h: f64,
    /// The rule's largest change, mmol/L.
    pub max_mmol_l: f64,
    /// Largest change within any window of the rule, mmol/L.
    pub worst_mmol_l: f64,
    /// When it was reached, h.
    pub worst_time_h: f64,
    /// `max − worst`, mmol/L (negative: crossed).
    pub margin_mmol_l: f64,
}

impl Margin {
    /// Whether the rule was crossed (as [`limits::check`] decides).
    pub fn crossed(&self) -> bool {
        self.margin_mmol_l < -1e-9
    }
}

/// The result of one dose.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// The dose.
    pub dose: Dose,
    /// Volume of the planned fluid given, mL.
    pub volume_ml: f64,
    /// Serum sodium at the start, mmol/L.
    pub na_start_mmol_l: f64,
    /// Total body water at the start, L.
    pub total_body_water_start_l: f64,
    /// Change at the goal's time, mmol/L.
    pub na_change_at_goal_mmol_l: f64,
    /// Sodium at 6, 12, 24 and 48 h (those inside the run) and at the
    /// goal's time.
    pub course: Vec<CoursePoint>,
    /// Largest rise in any 24 h, mmol/L, and its time, h.
    pub largest_rise_24h_mmol_l: f64,
    /// Time of the largest 24 h rise, h.
    pub largest_rise_24h_time_h: f64,
    /// Largest rise in any 48 h, mmol/L (the whole run when shorter).
    pub largest_rise_48h_mmol_l: f64,
    /// Lowest sodium of the run, mmol/L.
    pub lowest_na_mmol_l: f64,
    /// Highest sodium of the run, mmol/L.
    pub highest_na_mmol_l: f64,
    /// Lowest sodium from the time the run was asked about on (a
    /// re-lowering's start; the run's start otherwise), mmol/L.
    pub lowest_after_mmol_l: f64,
    /// Margin to every rule in force.
    pub margins: Vec<Margin>,
    /// The Adrogué–Madias prediction for everything given by vein by the
    /// goal's time (the background's infusions too) and the attribution
    /// of the body's difference from it ([`crate::bedside`]).
    pub bedside: Option<crate::bedside::GapAttribution>,
}

impl Outcome {
    /// Read the outcome of `dose` off its run (the rules are those of the
    /// run's guideline set that apply to its start); `by_h` is the goal's
    /// time.
    /// `after_h` starts the window of [`Outcome::lowest_after_mmol_l`].
    pub fn from_run(dose: Dose, traj: &Trajectory, by_h: f64, after_h: f64) -> Outcome {
        let times = traj.times();
        let na = traj.sodium();
        let na0 = na.first().copied().unwrap_or(f64::NAN);
        let end = times.last().copied().unwrap_or(0.0);
        let mut at: Vec<f64> = [6.0, 12.0, 24.0, 48.0]
            .into_iter()
            .filter(|t| *t <= end + 1e-9)
            .collect();
        if !at.iter().any(|t| (t - by_h).abs() < 1e-9) {
            at.push(by_h);
            at.sort_by(f64::total_cmp);
        }
        let course = at
            .iter()
            .map(|&t| {
                let v = interpolate(&times, &na, t);
                CoursePoint {
                    time_h: t,
                    na_mmol_l: v,
                    na_change_mmol_l: v - na0,
                }
            })
            .collect();
        let (r24, t24) = traj.largest_rise(24.0);
        let (r48, _) = traj.largest_rise(48.0);
        Outcome {
            dose,
            volume_ml: dose.volume_ml(),
            na_start_mmol_l: na0,
            total_body_water_start_l: traj
                .samples
                .first()
                .map_or(f64::NAN, |s| s.obs.total_water_l),
            na_change_at_goal_mmol_l: interpolate(&times, &na, by_h) - na0,
            course,
            largest_rise_24h_mmol_l: r24,
            largest_rise_24h_time_h: t24,
            largest_rise_48h_mmol_l: r48,
            lowest_na_mmol_l: na.iter().copied().fold(f64::INFINITY, f64::min),
            highest_na_mmol_l: na.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            lowest_after_mmol_l: times
                .iter()
                .zip(&na)
                .filter(|(t, _)| **t >= after_h - 1e-9)
                .map(|(_, v)| *v)
                .fold(f64::INFINITY, f64::min),
            margins: traj
                .limits
                .applicable_rules(&traj.situation)
                .into_iter()
                .map(|r| margin(&times, &na, r))
                .collect(),
            bedside: crate::bedside::attribute_gap(traj, by_h),
        }
    }

    /// The smallest margin to a rule of severity `limit` (infinite when
    /// none is in force), mmol/L.
    pub fn limit_margin(&self) -> f64 {
        self.margins
            .iter()
            .filter(|m| m.severity == Severity::Limit)
            .map(|m| m.margin_mmol_l)
            .fold(f64::INFINITY, f64::min)
    }

    /// The limits crossed.
    pub fn limits_crossed(&self) -> Vec<&Margin> {
        self.margins
            .iter()
            .filter(|m| m.severity == Severity::Limit && m.crossed())
            .collect()
    }
}

/// Margin of a sodium series to one rule, over the times the rule checks
/// (as [`limits::check`]).
pub fn margin(times: &[f64], na: &[f64], rule: &Rule) -> Margin {
    let changes = limits::window_changes(times, na, rule);
    let mut worst = (f64::NEG_INFINITY, f64::NAN);
    for (j, &c) in changes.iter().enumerate() {
        let t = times[j];
        if t <= rule.from_h + 1e-9 || rule.to_h.is_some_and(|end| t > end + 1e-9) {
            continue;
        }
        if c > worst.0 {
            worst = (c, t);
        }
    }
    if !worst.0.is_finite() {
        // The run ends before the rule begins: nothing was checked.
        worst = (0.0, rule.from_h);
    }
    Margin {
        label: rule.label.clone(),
        direction: rule.direction,
        severity: rule.severity,
        window_h: rule.window_h,
        max_mmol_l: rule.max_mmol_l,
        worst_mmol_l: worst.0,
        worst_time_h: worst.1,
        margin_mmol_l: rule.max_mmol_l - worst.0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn margins_agree_with_the_flags() {
        // A steady rise of 11 mmol/L per day crosses the European first-day
        // limit of 10 (Spasovski et al. 2014) and no other rule.
        let eu = limits::choose("europe-2014", false).unwrap();
        let t: Vec<f64> = (0..=48).map(|h| h as f64).collect();
        let na: Vec<f64> = t.iter().map(|h| 115.0 + 11.0 / 24.0 * h).collect();
        let situation = limits::Situation {
            start_na_mmol_l: 115.0,
            onset: crate::patient::Onset::Chronic,
            symptoms: crate::patient::Symptoms::default(),
        };
        let flags = limits::check(&t, &na, &eu, &situation);
        for rule in eu.applicable_rules(&situation) {
            let m = margin(&t, &na, rule);
            let flagged = flags.iter().any(|f| &f.rule == rule);
            assert_eq!(m.crossed(), flagged, "{m:?}");
            if let Some(f) = flags.iter().find(|f| &f.rule == rule) {
                assert!((m.worst_mmol_l - f.worst_change_mmol_l).abs() < 1e-12);
            }
        }
        let first_day = margin(&t, &na, &eu.rules()[0]);
        assert!(
            (first_day.margin_mmol_l + 1.0).abs() < 1e-9,
            "{first_day:?}"
        );
    }
}
