//! `tidewater validate`: run the validation dossier (published human data,
//! `tests/validation/`) and render its page, `index.html`, into a folder.
//!
//! The engine's [`tidewater::validation`] loads and runs the dossier; this
//! module prints the terminal summary and writes the page ([`page`]).

mod page;

use crate::options::Style;
use anyhow::{anyhow, Result};
use clap::Args;
use std::path::PathBuf;
use tidewater::validation::{Dossier, Status};
use tidewater::CAUTION;

/// Options of `validate`.
#[derive(Args, Debug)]
pub struct ValidateArgs {
    /// Dossier folder: checks.yaml and its scenarios/.
    #[arg(default_value = "tests/validation")]
    pub dossier: PathBuf,
    /// Output folder for index.html (replaced as a whole when the page is
    /// written; untouched on bad input).
    #[arg(
        long,
        short = 'o',
        value_name = "DIR",
        default_value = "reports/validation"
    )]
    pub out: PathBuf,
    /// Scenarios run in parallel.
    #[arg(long, default_value_t = 2, value_parser = clap::value_parser!(u64).range(1..=256))]
    pub threads: u64,
    /// Print nothing on stderr but errors and unexpected results.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

/// Run the dossier, write the page, print the summary. Returns whether
/// every check came out as the dossier expects.
pub fn validate_command(args: ValidateArgs, style: Style) -> Result<bool> {
    crate::commands::check_out_dir(&args.out)?;
    let dossier = Dossier::load(&args.dossier).map_err(|e| anyhow!("{e}"))?;
    let outcome = dossier.run(args.threads as usize);
    let html = page::render(&dossier, &outcome);
    let page = crate::output::OutputFile {
        format: "html",
        name: "index.html".into(),
        bytes: html.into_bytes(),
    };
    crate::output::place(&args.out, &[page], crate::output::Placement::Folder)?;
    let dest = args.out.clone();
    let file = dossier.file();
    if !args.quiet {
        eprintln!("{}", style.warn(&format!("Caution: {CAUTION}")));
    }
    for (check, result) in dossier.checks.iter().zip(&outcome.results) {
        let line = format!(
            "{:<17} {}",
            result.status.label(),
            result.message(check, &file)
        );
        match result.status {
            Status::Pass if !args.quiet => eprintln!("{}", style.good(&line)),
            Status::ExpectedFailure if !args.quiet => eprintln!("{}", style.warn(&line)),
            Status::Pass | Status::ExpectedFailure => {}
            _ => eprintln!("{}", style.bad(&line)),
        }
    }
    let unexpected = outcome.results.len() - outcome.as_expected();
    let summary = format!(
        "{} checks from {} published sources: {} pass, {} expected failures, {} unexpected",
        dossier.checks.len(),
        dossier.distinct_sources(),
        outcome.count(|s| *s == Status::Pass),
        outcome.count(|s| *s == Status::ExpectedFailure),
        unexpected
    );
    if unexpected > 0 {
        eprintln!("{}", style.bad(&summary));
    } else if !args.quiet {
        eprintln!("{}", style.good(&summary));
    }
    println!("{}", dest.join("index.html").display());
    Ok(unexpected == 0)
}
