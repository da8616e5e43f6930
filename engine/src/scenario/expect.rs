//! Expectations: assertions a script makes about its finished run.

use super::rules::{HISTORY_LABS, OBS_LABS};
use super::units::Duration;
use crate::trajectory::{interpolate, Trajectory};
use serde::Serialize;

/// What an expectation checks.
#[derive(Debug, Clone, PartialEq)]
pub enum Check {
    /// A quantity at a time lies in `[lo, hi]`.
    Between {
        /// Lab name.
        quantity: String,
        /// Time, h.
        time_h: f64,
        /// Low end.
        lo: f64,
        /// High end.
        hi: f64,
    },
    /// The change of a quantity between two times lies in `[lo, hi]`.
    Change {
        /// Lab name.
        quantity: String,
        /// From, h.
        from_h: f64,
        /// To, h.
        to_h: f64,
        /// Low end.
        lo: f64,
        /// High end.
        hi: f64,
    },
    /// A quantity stays in `[lo, hi]` at every sample.
    Always {
        /// Lab name.
        quantity: String,
        /// Low end.
        lo: f64,
        /// High end.
        hi: f64,
    },
    /// Sodium rises by at most this much within any 24 h.
    MaxRise24h(f64),
    /// Sodium falls by at most this much within any 24 h.
    MaxFall24h(f64),
    /// No guideline flag.
    NoFlags,
    /// At least one guideline flag (whose text contains the fragment).
    Flag(Option<String>),
    /// The run log contains the text.
    Logged(String),
}

/// An expectation with the script line that made it.
#[derive(Debug, Clone, PartialEq)]
pub struct Expectation {
    /// Script line.
    pub line: usize,
    /// What it checks.
    pub check: Check,
}

/// The outcome of one expectation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ExpectationResult {
    /// Script line of the expectation.
    pub line: usize,
    /// What was expected, in words.
    pub description: String,
    /// Whether it held.
    pub passed: bool,
    /// What the run showed.
    pub detail: String,
}

/// The series of a quantity over the run.
pub(crate) fn series(traj: &Trajectory, quantity: &str) -> Vec<f64> {
    match quantity {
        "time_h" => traj.times(),
        "na_start" => vec![traj.samples[0].obs.na_mmol_l; traj.samples.len()],
        "na_change_since_start" => traj.na_change_since_start.clone(),
        "na_change_24h" => traj.na_change_24h.clone(),
        "na_change_48h" => traj.na_change_48h.clone(),
        name => {
            let def = OBS_LABS
                .iter()
                .find(|l| l.name == name)
                .expect("quantity names are checked when the script runs");
            traj.samples.iter().map(|s| (def.get)(&s.obs)).collect()
        }
    }
}

fn unit(quantity: &str) -> &'static str {
    HISTORY_LABS
        .iter()
        .find(|(n, _)| *n == quantity)
        .map(|(_, u)| *u)
        .or_else(|| OBS_LABS.iter().find(|l| l.name == quantity).map(|l| l.unit))
        .filter(|u| *u != "1")
        .unwrap_or("")
}

/// A guideline flag in words.
pub(crate) fn flag_text(f: &crate::limits::Flag) -> String {
    format!(
        "{} ({:?}): {:+.1} mmol/L at {:.1} h",
        f.rule.label, f.rule.severity, f.change_mmol_l, f.time_h
    )
}

fn range_text(lo: f64, hi: f64) -> String {
    match (lo.is_finite(), hi.is_finite()) {
        (true, true) => format!("between {lo} and {hi}"),
        (true, false) => format!("at least {lo}"),
        (false, true) => format!("at most {hi}"),
        (false, false) => "anything".into(),
    }
}

