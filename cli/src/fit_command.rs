//! `tidewater fit`: learn the patient from measured labs and forecast,
//! writing the fit's files into one folder (swapped in whole, so a failed
//! fit leaves nothing half-written).

use crate::cli::FitArgs;
use crate::output::fit::{FitJson, FitPage, FitReport, ForecastCsv};
use crate::output::{self, Output, Placement};
use anyhow::{anyhow, Context, Result};
use std::path::PathBuf;
use tidewater::fit::{self, FitModel};
use tidewater::observations::Observations;
use tidewater::scenario::Scenario;
use tidewater::sweep::SweepSpec;

/// Run `fit`.
pub fn fit_command(args: FitArgs) -> Result<()> {
    let scenario = Scenario::load(&args.script).map_err(|e| anyhow!("{e}"))?;
    let observations = Observations::load(&args.observed).map_err(|e| anyhow!("{e}"))?;
    let unknowns = match &args.vary {
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
    let forecast = fit::forecast(&model, &result, args.draws as usize, args.seed)
        .map_err(|e| anyhow!("{e}"))?;
    let out = args.out.clone().unwrap_or_else(|| {
        let stem = args
            .script
            .file_stem()
            .map_or("scenario".into(), |s| s.to_string_lossy().into_owned());
        PathBuf::from("runs").join(format!("{stem}-fit"))
    });
    let report = FitReport {
        title: scenario.title().to_string(),
        script: args.script.display().to_string(),
        observed: args.observed.display().to_string(),
        guideline: scenario.plan().limits.guideline.id.clone(),
        fit: result,
        forecast,
        observations,
    };
    let outputs: [&dyn Output<FitReport>; 3] = [&ForecastCsv, &FitJson, &FitPage];
    output::write(&report, &outputs, &out, Placement::Folder)?;
    if args.quiet {
        println!("{}", out.display());
        return Ok(());
    }
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
    println!("written: {}", out.display());
    println!("\n{}", tidewater::CAUTION);
    Ok(())
}
