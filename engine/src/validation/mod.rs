//! # The validation dossier
//!
//! The model held against published human data: a folder with
//! `checks.yaml` (each check a published result, its acceptance range, an
//! invented scenario matching the study and a [`metrics`] reading) and the
//! scenarios in `scenarios/`. [`Dossier::load`] reads and checks the file
//! (every error names the file, the line and the field);
//! [`Dossier::run`] simulates each scenario once and reads every check's
//! metric into a [`CheckResult`]. Pure computation: presentation lives in
//! the command line.
//!
//! ```no_run
//! use std::path::Path;
//! use tidewater::validation::Dossier;
//!
//! let dossier = Dossier::load(Path::new("tests/validation"))?;
//! let outcome = dossier.run(2);
//! println!("{} of {} checks as expected", outcome.as_expected(), outcome.results.len());
//! # Ok::<(), tidewater::validation::ValidationError>(())
//! ```
//!
//! A check passes when the model's value lies in its range. A check marked
//! `expected_failure` (with the physiological reason) is expected to miss
//! its range; if it passes, the mark is stale and the outcome says so.
//!
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.

pub mod metrics;

use crate::scenario::Scenario;
use crate::trajectory::Trajectory;
use metrics::{Metric, MetricKind, RunFacts, Series};
use serde::Deserialize;
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use thiserror::Error;

/// The name of the checks file inside a dossier folder.
pub const CHECKS_FILE: &str = "checks.yaml";
/// The folder of scenarios inside a dossier folder.
pub const SCENARIOS_DIR: &str = "scenarios";
/// The source key of facts of the trade with no single source; it does not
/// count as a distinct source.
pub const COMMON_PRACTICE: &str = "common_practice";

/// A bad dossier: unreadable, malformed, or naming what does not exist.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ValidationError {
    /// The file could not be read.
    #[error("{file}: cannot read the file: {message}")]
    Read {
        /// File name.
        file: String,
        /// What went wrong.
        message: String,
    },
    /// The YAML does not have the dossier's shape.
    #[error("{file}{}: {message}", location.map(|(l, c)| format!(":{l}:{c}")).unwrap_or_default())]
    Parse {
        /// File name.
        file: String,
        /// Line and column, 1-based, where known.
        location: Option<(usize, usize)>,
        /// What is wrong.
        message: String,
    },
    /// A field with a value the dossier cannot use.
    #[error("{file}:{line}: check {check}: {field}: {message}")]
    Field {
        /// File name.
        file: String,
        /// 1-based line of the field (or of its check).
        line: usize,
        /// The check's id.
        check: String,
        /// The field.
        field: String,
        /// What is wrong.
        message: String,
    },
}

/// What the source reports, as shown beside the model's value.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Published {
    /// What the source reports, in words (with its spread and n).
    pub text: String,
    /// The central value on the metric's scale.
    pub value: f64,
    /// The published spread drawn as an error bar (low, high), if any.
    #[serde(default)]
    pub bar: Option<[f64; 2]>,
    /// What the bar is (± 1 SD, a reported range, ...).
    #[serde(default)]
    pub bar_kind: Option<String>,
    /// Unit of `value` and `bar`.
    pub unit: String,
}

/// One published point of a time course.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Point {
    /// Time from the start, h.
    pub t_h: f64,
    /// Published value.
    pub value: f64,
    /// Lower end of its error bar.
    #[serde(default)]
    pub low: Option<f64>,
    /// Upper end of its error bar.
    #[serde(default)]
    pub high: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTimeCourse {
    series: String,
    spread: String,
    points: Vec<Point>,
}

/// A published time course and the model series it is drawn against.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeCourse {
    /// The model series.
    pub series: Series,
    /// What the error bars are.
    pub spread: String,
    /// Published points, in time order.
    pub points: Vec<Point>,
}

#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCheck {
    id: String,
    topic: String,
    source_key: String,
    source: String,
    published: Published,
    range: [f64; 2],
    range_basis: String,
    scenario: String,
    metric: String,
    #[serde(default)]
    args: BTreeMap<String, f64>,
    #[serde(default)]
    time_course: Option<RawTimeCourse>,
    #[serde(default)]
    expected_failure: Option<String>,
}

#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDossier {
    checks: Vec<RawCheck>,
}

/// One check of the dossier.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// Unique id.
    pub id: String,
    /// The topic it belongs to (water loading, desmopressin, ...).
    pub topic: String,
    /// Short key of the source; checks from one source share it.
    pub source_key: String,
    /// Full citation (or "common practice").
    pub source: String,
    /// What the source reports.
    pub published: Published,
    /// Acceptance range (low, high), inclusive.
    pub range: [f64; 2],
    /// How the range was set from the publication.
    pub range_basis: String,
    /// Scenario file name, inside the dossier's `scenarios/`.
    pub scenario: String,
    /// What is read from the course.
    pub metric: Metric,
    /// A published time course, if any.
    pub time_course: Option<TimeCourse>,
    /// Why the model is expected to miss the range today, if it is.
    pub expected_failure: Option<String>,
    /// 1-based line of the check's `id` in the file.
    pub line: usize,
}

/// A loaded, checked dossier.
#[derive(Debug, Clone, PartialEq)]
pub struct Dossier {
    /// The dossier folder.
    pub dir: PathBuf,
    /// Its checks, in file order.
    pub checks: Vec<Check>,
}

/// How a check came out.
#[derive(Debug, Clone, PartialEq)]
pub enum Status {
    /// In range, as expected.
    Pass,
    /// Out of range, not marked: a failure.
    Fail,
    /// Out of range, marked with its reason.
    ExpectedFailure,
    /// In range although marked `expected_failure`: the mark is stale.
    UnexpectedPass,
    /// The scenario or the metric could not be evaluated.
    Error(String),
}

