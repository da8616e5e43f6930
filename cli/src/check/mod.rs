//! `tidewater check`: scenarios held as regression tests. Each scenario is
//! run, its `expect` lines evaluated, and its samples compared with a
//! stored baseline (`baseline.rs`) within per-column tolerances
//! (`tolerance.rs`, `compare.rs`). `--update` writes baselines, and only
//! then. Results print as text and, on request, as JUnit XML (`junit.rs`).
//!
//! Scenarios run in parallel; results are reported in the order the
//! scripts were given (folders: sorted by name), so the output is the same
//! for any number of threads.

pub mod baseline;
pub mod compare;
pub mod junit;
pub mod tolerance;

use crate::input;
use crate::options::Style;
use crate::report::csv;
use anyhow::{Context, Result};
use clap::Args;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use tolerance::Tolerances;

/// Options of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Scenario scripts, or folders of them (*.rhai, not recursive).
    #[arg(default_value = "scenarios", value_name = "SCRIPT|DIR")]
    pub paths: Vec<PathBuf>,
    /// Write (or refresh) the baseline of every scenario whose expectations
    /// hold, instead of comparing with it.
    #[arg(long)]
    pub update: bool,
    /// Folder of baselines (default: `baselines/` beside each script).
    /// Baseline files are named after the script: <stem>.csv.
    #[arg(long, value_name = "DIR")]
    pub baselines: Option<PathBuf>,
    /// Tolerance file (YAML). Default: `tolerances.yaml` in the baseline
    /// folder when it exists, else the built-in tolerances.
    #[arg(long, value_name = "YAML")]
    pub tolerances: Option<PathBuf>,
    /// A scenario without a baseline is an error (for CI).
    #[arg(long)]
    pub require_baseline: bool,
    /// Key-sample interval of written baselines, h (with --update).
    #[arg(long, default_value_t = 1.0, value_name = "HOURS")]
    pub every: f64,
    /// Also write the results as JUnit XML to FILE.
    #[arg(long, value_name = "FILE")]
    pub junit: Option<PathBuf>,
    /// Scenarios run at once (default: all cores).
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=1024))]
    pub threads: Option<u64>,
}

/// How one scenario came out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// Expectations held and the baseline (if any) matched.
    Passed,
    /// A baseline was written or refreshed (`--update`).
    Written,
    /// An expectation failed or the run left its baseline.
    Failed,
    /// The scenario could not be checked (script, run or baseline error).
    Error,
}

/// The result of one scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseResult {
    /// The script.
    pub script: PathBuf,
    /// Its file stem.
    pub name: String,
    /// How it came out.
    pub status: Status,
    /// One line.
    pub headline: String,
    /// What went wrong (or changed), line by line.
    pub details: Vec<String>,
}

/// One scenario to check.
struct Job {
    script: PathBuf,
    name: String,
    baseline: PathBuf,
    tolerances: Arc<Tolerances>,
}

/// The scripts named by `paths`: files as given, folders as their `*.rhai`
/// sorted by name.
fn scripts(paths: &[PathBuf]) -> Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for path in paths {
        if path.is_dir() {
            let mut found: Vec<PathBuf> = std::fs::read_dir(path)
                .with_context(|| format!("reading {}", path.display()))?
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.is_file() && p.extension().is_some_and(|e| e == "rhai"))
                .collect();
            found.sort();
            if found.is_empty() {
                anyhow::bail!(
                    "{}: no scenario scripts (*.rhai) in this folder",
                    path.display()
                );
            }
            out.extend(found);
        } else if path.is_file() {
            out.push(path.clone());
        } else {
            anyhow::bail!("{}: no such file or folder", path.display());
        }
    }
    Ok(out)
}

fn stem(path: &Path) -> String {
    path.file_stem()
        .unwrap_or_default()
        .to_string_lossy()
        .to_string()
}

