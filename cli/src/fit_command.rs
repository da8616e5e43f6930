//! `tidewater fit`: learn the patient from measured labs and forecast,
//! writing the fit's files into one folder (swapped in whole, so a failed
//! fit leaves nothing half-written).

use crate::cli::FitArgs;
use crate::output::fit::{FitJson, FitPage, FitReport, ForecastCsv};
use crate::output::{self, Output, Placement};
use anyhow::{anyhow, Context, Result};
use std::path::{Path, PathBuf};
use tidewater::fit::{self, FitModel};
use tidewater::observations::Observations;
use tidewater::scenario::Scenario;
use tidewater::sweep::SweepSpec;

/// Run `fit`.
pub fn fit_command(args: FitArgs) -> Result<()> {
    let report = fit_report(
        &args.script,
        &args.observed,
        args.vary.as_deref(),
        args.draws as usize,
        args.seed,
    )?;
    let out = args.out.clone().unwrap_or_else(|| {
        let stem = args
            .script
            .file_stem()
            .map_or("scenario".into(), |s| s.to_string_lossy().into_owned());
        PathBuf::from("runs").join(format!("{stem}-fit"))
    });
    let outputs: [&dyn Output<FitReport>; 3] = [&ForecastCsv, &FitJson, &FitPage];
    output::write(&report, &outputs, &out, Placement::Folder)?;
    if args.quiet {
        println!("{}", out.display());
        return Ok(());
    }
    print_fit(&report);
    println!("written: {}", out.display());
    println!("\n{}", tidewater::CAUTION);
    Ok(())
}

/// Fit the script's unknowns (the defaults, or the parameters of the
/// `vary` spec) to the labs in `observed`, and forecast with `draws`.
pub fn fit_report(
    script: &Path,
    observed: &Path,
    vary: Option<&Path>,
    draws: usize,
    seed: u64,
) -> Result<FitReport> {
    let scenario = Scenario::load(script).map_err(|e| anyhow!("{e}"))?;
    let observations = Observations::load(observed).map_err(|e| anyhow!("{e}"))?;
    let unknowns = match vary {
        Some(path) => {
            let name = path.display().to_string();
            let text =
                tidewater::textfile::read_text(path).with_context(|| format!("--vary {name}"))?;
            let spec = SweepSpec::from_yaml(&text, &name).map_err(|e| anyhow!("{e}"))?;
            fit::unknowns::from_parameters(&spec.parameters, &name).map_err(|e| anyhow!("{e}"))?
        }
        None => fit::default_unknowns(scenario.plan()).map_err(|e| anyhow!("{e}"))?,
    };
    let model = FitModel::new(&scenario, &unknowns, &observations);
    let result = fit::fit(&model).map_err(|e| anyhow!("{e}"))?;
    let forecast = fit::forecast(&model, &result, draws, seed).map_err(|e| anyhow!("{e}"))?;
    Ok(FitReport {
        title: scenario.title().to_string(),
        script: script.display().to_string(),
        observed: observed.display().to_string(),
        guideline: scenario.plan().limits.guideline.id.clone(),
        fit: result,
        forecast,
        observations,
    })
}

/// What the fit learned and forecast, on stdout.
pub fn print_fit(report: &FitReport) {
    let c = &report.fit.convergence;
    println!("Fit: {}", report.title);
    println!(
        "  {} values from {}; rms scaled residual {:.2}; {} ({} runs)",
        report.fit.residuals.len(),
        report.observed,
        report.fit.rms_scaled_residual,
        if c.converged {
            "converged"
        } else {
            "NOT converged"
        },
        c.runs
    );
    for e in &report.fit.estimates {
        println!(
            "  {:<30} {:>9.3}  (90 % {:.3} to {:.3}; prior median {:.3})",
            e.name, e.value, e.p5, e.p95, e.prior_median
        );
    }
    println!(
        "Forecast over {} draws from the last observation at {} h:",
        report.forecast.draws, report.forecast.last_observation_h
    );
    for l in &report.forecast.limits {
        println!(
            "  P(\"{}\" crossed) {:.0} % (first after the last observation: {:.0} %)",
            l.label,
            100.0 * l.p_any_time,
            100.0 * l.p_in_forecast
        );
    }
}
