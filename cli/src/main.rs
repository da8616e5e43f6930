//! `tidewater`: the command line of the Tidewater water and sodium simulator.
//!
//! Presentation lives here (tables, files, charts, progress); everything
//! that computes lives in the `tidewater` engine crate.
//!
//! * `cli.rs`: every option as typed (clap); `options.rs`: the settings
//!   the commands use, converted once ([`options::Task::from_command`]).
//! * `commands.rs`, `sweep_command.rs`, `plan_command.rs`,
//!   `fit_command.rs`, `check/`: the
//!   commands.
//! * `input.rs`: [`input::RunInput`], what every report is made from (the
//!   built-in case or a scenario script); `scripts.rs`: finding scripts.
//! * `summary.rs`: the numbers a reader wants first.
//! * `output/`: every file a command writes, one format a module behind
//!   [`output::Output`], and the one writer that places them.
//! * `pool.rs`: the ordered worker pool of `check` and `sweep`;
//!   `progress.rs`: progress bars; `format.rs`: numbers as text.

mod check;
mod cli;
mod commands;
mod fit_command;
mod options;
mod output;
mod plan_command;
mod pool;
mod progress;
mod scripts;
mod sweep_command;
mod validate;

// What a report is made of lives in the library (`lib.rs`), shared with
// the Python package.
use tidewater_cli::{bedside_summary, format, input, summary};

use anyhow::Result;
use clap::{CommandFactory, FromArgMatches};
use cli::Cli;
use options::{Style, Task};
use std::process::ExitCode;

/// How a command ended, when it did not fail.
enum Outcome {
    /// Everything held.
    Ok,
    /// Finished, but an expectation failed, (under --strict) a limit was
    /// crossed, or every member of a sweep failed.
    Failed,
}

impl From<bool> for Outcome {
    /// `true`: everything held.
    fn from(held: bool) -> Outcome {
        if held {
            Outcome::Ok
        } else {
            Outcome::Failed
        }
    }
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
    match Task::from_command(cli.command).and_then(|task| dispatch(task, style)) {
        Ok(Outcome::Ok) => ExitCode::SUCCESS,
        Ok(Outcome::Failed) => ExitCode::from(1),
        Err(e) => {
            eprintln!(
                "{} {}",
                style.bad("error:"),
                format::terminal_safe(&format!("{e:#}"))
            );
            ExitCode::from(2)
        }
    }
}

fn dispatch(task: Task, style: Style) -> Result<Outcome> {
    let ok = |()| Outcome::Ok;
    match task {
        Task::Run(opts) => commands::run(opts, style).map(Outcome::from),
        Task::RenderReports(opts) => commands::render_reports(opts, style).map(Outcome::from),
        Task::Fluids(opts) => commands::fluids(opts).map(ok),
        Task::Patient(opts) => commands::patient(opts).map(ok),
        Task::Demo => commands::demo().map(ok),
        Task::Bench { runs } => commands::bench(runs, style).map(ok),
        Task::Params => {
            commands::params();
            Ok(Outcome::Ok)
        }
        Task::Sweep(opts) => sweep_command::sweep_command(opts, style).map(Outcome::from),
        Task::Merge(opts) => sweep_command::merge_command(opts).map(ok),
        Task::Check(opts) => check::check_command(opts, style).map(Outcome::from),
        Task::Validate(args) => validate::validate_command(args, style).map(Outcome::from),
        Task::Fit(args) => fit_command::fit_command(args).map(|()| Outcome::Ok),
        Task::Compare(args) => commands::compare(args).map(|()| Outcome::Ok),
        Task::Plan(args) => plan_command::plan_command(args, style).map(Outcome::from),
        Task::Dump { script } => commands::dump(&script).map(ok),
        Task::Completions { shell } => {
            commands::completions(shell);
            Ok(Outcome::Ok)
        }
    }
}
