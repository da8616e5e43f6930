//! `tidewater sweep` and `tidewater merge`: run a parameter sweep over a
//! base scenario (in parallel on the ordered pool, resumable, shardable),
//! and join shards. The members, their result rows and the resumption of
//! a result file are the engine's (`tidewater::sweep`); here the members
//! run on the command line's worker pool, and the summary is printed and
//! written (`output/sweep/`).

use crate::options::{MergeOptions, Style, SweepOptions};
use crate::output::sweep::SweepReport;
use crate::pool;
use anyhow::{Context, Result};
use std::collections::HashSet;
use std::io::Write;
use std::path::{Path, PathBuf};
use tidewater::limits::{Direction, LimitChoice, Severity};
use tidewater::scenario::Scenario;
use tidewater::sweep::{self, ScenarioRunner, Shard, SweepSpec};
use tidewater::InputError;

/// Read a sweep spec and load its base scenario (the script path is
/// relative to the spec file).
fn load_spec(spec_path: &Path) -> Result<(SweepSpec, PathBuf, Scenario)> {
    let text = tidewater::textfile::read_text(spec_path)
        .with_context(|| format!("cannot read {}", spec_path.display()))?;
    let spec = SweepSpec::from_yaml(&text, &spec_path.display().to_string())?;
    let script = spec_path
        .parent()
        .unwrap_or(Path::new("."))
        .join(&spec.scenario);
    let scenario = Scenario::load(&script).map_err(|e| anyhow::anyhow!("{e}"))?;
    sweep::check_script_settings(&spec, &text, &spec_path.display().to_string(), &scenario)?;
    Ok((spec, script, scenario))
}

/// Run `tidewater sweep`. Returns `false` when the run finished but every
/// member failed (exit 1: no result; the result file stays, as data).
pub fn sweep_command(args: SweepOptions, style: Style) -> Result<bool> {
    // The scenario is loaded once here to report script errors before any
    // work starts.
    let (spec, script, scenario) = load_spec(&args.spec)?;
    let duration_h = scenario.plan().duration_h;
    let shard = args.shard.resolve()?;
    if args.design_only {
        let mut out = std::io::stdout().lock();
        writeln!(out, "{}", sweep::design_header(&spec).join(","))?;
        for i in (0..spec.member_count()).filter(|i| shard.contains(*i)) {
            writeln!(out, "{}", sweep::design_cells(&spec.member(i)).join(","))?;
        }
        return Ok(true);
    }
    let out = args.out_file(shard);
    if let Some(dir) = out.parent() {
        if !dir.as_os_str().is_empty() {
            std::fs::create_dir_all(dir)
                .with_context(|| format!("cannot create {}", dir.display()))?;
        }
    }
    // One writer at a time, held until this function returns.
    let _lock = lock_output(&out)?;
    // Rows are resumed or merged only with rows of this very spec, script
    // and engine.
    sweep::claim_output(&out, &sweep::fingerprint(&spec, scenario.source()))?;
    let threads = args.threads;
    let total = (0..spec.member_count())
        .filter(|i| shard.contains(*i))
        .count();
    eprintln!(
        "sweep: {} members ({} in this shard) of {} on {threads} thread{} -> {}",
        spec.member_count(),
        total,
        script.display(),
        if threads == 1 { "" } else { "s" },
        out.display()
    );
    let bar = crate::progress::rate_bar(total as u64, "members", style);
    let start = std::time::Instant::now();
    let ran = run_members(&spec, duration_h, &out, shard, threads, &script, &|| {
        bar.inc(1)
    })?;
    bar.finish_and_clear();
    let secs = start.elapsed().as_secs_f64();
    eprintln!(
        "sweep: ran {ran} members in {secs:.1} s ({:.0} members/s)",
        ran as f64 / secs.max(1e-9)
    );
    if args.summary && shard.count == 1 {
        // Written even when every member failed: it records how many did.
        write_summary(&spec, &out, &scenario.plan().limits)?;
    }
    let outcomes = sweep::outcomes(&out, &spec)?;
    report_failures(&outcomes, &out);
    Ok(!outcomes.all_failed())
}