impl Expectation {
    /// Check the expectation against a finished run and its log.
    pub fn evaluate(&self, traj: &Trajectory, log: &[String]) -> ExpectationResult {
        let times = traj.times();
        let end = times.last().copied().unwrap_or(0.0);
        let at = |q: &str, t: f64| interpolate(&times, &series(traj, q), t);
        let (description, passed, detail) = match &self.check {
            Check::Between {
                quantity,
                time_h,
                lo,
                hi,
            } => {
                let u = unit(quantity);
                let d = format!(
                    "{quantity} at {} {} {u}",
                    Duration { hours: *time_h },
                    range_text(*lo, *hi)
                );
                if *time_h > end + 1e-9 {
                    (d, false, format!("the run ends at {end} h"))
                } else {
                    let v = at(quantity, *time_h);
                    (d, v >= *lo && v <= *hi, format!("{quantity} = {v:.2} {u}"))
                }
            }
            Check::Change {
                quantity,
                from_h,
                to_h,
                lo,
                hi,
            } => {
                let u = unit(quantity);
                let d = format!(
                    "change of {quantity} from {} to {} {} {u}",
                    Duration { hours: *from_h },
                    Duration { hours: *to_h },
                    range_text(*lo, *hi)
                );
                if from_h.max(*to_h) > end + 1e-9 {
                    (d, false, format!("the run ends at {end} h"))
                } else {
                    let (a, b) = (at(quantity, *from_h), at(quantity, *to_h));
                    let c = b - a;
                    (
                        d,
                        c >= *lo && c <= *hi,
                        format!("{a:.2} -> {b:.2}: change {c:+.2} {u}"),
                    )
                }
            }
            Check::Always { quantity, lo, hi } => {
                let u = unit(quantity);
                let s = series(traj, quantity);
                let (mut min_v, mut min_t, mut max_v, mut max_t) =
                    (f64::INFINITY, 0.0, f64::NEG_INFINITY, 0.0);
                for (v, t) in s.iter().zip(&times) {
                    if *v < min_v {
                        (min_v, min_t) = (*v, *t);
                    }
                    if *v > max_v {
                        (max_v, max_t) = (*v, *t);
                    }
                }
                (
                    format!("{quantity} always {} {u}", range_text(*lo, *hi)),
                    min_v >= *lo && max_v <= *hi,
                    format!(
                        "lowest {min_v:.2} at {min_t:.2} h, highest {max_v:.2} at {max_t:.2} h"
                    ),
                )
            }
            Check::MaxRise24h(max) => {
                let (rise, t) = traj.largest_rise(24.0);
                (
                    format!("sodium rises at most {max} mmol/L in any 24 h"),
                    rise <= *max,
                    format!("largest 24 h rise {rise:.2} mmol/L (reached at {t:.2} h)"),
                )
            }
            Check::MaxFall24h(max) => {
                let na = traj.sodium();
                let (mut fall, mut when) = (0.0f64, 0.0);
                let mut start = 0;
                for j in 0..na.len() {
                    while times[j] - times[start] > 24.0 + 1e-9 {
                        start += 1;
                    }
                    let peak = na[start..=j]
                        .iter()
                        .copied()
                        .fold(f64::NEG_INFINITY, f64::max);
                    if peak - na[j] > fall {
                        (fall, when) = (peak - na[j], times[j]);
                    }
                }
                (
                    format!("sodium falls at most {max} mmol/L in any 24 h"),
                    fall <= *max,
                    format!("largest 24 h fall {fall:.2} mmol/L (reached at {when:.2} h)"),
                )
            }
            Check::NoFlags => (
                "no guideline limit crossed".to_string(),
                traj.flags.is_empty(),
                if traj.flags.is_empty() {
                    "no flags".to_string()
                } else {
                    format!(
                        "{} flag(s), first: {}",
                        traj.flags.len(),
                        flag_text(&traj.flags[0])
                    )
                },
            ),
            Check::Flag(fragment) => {
                let texts: Vec<String> = traj.flags.iter().map(flag_text).collect();
                let hit = match fragment {
                    None => !texts.is_empty(),
                    Some(t) => texts.iter().any(|x| x.contains(t.as_str())),
                };
                (
                    match fragment {
                        None => "a guideline limit is crossed".to_string(),
                        Some(t) => format!("a guideline flag mentioning \"{t}\""),
                    },
                    hit,
                    if texts.is_empty() {
                        "no flags".to_string()
                    } else {
                        format!("{} flag(s), first: {}", texts.len(), texts[0])
                    },
                )
            }
            Check::Logged(text) => {
                let hit = log.iter().find(|l| l.contains(text.as_str()));
                (
                    format!("the log mentions \"{text}\""),
                    hit.is_some(),
                    hit.cloned()
                        .unwrap_or_else(|| format!("not in the {} log lines", log.len())),
                )
            }
        };
        ExpectationResult {
            line: self.line,
            description,
            passed,
            detail,
        }
    }
}
