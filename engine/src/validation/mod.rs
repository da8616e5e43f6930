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

/// Line (1-based) of every `- id: X` in the text, by id.
fn id_lines(text: &str) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    for (i, line) in text.lines().enumerate() {
        let t = line.trim_start();
        if let Some(rest) = t.strip_prefix("- id:") {
            let id = rest
                .trim()
                .trim_matches(|c| c == '"' || c == '\'')
                .to_string();
            out.entry(id).or_insert(i + 1);
        }
    }
    out
}

/// Line of `key:` inside the block of the check starting at `from` (up to
/// the next check), or the check's own line.
fn field_line(text: &str, from: usize, key: &str) -> usize {
    let needle = format!("{key}:");
    for (i, line) in text.lines().enumerate().skip(from) {
        let t = line.trim_start();
        if t.starts_with("- id:") {
            break;
        }
        let t = t.trim_start_matches("- ").trim_start_matches('{');
        if t.starts_with(&needle)
            || line.contains(&format!(" {needle}"))
            || line.contains(&format!("{{{needle}"))
        {
            return i + 1;
        }
    }
    from
}

impl Dossier {
    /// Read and check `dir/checks.yaml`.
    pub fn load(dir: &Path) -> Result<Dossier, ValidationError> {
        let path = dir.join(CHECKS_FILE);
        let file = path.display().to_string();
        let text = std::fs::read_to_string(&path).map_err(|e| ValidationError::Read {
            file: file.clone(),
            message: e.to_string(),
        })?;
        Dossier::from_text(dir, &file, &text)
    }