/// Take the exclusive lock of the result file `out` for the whole run: an
/// OS lock (flock on unix) on `<out>.lock` beside it, so that two sweeps
/// never append to one file. The kernel drops the lock when the process
/// ends however it ends, so a killed run leaves no stale lock. The lock
/// file itself stays: removing it would let a later run lock a new file
/// while a waiting one holds the old.
fn lock_output(out: &Path) -> Result<std::fs::File> {
    let path = lock_path(out);
    let file = std::fs::OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(&path)
        .with_context(|| format!("cannot open the lock file {}", path.display()))?;
    match fs4::FileExt::try_lock(&file) {
        Ok(()) => Ok(file),
        Err(fs4::TryLockError::WouldBlock) => Err(anyhow::anyhow!(
            "another tidewater sweep or merge is writing {} (it holds {}): wait for it to end, or choose another --out",
            out.display(),
            path.display()
        )),
        Err(fs4::TryLockError::Error(e)) => {
            Err(anyhow::anyhow!("cannot lock {}: {e}", path.display()))
        }
    }
}

/// The lock file of the result file `out`: `<out>.lock`.
fn lock_path(out: &Path) -> PathBuf {
    let mut name = out.as_os_str().to_owned();
    name.push(".lock");
    PathBuf::from(name)
}

/// Tell on stderr how many members of the result file `out` failed and
/// why the first did.
fn report_failures(outcomes: &sweep::Outcomes, out: &Path) {
    let Some(first) = &outcomes.first_failure else {
        return;
    };
    let values: Vec<String> = first
        .values
        .iter()
        .map(|(name, value)| format!("{name} = {value}"))
        .collect();
    let why = format!(
        "the first, member {} ({}), failed: {}",
        first.index,
        values.join(", "),
        first.error
    );
    if outcomes.all_failed() {
        eprintln!(
            "sweep: every member failed ({} of {}); {why}\n\
             sweep: no result; {} is kept (it is data: each row holds its member's error)",
            outcomes.failed,
            outcomes.members,
            out.display()
        );
    } else {
        eprintln!(
            "sweep: {} of {} members failed; {why}",
            outcomes.failed, outcomes.members
        );
    }
}

/// An error about the result file, as the engine words it.
fn result_file_error(out: &Path, message: String) -> InputError {
    InputError::DataFile {
        file: out.display().to_string(),
        location: None,
        message,
    }
}

/// Run (or resume) the members of `shard` not yet in the result file
/// `out` on `threads` workers, each with its own copy of the scenario
/// `script`. Rows are appended in member order as they complete, so an
/// interrupted run resumes where it stopped (the engine's
/// `sweep::completed_members` drops a partly written last row). Returns
/// the number of members run now.
fn run_members(
    spec: &SweepSpec,
    duration_h: f64,
    out: &Path,
    shard: Shard,
    threads: usize,
    script: &Path,
    member_done: &(dyn Fn() + Sync),
) -> Result<usize> {
    let header = sweep::result_header(spec, duration_h);
    let done: HashSet<usize> = if out.exists() {
        sweep::completed_members(out, &header)?
            .into_iter()
            .collect()
    } else {
        std::fs::write(out, format!("{}\n", header.join(",")))
            .map_err(|e| result_file_error(out, e.to_string()))?;
        HashSet::new()
    };
    let todo: Vec<usize> = (0..spec.member_count())
        .filter(|i| shard.contains(*i) && !done.contains(i))
        .collect();
    if todo.is_empty() {
        return Ok(0);
    }
    let mut file = std::fs::OpenOptions::new()
        .append(true)
        .open(out)
        .map_err(|e| result_file_error(out, e.to_string()))?;
    pool::run_ordered(
        &todo,
        threads,
        || {
            Scenario::load(script)
                .map(|scenario| ScenarioRunner {
                    scenario,
                    rtol: spec.rtol,
                })
                .map_err(|e| e.to_string())
        },
        |runner, _, &i| {
            let row = sweep::member_row(spec, i, duration_h, runner);
            member_done();
            row + "\n"
        },
        |_, row| {
            file.write_all(row.as_bytes())
                .and_then(|()| file.flush())
                .map_err(|e| e.to_string())
        },
    )
    .map_err(|e| result_file_error(out, e))?;
    Ok(todo.len())
}