/// The jobs of a check: each script with its baseline path and tolerances.
fn jobs(args: &CheckArgs) -> Result<Vec<Job>> {
    if !(args.every.is_finite() && args.every > 0.0) {
        anyhow::bail!("--every: must be a number of hours > 0, got {}", args.every);
    }
    let explicit = match &args.tolerances {
        Some(path) => Some(Arc::new(Tolerances::read(path)?)),
        None => None,
    };
    let mut found: BTreeMap<PathBuf, Arc<Tolerances>> = BTreeMap::new();
    let mut seen: BTreeMap<PathBuf, PathBuf> = BTreeMap::new();
    let mut jobs = Vec::new();
    for script in scripts(&args.paths)? {
        let name = stem(&script);
        let dir = match &args.baselines {
            Some(d) => d.clone(),
            None => script
                .parent()
                .unwrap_or_else(|| Path::new("."))
                .join("baselines"),
        };
        let baseline = dir.join(format!("{name}.csv"));
        if let Some(other) = seen.insert(baseline.clone(), script.clone()) {
            if other != script {
                anyhow::bail!(
                    "{} and {} would share the baseline {}; check them in separate runs or give --baselines",
                    other.display(),
                    script.display(),
                    baseline.display()
                );
            }
            continue;
        }
        let tolerances = match &explicit {
            Some(t) => t.clone(),
            None => match found.get(&dir) {
                Some(t) => t.clone(),
                None => {
                    let file = dir.join("tolerances.yaml");
                    let t = Arc::new(if file.exists() {
                        Tolerances::read(&file)?
                    } else {
                        Tolerances::defaults()
                    });
                    found.insert(dir.clone(), t.clone());
                    t
                }
            },
        };
        jobs.push(Job {
            script,
            name,
            baseline,
            tolerances,
        });
    }
    Ok(jobs)
}

/// Check (or, with `update`, write the baseline of) one scenario.
fn check_one(job: &Job, update: bool, require_baseline: bool, every_h: f64) -> CaseResult {
    let result = |status, headline: String, details| CaseResult {
        script: job.script.clone(),
        name: job.name.clone(),
        status,
        headline,
        details,
    };
    let run = match input::load_script(&job.script) {
        Ok(run) => run,
        Err(e) => {
            return result(
                Status::Error,
                "the scenario did not run".into(),
                vec![format!("{e:#}")],
            )
        }
    };
    let mut details: Vec<String> = run
        .expectations
        .iter()
        .filter(|e| !e.passed)
        .map(|e| {
            format!(
                "expectation (line {}) failed: {} ({})",
                e.line, e.description, e.detail
            )
        })
        .collect();
    let expectations = run.expectations.len();
    let held = expectations - details.len();
    let rows = csv::values(&run.trajectory);
    let old = if !job.baseline.exists() {
        None
    } else {
        match baseline::read(&job.baseline) {
            Ok(b) => Some(b),
            Err(e) if update => {
                // A broken baseline is replaced by --update, and said so.
                details.push(format!("the old baseline is replaced: {e}"));
                None
            }
            Err(e) => {
                return result(
                    Status::Error,
                    "the baseline cannot be used".into(),
                    vec![e.to_string()],
                )
            }
        }
    };
    let comparison = old
        .as_ref()
        .map(|b| compare::compare(b, &rows, &job.tolerances, &job.name));
    if update {
        if held < expectations {
            return result(
                Status::Failed,
                format!(
                    "{} of {expectations} expectations failed; baseline not written",
                    expectations - held
                ),
                details,
            );
        }
        let file_name = job
            .script
            .file_name()
            .unwrap_or_default()
            .to_string_lossy()
            .to_string();
        let text = baseline::render(&file_name, &rows, every_h);
        let current = std::fs::read_to_string(&job.baseline).ok();
        if current.as_deref() == Some(text.as_str()) {
            return result(
                Status::Passed,
                format!("baseline {} unchanged", job.baseline.display()),
                details,
            );
        }
        if let Err(e) = crate::report::write_whole(&job.baseline, &text) {
            return result(
                Status::Error,
                "the baseline could not be written".into(),
                vec![format!("{e:#}")],
            );
        }
        if let Some(c) = &comparison {
            if !c.holds() {
                details.push("changes from the previous baseline:".into());
                details.extend(c.report());
            }
        }
        let what = if current.is_some() {
            "refreshed"
        } else {
            "written"
        };
        return result(
            Status::Written,
            format!("baseline {} {what}", job.baseline.display()),
            details,
        );
    }
    let expect_text = format!("{held} of {expectations} expectations held");
    match comparison {
        Some(c) if c.holds() && details.is_empty() => result(
            Status::Passed,
            format!(
                "{expect_text}; {} key samples x {} columns within tolerance",
                c.samples,
                c.values.checked_div(c.samples).unwrap_or(0)
            ),
            details,
        ),
        Some(c) => {
            let regressed = !c.holds();
            details.extend(c.report());
            if regressed {
                details.push(match &job.tolerances.path {
                    Some(p) => format!("tolerances from {}", p.display()),
                    None => "built-in tolerances (override them in a tolerances.yaml beside the baselines)".into(),
                });
            }
            let headline = match (regressed, held < expectations) {
                (true, true) => format!(
                    "{expect_text}; the run left its baseline {}",
                    job.baseline.display()
                ),
                (true, false) => format!("the run left its baseline {}", job.baseline.display()),
                _ => expect_text,
            };
            result(Status::Failed, headline, details)
        }
        None if require_baseline => result(
            Status::Error,
            format!("no baseline at {}", job.baseline.display()),
            vec![format!(
                "write one with: tidewater check --update {}",
                job.script.display()
            )],
        ),
        None if held < expectations => result(Status::Failed, expect_text, details),
        None => result(
            Status::Passed,
            format!("{expect_text}; no baseline (write one with --update)"),
            details,
        ),
    }
}