    /// Check the text of a checks file; scenarios are looked up in
    /// `dir/scenarios/`.
    pub fn from_text(dir: &Path, file: &str, text: &str) -> Result<Dossier, ValidationError> {
        let raw: RawDossier = serde_yaml::from_str(text).map_err(|e| ValidationError::Parse {
            file: file.to_string(),
            location: e.location().map(|l| (l.line(), l.column())),
            message: e.to_string(),
        })?;
        let lines = id_lines(text);
        let mut seen = BTreeSet::new();
        let mut citations: BTreeMap<String, (String, String)> = BTreeMap::new();
        let mut checks = Vec::with_capacity(raw.checks.len());
        for rc in raw.checks {
            let line = lines.get(&rc.id).copied().unwrap_or(0);
            let bad = |field: &str, message: String| ValidationError::Field {
                file: file.to_string(),
                line: if line == 0 {
                    0
                } else {
                    field_line(text, line, field.rsplit('.').next().unwrap_or(field))
                },
                check: rc.id.clone(),
                field: field.to_string(),
                message,
            };
            if rc.id.trim().is_empty() || rc.id.contains(char::is_whitespace) {
                return Err(bad("id", "an id must be one word".into()));
            }
            if !seen.insert(rc.id.clone()) {
                return Err(bad("id", "this id is used by an earlier check".into()));
            }
            for (field, value) in [
                ("topic", &rc.topic),
                ("source_key", &rc.source_key),
                ("source", &rc.source),
                ("published.text", &rc.published.text),
                ("published.unit", &rc.published.unit),
                ("range_basis", &rc.range_basis),
            ] {
                if value.trim().is_empty() {
                    return Err(bad(field, "must not be empty".into()));
                }
            }
            if rc.source_key != COMMON_PRACTICE {
                match citations.get(&rc.source_key) {
                    Some((other, first)) if *first != rc.source => {
                        return Err(bad(
                            "source",
                            format!(
                                "source_key {} is cited differently by check {other}",
                                rc.source_key
                            ),
                        ))
                    }
                    Some(_) => {}
                    None => {
                        citations.insert(rc.source_key.clone(), (rc.id.clone(), rc.source.clone()));
                    }
                }
            }
            let [lo, hi] = rc.range;
            if !(lo.is_finite() && hi.is_finite() && lo < hi) {
                return Err(bad(
                    "range",
                    format!("[{lo}, {hi}] must be two finite numbers, low before high"),
                ));
            }
            if !rc.published.value.is_finite() {
                return Err(bad("published.value", "must be a finite number".into()));
            }
            if let Some([a, b]) = rc.published.bar {
                if !(a.is_finite() && b.is_finite() && a <= b) {
                    return Err(bad(
                        "published.bar",
                        format!("[{a}, {b}] must be finite, low before high"),
                    ));
                }
                if rc
                    .published
                    .bar_kind
                    .as_deref()
                    .map(str::trim)
                    .unwrap_or("")
                    .is_empty()
                {
                    return Err(bad(
                        "published.bar_kind",
                        "a bar needs to say what it is (± 1 SD, range, ...)".into(),
                    ));
                }
            }
            if rc.scenario.contains('/')
                || rc.scenario.contains('\\')
                || !rc.scenario.ends_with(".rhai")
            {
                return Err(bad(
                    "scenario",
                    format!(
                        "\"{}\" must be a .rhai file name inside {SCENARIOS_DIR}/",
                        rc.scenario
                    ),
                ));
            }
            if !dir.join(SCENARIOS_DIR).join(&rc.scenario).is_file() {
                return Err(bad(
                    "scenario",
                    format!(
                        "{} does not exist",
                        dir.join(SCENARIOS_DIR).join(&rc.scenario).display()
                    ),
                ));
            }
            let kind = MetricKind::from_name(&rc.metric).ok_or_else(|| {
                let names: Vec<&str> = metrics::METRICS.iter().map(|(_, i)| i.name).collect();
                let hint = crate::suggest::closest(&rc.metric, names.iter().copied())
                    .map(|s| format!(" (did you mean \"{s}\"?)"))
                    .unwrap_or_default();
                bad("metric", format!("unknown metric \"{}\"{hint}; see tests/validation/README.md for the vocabulary", rc.metric))
            })?;
            let info = kind.info();
            for a in info.args {
                match rc.args.get(*a) {
                    None => {
                        return Err(bad(
                            "args",
                            format!(
                                "{} needs {a} (its arguments: {})",
                                info.name,
                                info.args.join(", ")
                            ),
                        ))
                    }
                    Some(v) if !v.is_finite() || *v < 0.0 => {
                        return Err(bad(
                            &format!("args.{a}"),
                            format!("{v} must be a finite number, not negative"),
                        ))
                    }
                    Some(_) => {}
                }
            }
            if let Some(extra) = rc.args.keys().find(|k| !info.args.contains(&k.as_str())) {
                return Err(bad(
                    &format!("args.{extra}"),
                    format!(
                        "{} takes no argument {extra} (its arguments: {})",
                        info.name,
                        info.args.join(", ")
                    ),
                ));
            }
            for a in ["load_ml", "load_mmol"] {
                if rc.args.get(a).is_some_and(|v| *v <= 0.0) {
                    return Err(bad(&format!("args.{a}"), "a load must be positive".into()));
                }
            }
            if let (Some(f), Some(t)) = (rc.args.get("from_h"), rc.args.get("to_h")) {
                if f >= t {
                    return Err(bad("args.to_h", format!("the window {f}..{t} h is empty")));
                }
            }
            for a in ["within_h", "over_h"] {
                if rc.args.get(a).is_some_and(|v| *v <= 0.0) {
                    return Err(bad(
                        &format!("args.{a}"),
                        "the window must be longer than 0 h".into(),
                    ));
                }
            }
            let time_course = match rc.time_course {
                None => None,
                Some(tc) => {
                    let series = Series::from_name(&tc.series).ok_or_else(|| {
                        let names: Vec<&str> = metrics::SERIES.iter().map(|(_, n, _)| *n).collect();
                        bad(
                            "time_course.series",
                            format!(
                                "unknown series \"{}\" (known: {})",
                                tc.series,
                                names.join(", ")
                            ),
                        )
                    })?;
                    if tc.points.is_empty() {
                        return Err(bad(
                            "time_course.points",
                            "a time course needs at least one point".into(),
                        ));
                    }
                    let mut last = f64::NEG_INFINITY;
                    for p in &tc.points {
                        let ok = p.t_h.is_finite()
                            && p.t_h >= 0.0
                            && p.value.is_finite()
                            && !matches!(p.low, Some(l) if !(l.is_finite() && l <= p.value))
                            && !matches!(p.high, Some(h) if !(h.is_finite() && h >= p.value));
                        if !ok || p.t_h < last {
                            return Err(bad("time_course.points", format!("the point at {} h must have t_h >= 0 in time order and low <= value <= high", p.t_h)));
                        }
                        last = p.t_h;
                    }
                    Some(TimeCourse {
                        series,
                        spread: tc.spread,
                        points: tc.points,
                    })
                }
            };
            if let Some(r) = &rc.expected_failure {
                if r.trim().len() < 10 {
                    return Err(bad(
                        "expected_failure",
                        "give the physiological reason (what mechanism is missing or off)".into(),
                    ));
                }
            }
            checks.push(Check {
                id: rc.id,
                topic: rc.topic,
                source_key: rc.source_key,
                source: rc.source,
                published: rc.published,
                range: rc.range,
                range_basis: rc.range_basis,
                scenario: rc.scenario,
                metric: Metric {
                    kind,
                    args: rc.args,
                },
                time_course,
                expected_failure: rc.expected_failure,
                line,
            });
        }
        if checks.is_empty() {
            return Err(ValidationError::Parse {
                file: file.to_string(),
                location: None,
                message: "the dossier has no checks".into(),
            });
        }
        Ok(Dossier {
            dir: dir.to_path_buf(),
            checks,
        })
    }

