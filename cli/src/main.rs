//! `tidewater`: the command line of the Tidewater water and sodium simulator.
//!
//! Presentation lives here (tables, files, charts, progress); everything
//! that computes lives in the `tidewater` engine crate.
//!
//! * `cli.rs`: options as typed; `options.rs`: the settings used.
//! * `input.rs`: [`input::RunInput`], what every report is made from (the
//!   built-in case or a scenario script).
//! * `summary.rs`: the numbers a reader wants first.
//! * `report/`: one writer per format behind [`report::Exporter`].
//! * `check/`: scenarios as regression tests against stored baselines.
//! * `sweep_command.rs`: parameter sweeps and their summaries.

mod check;
mod cli;
mod commands;
mod format;
mod input;
mod options;
mod progress;
mod report;
mod summary;
mod sweep_command;
mod validate;

use anyhow::Result;
use clap::{CommandFactory, FromArgMatches};
use cli::{Cli, Command};
use options::{RunOptions, RunSource, Style};
use std::process::ExitCode;
use tidewater::CAUTION;

/// How a command ended, when it did not fail.
enum Outcome {
    /// Everything held.
    Ok,
    /// Finished, but an expectation failed or (under --strict) a limit was
    /// crossed.
    Failed,
}

fn main() -> ExitCode {
    // Output piped into `head` and the like ends quietly when the reader
    // goes away, as other command-line tools do, instead of a panic on the
    // next write (Rust ignores SIGPIPE by default).
    #[cfg(unix)]
    // SAFETY: restoring the default action of one signal at start-up,
    // before any thread is spawned.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
    let color = if options::no_color() {
        clap::ColorChoice::Never
    } else {
        clap::ColorChoice::Auto
    };
    let matches = Cli::command().color(color).get_matches();
    let cli = match Cli::from_arg_matches(&matches) {
        Ok(cli) => cli,
        Err(e) => e.exit(),
    };
    let style = Style::detect();
    match dispatch(cli, style) {
        Ok(Outcome::Ok) => ExitCode::SUCCESS,
        Ok(Outcome::Failed) => ExitCode::from(1),
        Err(e) => {
            eprintln!("{} {e:#}", style.bad("error:"));
            ExitCode::from(2)
        }
    }
}

fn dispatch(cli: Cli, style: Style) -> Result<Outcome> {
    match cli.command {
        Command::Run(args) => run(RunOptions::from_args(args), style),
        Command::RenderReports(args) => Ok(if commands::render_reports(args, style)? {
            Outcome::Ok
        } else {
            Outcome::Failed
        }),
        Command::Fluids(args) => commands::fluids(args).map(|_| Outcome::Ok),
        Command::Patient(args) => commands::patient(args).map(|_| Outcome::Ok),
        Command::Demo => commands::demo().map(|_| Outcome::Ok),
        Command::Bench { runs } => commands::bench(runs as usize, style).map(|_| Outcome::Ok),
        Command::Params => {
            commands::params();
            Ok(Outcome::Ok)
        }
        Command::Sweep(args) => sweep_command::sweep_command(args, style).map(|_| Outcome::Ok),
        Command::Check(args) => Ok(if check::check_command(args, style)? {
            Outcome::Ok
        } else {
            Outcome::Failed
        }),
        Command::Validate(args) => Ok(if validate::validate_command(args, style)? {
            Outcome::Ok
        } else {
            Outcome::Failed
        }),
        Command::Merge(args) => sweep_command::merge_command(args).map(|_| Outcome::Ok),
        Command::Dump { script } => {
            let scenario =
                tidewater::scenario::Scenario::load(&script).map_err(|e| anyhow::anyhow!("{e}"))?;
            let sim = tidewater::Simulation::new(scenario.plan().clone())?;
            println!("{}", tidewater::dump::to_json(&sim));
            Ok(Outcome::Ok)
        }
        Command::Completions { shell } => {
            clap_complete::generate(
                shell,
                &mut Cli::command(),
                "tidewater",
                &mut std::io::stdout(),
            );
            Ok(Outcome::Ok)
        }
    }
}

/// `tidewater run`: run, write the report, tell how it went.
fn run(opts: RunOptions, style: Style) -> Result<Outcome> {
    if let Some(out) = &opts.out {
        commands::check_out_dir(out)?;
    }
    let run = match &opts.source {
        RunSource::Demo => input::demo_input()?,
        RunSource::Script(path) => input::load_script(path)?,
    };
    let dir = opts.out_dir(&run.name);
    let report = report::Report::new(&run)?;
    report::write_report(&report, &dir)?;
    let s = &report.summary;
    if !opts.quiet {
        eprintln!("{}", style.warn(&format!("Caution: {CAUTION}")));
        eprintln!("{}", s.title);
        eprintln!(
            "serum sodium {} -> {} mmol/L (min {}, max {}); largest rise {} mmol/L in 24 h, {} mmol/L in 48 h",
            format::fixed(s.sodium.start.mmol_l, 1),
            format::fixed(s.sodium.end.mmol_l, 1),
            format::fixed(s.sodium.min.mmol_l, 1),
            format::fixed(s.sodium.max.mmol_l, 1),
            format::fixed(s.sodium.largest_rise_24h.mmol_l, 1),
            format::fixed(s.sodium.largest_rise_48h.mmol_l, 1),
        );
        for f in &s.flags {
            let text = format!(
                "flag ({}): {} ({} at most {} mmol/L per {} h) crossed at {} h; worst {} mmol/L at {} h",
                f.severity,
                f.rule,
                f.direction,
                f.max_mmol_l,
                f.window_h,
                format::sig(f.time_h, 4),
                format::fixed(f.worst_change_mmol_l, 1),
                format::sig(f.worst_time_h, 4)
            );
            eprintln!(
                "{}",
                if f.severity == "limit" {
                    style.bad(&text)
                } else {
                    style.warn(&text)
                }
            );
        }
        for e in &s.expectations {
            let mark = if e.passed {
                style.good("held  ")
            } else {
                style.bad("FAILED")
            };
            eprintln!("{mark} line {}: {} ({})", e.line, e.description, e.detail);
        }
        eprintln!("wrote {}", dir.display());
    }
    // The data product: where the report is.
    println!("{}", dir.join("report.html").display());
    let failed = !run.all_expectations_hold() || (opts.strict && s.limit_crossed());
    Ok(if failed { Outcome::Failed } else { Outcome::Ok })
}