/// Run `f` over `jobs` on `threads` threads; results in job order.
fn run_all(
    jobs: &[Job],
    threads: usize,
    f: impl Fn(&Job) -> CaseResult + Sync,
    on_done: impl Fn(&CaseResult) + Sync,
) -> Vec<CaseResult> {
    let slots: Vec<Mutex<Option<CaseResult>>> = jobs.iter().map(|_| Mutex::new(None)).collect();
    let next = AtomicUsize::new(0);
    std::thread::scope(|scope| {
        for _ in 0..threads.clamp(1, jobs.len().max(1)) {
            scope.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                let Some(job) = jobs.get(i) else { break };
                let r = f(job);
                on_done(&r);
                if let Ok(mut slot) = slots[i].lock() {
                    *slot = Some(r);
                }
            });
        }
    });
    slots
        .into_iter()
        .zip(jobs)
        .map(|(slot, job)| {
            slot.into_inner()
                .ok()
                .flatten()
                .unwrap_or_else(|| CaseResult {
                    script: job.script.clone(),
                    name: job.name.clone(),
                    status: Status::Error,
                    headline: "the check of this scenario stopped unexpectedly".into(),
                    details: Vec::new(),
                })
        })
        .collect()
}

/// The text report of a check run (what `check` prints on stdout).
pub fn render_text(results: &[CaseResult], style: Style) -> String {
    let mut out = String::new();
    for r in results {
        let mark = match r.status {
            Status::Passed => style.good("ok     "),
            Status::Written => style.good("written"),
            Status::Failed => style.bad("FAILED "),
            Status::Error => style.bad("ERROR  "),
        };
        out.push_str(&format!("{mark} {}: {}\n", r.script.display(), r.headline));
        for line in r.details.iter().flat_map(|d| d.lines()) {
            out.push_str(&format!("        {line}\n"));
        }
    }
    let count = |s: Status| results.iter().filter(|r| r.status == s).count();
    out.push_str(&format!(
        "check: {} scenarios: {} passed, {} written, {} failed, {} could not be checked\n",
        results.len(),
        count(Status::Passed),
        count(Status::Written),
        count(Status::Failed),
        count(Status::Error)
    ));
    out
}

/// `tidewater check`. Returns whether everything held; scenarios that could
/// not be checked make it an error (exit 2).
pub fn check_command(args: CheckArgs, style: Style) -> Result<bool> {
    let jobs = jobs(&args)?;
    let threads = args
        .threads
        .map(|t| t as usize)
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    let bar = crate::progress::bar(
        jobs.len() as u64,
        if args.update { "updating" } else { "checking" },
        style,
    );
    let results = run_all(
        &jobs,
        threads,
        |job| check_one(job, args.update, args.require_baseline, args.every),
        |_| bar.inc(1),
    );
    bar.finish_and_clear();
    print!("{}", render_text(&results, style));
    if let Some(path) = &args.junit {
        crate::report::write_whole(path, &junit::render(&results))?;
    }
    let errors = results.iter().filter(|r| r.status == Status::Error).count();
    if errors > 0 {
        anyhow::bail!(
            "{errors} of {} scenarios could not be checked (see above)",
            results.len()
        );
    }
    Ok(results.iter().all(|r| r.status != Status::Failed))
}