    /// The checks file, for messages.
    pub fn file(&self) -> String {
        self.dir.join(CHECKS_FILE).display().to_string()
    }

    /// Distinct published sources (common practice not counted).
    pub fn distinct_sources(&self) -> usize {
        self.checks
            .iter()
            .map(|c| c.source_key.as_str())
            .filter(|k| *k != COMMON_PRACTICE)
            .collect::<BTreeSet<_>>()
            .len()
    }

    /// The scenarios the checks name, each once, in first-use order.
    pub fn scenarios(&self) -> Vec<&str> {
        let mut seen = BTreeSet::new();
        self.checks
            .iter()
            .map(|c| c.scenario.as_str())
            .filter(|s| seen.insert(*s))
            .collect()
    }

    /// Run every scenario once (on up to `threads` threads) and read every
    /// check. A scenario that fails to load or run makes its checks
    /// [`Status::Error`] with the scenario's message.
    pub fn run(&self, threads: usize) -> Outcome {
        let names = self.scenarios();
        let runs = run_scenarios(&self.dir.join(SCENARIOS_DIR), &names, threads.max(1));
        let by_name: BTreeMap<&str, &RunResult> = names.iter().copied().zip(runs.iter()).collect();
        let results = self
            .checks
            .iter()
            .map(|c| evaluate(c, by_name[c.scenario.as_str()]))
            .collect();
        Outcome { results }
    }
}

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
mod tests {
    use super::*;

    fn dir_with(scenarios: &[&str]) -> tempdir::Dir {
        tempdir::Dir::new(scenarios)
    }

    /// A throwaway dossier folder (no external crate: a folder under the
    /// system temporary directory, removed on drop).
    mod tempdir {
        pub struct Dir(pub std::path::PathBuf);
        impl Dir {
            pub fn new(scenarios: &[&str]) -> Dir {
                use std::sync::atomic::{AtomicUsize, Ordering};
                static N: AtomicUsize = AtomicUsize::new(0);
                let p = std::env::temp_dir().join(format!(
                    "tidewater-validation-{}-{}",
                    std::process::id(),
                    N.fetch_add(1, Ordering::Relaxed)
                ));
                std::fs::create_dir_all(p.join(super::SCENARIOS_DIR)).unwrap();
                for s in scenarios {
                    std::fs::write(p.join(super::SCENARIOS_DIR).join(s), "run_for(hours(1));\n")
                        .unwrap();
                }
                Dir(p)
            }
        }
        impl Drop for Dir {
            fn drop(&mut self) {
                let _ = std::fs::remove_dir_all(&self.0);
            }
        }
    }

