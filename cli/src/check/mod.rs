//! `tidewater check`: scenarios held as regression tests. Each scenario is
//! run, its `expect` lines evaluated, and its samples compared with a
//! stored baseline (`baseline.rs`) within per-column tolerances
//! (`tolerance.rs`, `compare.rs`). `--update` writes baselines, and only
//! then. Results print as text and, on request, as JUnit XML
//! (`output/junit.rs`).
//!
//! Scenarios run in parallel on the ordered pool (`pool.rs`); results are
//! reported in the order the scripts were given (folders: sorted by name),
//! so the output is the same for any number of threads.

pub mod baseline;
pub mod compare;
pub mod tolerance;

use crate::options::{CheckOptions, Style};
use crate::output::{csv, junit::JunitXml, Placement};
use crate::{input, pool, scripts};
use anyhow::{Context, Result};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use tolerance::Tolerances;

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
            let found = scripts::in_folder(path)?;
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

/// The jobs of a check: each script with its baseline path and tolerances.
fn jobs(args: &CheckOptions) -> Result<Vec<Job>> {
    let explicit = match &args.tolerances {
        Some(path) => Some(Arc::new(Tolerances::read(path)?)),
        None => None,
    };
    let mut found: BTreeMap<PathBuf, Arc<Tolerances>> = BTreeMap::new();
    let mut seen: BTreeMap<PathBuf, PathBuf> = BTreeMap::new();
    let mut jobs = Vec::new();
    for script in scripts(&args.paths)? {
        let name = scripts::stem(&script);
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
    refuse_unknown_scenarios(&jobs)?;
    Ok(jobs)
}

/// A tolerance file may name only scenarios that exist: a script being
/// checked, or a `.rhai` file beside one (a misspelt name would silently
/// leave its scenario at the defaults).
fn refuse_unknown_scenarios(jobs: &[Job]) -> Result<()> {
    let mut known: std::collections::BTreeSet<String> =
        jobs.iter().map(|j| j.name.clone()).collect();
    for job in jobs {
        let dir = job.script.parent().unwrap_or_else(|| Path::new("."));
        if let Ok(entries) = std::fs::read_dir(dir) {
            for e in entries.flatten() {
                let p = e.path();
                if scripts::is_script(&p) {
                    known.insert(scripts::stem(&p));
                }
            }
        }
    }
    for job in jobs {
        let t = &job.tolerances;
        let Some(path) = &t.path else { continue };
        for (name, line) in t.scenario_names() {
            if !known.contains(&name) {
                let hint = tidewater::suggest::closest(&name, known.iter().map(String::as_str))
                    .map(|c| format!(" (did you mean `{c}`?)"))
                    .unwrap_or_default();
                anyhow::bail!(
                    "tolerance file {}{}: scenarios.{name}: no such scenario{hint}; scenarios are named by their script's file name",
                    path.display(),
                    line.map(|l| format!(":{l}")).unwrap_or_default()
                );
            }
        }
    }
    Ok(())
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
        let file = baseline::BaselineCsv {
            script: job
                .script
                .file_name()
                .unwrap_or_default()
                .to_string_lossy()
                .to_string(),
            file_name: job
                .baseline
                .file_name()
                .unwrap_or_default()
                .to_string_lossy()
                .to_string(),
            every_h,
        }
        .file_of(&rows);
        let current = std::fs::read_to_string(&job.baseline)
            .ok()
            .map(String::into_bytes);
        if current.as_deref() == Some(file.bytes.as_slice()) {
            return result(
                Status::Passed,
                format!("baseline {} unchanged", job.baseline.display()),
                details,
            );
        }
        let dir = job.baseline.parent().unwrap_or(Path::new(""));
        if let Err(e) = crate::output::place(dir, &[file], Placement::Beside) {
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
    let expect_text = if expectations == 0 {
        "no expectations".to_string()
    } else {
        format!("{held} of {expectations} expectations held")
    };
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
        let headline = crate::format::terminal_safe(&r.headline);
        out.push_str(&format!("{mark} {}: {headline}\n", r.script.display()));
        for line in r.details.iter().flat_map(|d| d.lines()) {
            let line = crate::format::terminal_safe(line);
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
pub fn check_command(args: CheckOptions, style: Style) -> Result<bool> {
    let jobs = jobs(&args)?;
    let bar = crate::progress::bar(
        jobs.len() as u64,
        if args.update { "updating" } else { "checking" },
        style,
    );
    let mut results: Vec<CaseResult> = Vec::with_capacity(jobs.len());
    pool::run_ordered(
        &jobs,
        args.threads,
        || Ok(()),
        |_, _, job| {
            let r = check_one(job, args.update, args.require_baseline, args.every_h);
            bar.inc(1);
            r
        },
        |_, r| {
            results.push(r);
            Ok::<(), std::convert::Infallible>(())
        },
    )
    .unwrap_or_else(|never| match never {});
    bar.finish_and_clear();
    print!("{}", render_text(&results, style));
    if let Some(path) = &args.junit {
        let junit = JunitXml {
            file_name: path
                .file_name()
                .with_context(|| format!("{}: not a file name", path.display()))?
                .to_string_lossy()
                .to_string(),
        };
        let dir = path.parent().unwrap_or(Path::new(""));
        crate::output::write(results.as_slice(), &[&junit], dir, Placement::Beside)?;
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