impl Status {
    /// Whether the outcome is the one the dossier expects.
    pub fn as_expected(&self) -> bool {
        matches!(self, Status::Pass | Status::ExpectedFailure)
    }

    /// A short label for tables.
    pub fn label(&self) -> &'static str {
        match self {
            Status::Pass => "pass",
            Status::Fail => "FAIL",
            Status::ExpectedFailure => "expected failure",
            Status::UnexpectedPass => "UNEXPECTED PASS",
            Status::Error(_) => "ERROR",
        }
    }
}

/// The outcome of one check.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckResult {
    /// The check's id.
    pub id: String,
    /// The model's value, if it could be read.
    pub value: Option<f64>,
    /// How it came out.
    pub status: Status,
    /// The model series of the check's time course (time h, value), if it
    /// has one and the run succeeded.
    pub series: Option<Vec<(f64, f64)>>,
}

impl CheckResult {
    /// A message for a test or a terminal: what happened and what to do.
    pub fn message(&self, check: &Check, file: &str) -> String {
        let where_ = format!("{file}:{} check {}", check.line, check.id);
        let v = self
            .value
            .map(|v| format!("{v:.4}"))
            .unwrap_or_else(|| "-".into());
        let (lo, hi) = (check.range[0], check.range[1]);
        match &self.status {
            Status::Pass => format!("{where_}: {v} in [{lo}, {hi}]"),
            Status::ExpectedFailure => format!(
                "{where_}: {v} outside [{lo}, {hi}], expected: {}",
                check.expected_failure.as_deref().unwrap_or("")
            ),
            Status::Fail => format!(
                "{where_}: the model gives {v}, outside the published range [{lo}, {hi}] {} ({}); fix the model or, if the reason is known, mark the check expected_failure with the physiological reason (never widen the range)",
                check.published.unit, check.source
            ),
            Status::UnexpectedPass => format!(
                "{where_}: the model now gives {v}, inside [{lo}, {hi}], but the check is marked expected_failure; remove the mark"
            ),
            Status::Error(e) => format!("{where_}: could not be evaluated: {e}"),
        }
    }
}

/// The outcome of a whole dossier run.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// One result per check, in the dossier's order.
    pub results: Vec<CheckResult>,
}

impl Outcome {
    /// Checks that came out as the dossier expects.
    pub fn as_expected(&self) -> usize {
        self.results
            .iter()
            .filter(|r| r.status.as_expected())
            .count()
    }

    /// Checks of a status (compared by kind).
    pub fn count(&self, f: impl Fn(&Status) -> bool) -> usize {
        self.results.iter().filter(|r| f(&r.status)).count()
    }

    /// Whether every check came out as expected.
    pub fn all_as_expected(&self) -> bool {
        self.as_expected() == self.results.len()
    }
}

mod load;

/// A scenario's course and the facts metrics need, or why it failed.
pub type RunResult = Result<(Trajectory, RunFacts), String>;

/// Read one check from its scenario's run.
pub fn evaluate(check: &Check, run: &RunResult) -> CheckResult {
    let (traj, facts) = match run {
        Ok(r) => r,
        Err(e) => {
            return CheckResult {
                id: check.id.clone(),
                value: None,
                status: Status::Error(format!("scenario {}: {e}", check.scenario)),
                series: None,
            }
        }
    };
    let series = check.time_course.as_ref().map(|tc| tc.series.of(traj));
    match check.metric.evaluate(traj, *facts) {
        Err(e) => CheckResult {
            id: check.id.clone(),
            value: None,
            status: Status::Error(format!("metric {}: {e}", check.metric.kind)),
            series,
        },
        Ok(v) => {
            let inside = v >= check.range[0] && v <= check.range[1];
            let status = match (inside, check.expected_failure.is_some()) {
                (true, false) => Status::Pass,
                (false, false) => Status::Fail,
                (false, true) => Status::ExpectedFailure,
                (true, true) => Status::UnexpectedPass,
            };
            CheckResult {
                id: check.id.clone(),
                value: Some(v),
                status,
                series,
            }
        }
    }
}

/// Load and run one scenario: its course and the facts metrics need.
pub fn run_scenario(path: &Path) -> RunResult {
    let scenario = Scenario::load(path).map_err(|e| e.to_string())?;
    let facts = RunFacts {
        weight_kg: scenario.plan().patient.weight_kg,
    };
    let run = scenario.run().map_err(|e| e.to_string())?;
    Ok((run.trajectory, facts))
}

/// Run scenarios by name from `dir` on up to `threads` threads (each
/// thread loads its own: scenarios are not shared across threads).
fn run_scenarios(dir: &Path, names: &[&str], threads: usize) -> Vec<RunResult> {
    let next = std::sync::atomic::AtomicUsize::new(0);
    let slots: Vec<std::sync::Mutex<Option<RunResult>>> =
        names.iter().map(|_| std::sync::Mutex::new(None)).collect();
    std::thread::scope(|scope| {
        for _ in 0..threads.min(names.len()) {
            scope.spawn(|| loop {
                let j = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                if j >= names.len() {
                    break;
                }
                let r = run_scenario(&dir.join(names[j]));
                *slots[j].lock().unwrap_or_else(|p| p.into_inner()) = Some(r);
            });
        }
    });
    slots
        .into_iter()
        .map(|s| {
            s.into_inner()
                .unwrap_or_else(|p| p.into_inner())
                .unwrap_or_else(|| Err("the scenario was not run".into()))
        })
        .collect()
}

#[cfg(test)]
mod tests;