    const GOOD: &str = "checks:
  - id: one
    topic: water loading
    source_key: paper2000
    source: \"Author A. A paper. J Test 2000;1:1-2\"
    published: {text: \"1 ± 1\", value: 1, unit: mmol/L}
    range: [0, 2]
    range_basis: mean ± 2 SD
    scenario: a.rhai
    metric: na_change
    args: {at_h: 1}
";

    fn err(text: &str) -> ValidationError {
        let d = dir_with(&["a.rhai"]);
        Dossier::from_text(&d.0, "checks.yaml", text).unwrap_err()
    }

    #[test]
    fn a_good_dossier_loads() {
        let d = dir_with(&["a.rhai"]);
        let dossier = Dossier::from_text(&d.0, "checks.yaml", GOOD).unwrap();
        assert_eq!(dossier.checks.len(), 1);
        assert_eq!(dossier.checks[0].line, 2);
        assert_eq!(dossier.distinct_sources(), 1);
    }

    #[test]
    fn errors_name_file_line_and_field() {
        let e = err(&GOOD.replace("na_change", "na_chang"));
        let s = e.to_string();
        assert!(
            s.starts_with("checks.yaml:10: check one: metric: unknown metric \"na_chang\""),
            "{s}"
        );
        assert!(s.contains("did you mean \"na_change\""), "{s}");

        let s = err(&GOOD.replace("[0, 2]", "[2, 0]")).to_string();
        assert!(s.starts_with("checks.yaml:7: check one: range:"), "{s}");

        let s = err(&GOOD.replace("{at_h: 1}", "{at: 1}")).to_string();
        assert!(s.contains("args") && s.contains("needs at_h"), "{s}");

        let s = err(&GOOD.replace("{at_h: 1}", "{at_h: 1, load_ml: 3}")).to_string();
        assert!(
            s.contains("args.load_ml") && s.contains("takes no argument"),
            "{s}"
        );

        let s = err(&GOOD.replace("a.rhai", "missing.rhai")).to_string();
        assert!(
            s.starts_with("checks.yaml:9: check one: scenario:") && s.contains("does not exist"),
            "{s}"
        );

        let s =
            err(&GOOD.replace("    range_basis", "    colour: red\n    range_basis")).to_string();
        assert!(
            s.starts_with("checks.yaml:8:") && s.contains("unknown field `colour`"),
            "{s}"
        );
    }

    #[test]
    fn one_source_key_one_citation_and_ids_unique() {
        let second = GOOD
            .split_once("\n")
            .unwrap()
            .1
            .replace("id: one", "id: two");
        let s = err(&format!(
            "{GOOD}{}",
            second.replace("J Test 2000", "J Other 2001")
        ))
        .to_string();
        assert!(
            s.contains("check two: source:") && s.contains("cited differently by check one"),
            "{s}"
        );
        let s = err(&format!("{GOOD}{}", GOOD.split_once("\n").unwrap().1)).to_string();
        assert!(s.contains("id: this id is used by an earlier check"), "{s}");
    }

    #[test]
    fn an_expected_failure_needs_a_reason() {
        let s = err(&format!("{GOOD}    expected_failure: \"no\"\n")).to_string();
        assert!(
            s.contains("expected_failure: give the physiological reason"),
            "{s}"
        );
    }

    fn check(range: [f64; 2], expected_failure: Option<&str>) -> Check {
        let d = dir_with(&["a.rhai"]);
        let mut c = Dossier::from_text(&d.0, "checks.yaml", GOOD)
            .unwrap()
            .checks
            .remove(0);
        c.range = range;
        c.expected_failure = expected_failure.map(String::from);
        c
    }

    #[test]
    fn statuses_follow_range_and_mark() {
        let run = run_scenario_text(
            "patient(#{ sex: \"male\", age_years: 30, weight_kg: 70 }); run_for(hours(2));",
        );
        let cases = [
            ([-1.0, 1.0], None, Status::Pass),
            ([5.0, 6.0], None, Status::Fail),
            (
                [5.0, 6.0],
                Some("a mechanism is missing"),
                Status::ExpectedFailure,
            ),
            (
                [-1.0, 1.0],
                Some("a mechanism is missing"),
                Status::UnexpectedPass,
            ),
        ];
        for (range, mark, want) in cases {
            let c = check(range, mark);
            let r = evaluate(&c, &run);
            assert_eq!(r.status, want, "{range:?} {mark:?}");
            let msg = r.message(&c, "checks.yaml");
            if want == Status::UnexpectedPass {
                assert!(msg.contains("remove the mark"), "{msg}");
            }
        }
        let r = evaluate(&check([0.0, 1.0], None), &Err("boom".into()));
        assert!(matches!(r.status, Status::Error(ref e) if e.contains("boom")));
    }

    fn run_scenario_text(src: &str) -> RunResult {
        let s = Scenario::from_source("t.rhai", src, Path::new(".")).map_err(|e| e.to_string())?;
        let facts = RunFacts {
            weight_kg: s.plan().patient.weight_kg,
        };
        Ok((s.run().map_err(|e| e.to_string())?.trajectory, facts))
    }
}