/// Run `tidewater merge`.
pub fn merge_command(args: MergeOptions) -> Result<()> {
    let inputs: Vec<&Path> = args.inputs.iter().map(|p| p.as_path()).collect();
    // The merged file is written under the same lock as a sweep's; a shard
    // a sweep is still writing (its lock held) is refused, not half read.
    let _lock = lock_output(&args.out)?;
    for input in &inputs {
        if lock_path(input).exists() {
            let held = lock_output(input).map_err(|_| {
                anyhow::anyhow!(
                    "{}: a tidewater sweep is still writing this shard; merge it when the sweep has ended",
                    input.display()
                )
            })?;
            drop(held);
        }
    }
    let n = sweep::merge(&inputs, &args.out)?;
    eprintln!("merge: {n} members -> {}", args.out.display());
    if let Some(spec_path) = &args.spec {
        // The scenario names the guideline set whose rules the rows count.
        let (spec, _, scenario) = load_spec(spec_path)?;
        write_summary(&spec, &args.out, &scenario.plan().limits)?;
    }
    Ok(())
}

/// Summarise the result file `results`: write the summary and its charts
/// beside it, and print the summary as tables on stdout.
fn write_summary(spec: &SweepSpec, results: &Path, limits: &LimitChoice) -> Result<()> {
    let report = SweepReport::read(spec, results, limits)?;
    let path = report.write(results)?;
    let summary = &report.summary;
    println!("Caution: {}", tidewater::CAUTION);
    println!("members\tfailed\tP(limit crossed)\tP(caution crossed)");
    println!(
        "{}\t{}\t{:.3}\t{:.3}",
        summary.members, summary.failed, summary.p_limit, summary.p_caution
    );
    println!(
        "limit of {}{}\tP(crossed)",
        limits.guideline.id,
        if limits.high_risk { " (high risk)" } else { "" }
    );
    for share in &report.by_rule {
        let r = &share.rule;
        let change = match r.direction {
            Direction::Rise => "rise",
            Direction::Fall => "fall",
        };
        let severity = match r.severity {
            Severity::Limit => "limit",
            Severity::Caution => "caution",
        };
        println!(
            "{}. {} ({change} <= {} mmol/L in {} h, {severity})\t{:.3}",
            share.number, r.label, r.max_mmol_l, r.window_h, share.probability
        );
    }
    println!("parameter\trank correlation with the largest 24 h rise");
    for (n, r) in &summary.sensitivity {
        println!("{n}\t{r:+.3}");
    }
    if !summary.sensitivity_by_output.is_empty() {
        // Every kept output: which parameters drive what.
        let outputs: Vec<&str> = summary
            .sensitivity_by_output
            .iter()
            .map(|(o, _)| o.as_str())
            .collect();
        println!("rank correlation with each kept output");
        println!("parameter\t{}", outputs.join("\t"));
        for (j, name) in report.parameters.iter().enumerate() {
            let cells: Vec<String> = summary
                .sensitivity_by_output
                .iter()
                .map(|(_, by)| format!("{:+.3}", by[j].1))
                .collect();
            println!("{name}\t{}", cells.join("\t"));
        }
    }
    eprintln!("summary: {} (and charts beside it)", path.display());
    Ok(())
}
