//! Export plans for the independent cross-check in `tests/reference/`.
//!
//! For every plan this writes into OUTDIR:
//! * `<name>.dump.json`: the model dump (`tidewater::dump::to_json`);
//! * `<name>.samples.csv`: the engine's samples, every observation at full
//!   precision, plus the trailing 24-h sodium change;
//! * `<name>.timing.json`: the engine's run time (median of repeated runs of
//!   `Simulation::run`, after one warm-up run; with `--repeat 0` the time of
//!   that single run) and the solver statistics.
//!
//! ```text
//! cargo run --release -p tidewater-engine --example crosscheck_export -- \
//!     [--rtol 1e-8] [--plan NAME]... [--repeat N] OUTDIR
//! ```
//!
//! The patients are invented. Caution: Tidewater is a simulation for
//! planning and teaching, not a medical device.

use tidewater::{Cause, Onset, Sex};

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

use tidewater::reference::benchmark_plan;
use tidewater::{FluidLibrary, Patient, Plan, Route, Simulation, Stream, Trajectory};

type BoxError = Box<dyn std::error::Error>;

/// The plans of the cross-check, by name. Each has a different character:
/// kidneys on or off, drugs, thirst, blood loss, colloids.
const PLAN_NAMES: [&str; 5] = [
    "reference",
    "closed_hypertonic",
    "antidiuresis_drugs",
    "elderly_hypernatremia",
    "bleed_albumin",
];

fn build_plan(name: &str) -> Result<Plan, BoxError> {
    let fluids = FluidLibrary::bundled();
    let plan = match name {
        // The benchmark case: chronic hypovolemic hyponatremia, three 3 %
        // saline boluses then isotonic saline, checks every 2 h.
        "reference" => benchmark_plan(),
        // A closed system (no kidneys, no insensible loss, no metabolic
        // water, no intake): 3 % saline into an acutely hyponatremic woman.
        "closed_hypertonic" => {
            let patient = Patient {
                na: Some(124.0),
                onset: Some(Onset::Acute),
                ..Patient::healthy(Sex::Female, 41.0, 68.0)
            };
            Plan::new(patient)
                .closed_system()
                .run_for(12.0)
                .start(0.5, Stream::give(fluids.get("saline_3")?, 0.5, 4.0)?)
        }
        // Chronic inappropriate antidiuresis given isotonic saline, a loop
        // diuretic, and later a desmopressin dose (clamp).
        "antidiuresis_drugs" => {
            let patient = Patient {
                na: Some(121.0),
                k: Some(3.6),
                onset: Some(Onset::Chronic),
                cause: Some(Cause::InappropriateAntidiuresis),
                ..Patient::healthy(Sex::Male, 67.0, 74.0)
            };
            let params = tidewater::Params::default();
            Plan::new(patient)
                .run_for(36.0)
                .start(0.0, Stream::give(fluids.get("saline_0_9")?, 1.0, 8.0)?)
                .start(
                    2.0,
                    Stream::loop_diuretic(40.0, Route::Intravenous, &params)?,
                )
                .start(
                    10.0,
                    Stream::desmopressin(2.0, Route::parse("iv")?, &params)?,
                )
                .start(
                    20.0,
                    Stream::desmopressin(10.0, Route::parse("nasal")?, &params)?,
                )
        }
        // Chronic hypernatremia in an elderly man who drinks when thirsty:
        // 5 % dextrose and oral water.
        "elderly_hypernatremia" => {
            let patient = Patient {
                na: Some(157.0),
                glucose_mmol_l: Some(6.5),
                urea_mmol_l: Some(11.0),
                onset: Some(Onset::Chronic),
                cause: Some(Cause::InadequateWaterIntake),
                ..Patient::healthy(Sex::Male, 84.0, 61.0)
            };
            Plan::new(patient)
                .set_param("thirst_enabled", 1.0)?
                .run_for(36.0)
                .start(0.0, Stream::give(fluids.get("dextrose_5")?, 2.0, 16.0)?)
                .start(3.0, Stream::drink(fluids.get("water")?, 0.4, 1.0)?)
                .start(12.0, Stream::drink(fluids.get("water")?, 0.3, 0.5)?)
        }
        // A healthy man bleeds 1.3 L over an hour, receives 5 % then 20 %
        // albumin and potassium tablets.
        "bleed_albumin" => {
            let patient = Patient {
                hematocrit: Some(0.44),
                ..Patient::healthy(Sex::Male, 45.0, 80.0)
            };
            Plan::new(patient)
                .run_for(24.0)
                .start(0.5, Stream::bleed(1.3, 1.0)?)
                .start(1.5, Stream::give(fluids.get("albumin_5")?, 0.5, 1.0)?)
                .start(3.0, Stream::give(fluids.get("albumin_20")?, 0.1, 0.5)?)
                .start(6.0, Stream::tablets(30.0, 20.0, 0.0)?)
        }
        other => {
            return Err(format!("unknown plan '{other}' (known: {})", PLAN_NAMES.join(", ")).into())
        }
    };
    Ok(plan)
}

/// The samples as CSV: time, every observation (in the order serde gives),
/// and the trailing 24-h sodium change.
fn samples_csv(run: &Trajectory) -> Result<String, BoxError> {
    let mut out = String::new();
    let mut names: Vec<String> = Vec::new();
    for (k, sample) in run.samples.iter().enumerate() {
        let value = serde_json::to_value(sample.obs)?;
        let map = value
            .as_object()
            .ok_or("an observation did not serialise as a map")?;
        if k == 0 {
            names = map.keys().cloned().collect();
            out.push_str("time_h");
            for n in &names {
                write!(out, ",{n}")?;
            }
            out.push_str(",na_change_24h_mmol_l\n");
        }
        write!(out, "{:.17e}", sample.time_h)?;
        for n in &names {
            let v = map
                .get(n)
                .and_then(|v| v.as_f64())
                .ok_or_else(|| format!("observation field {n} is not a number"))?;
            write!(out, ",{v:.17e}")?;
        }
        writeln!(out, ",{:.17e}", run.na_change_24h[k])?;
    }
    Ok(out)
}

fn write_atomic(path: &Path, text: &str) -> Result<(), BoxError> {
    let tmp = path.with_extension("part");
    std::fs::write(&tmp, text).map_err(|e| format!("cannot write {}: {e}", tmp.display()))?;
    std::fs::rename(&tmp, path).map_err(|e| format!("cannot write {}: {e}", path.display()))?;
    Ok(())
}

fn export(name: &str, rtol: f64, repeat: usize, outdir: &Path) -> Result<(), BoxError> {
    let mut plan = build_plan(name)?;
    plan.tolerances.rtol = rtol;
    let sim = Simulation::new(plan).map_err(|e| format!("plan {name}: {e}"))?;
    let start = Instant::now();
    let run = sim.run().map_err(|e| format!("plan {name}: {e}"))?;
    let first_s = start.elapsed().as_secs_f64();
    let mut times: Vec<f64> = Vec::with_capacity(repeat.max(1));
    for _ in 0..repeat {
        let start = Instant::now();
        let again = sim.run().map_err(|e| format!("plan {name}: {e}"))?;
        times.push(start.elapsed().as_secs_f64());
        std::hint::black_box(again);
    }
    if times.is_empty() {
        // No repeats: the first run (which includes cold caches) is all.
        times.push(first_s);
    }
    times.sort_by(f64::total_cmp);
    let median = if times.len() % 2 == 1 {
        times[times.len() / 2]
    } else {
        0.5 * (times[times.len() / 2 - 1] + times[times.len() / 2])
    };
    let timing = serde_json::json!({
        "plan": name,
        "rtol": sim.plan().tolerances.rtol,
        "atol_fraction": sim.plan().tolerances.atol_fraction,
        "repeats": repeat,
        "first_run_s": first_s,
        "run_median_s": median,
        "run_min_s": times[0],
        "samples": run.samples.len(),
        "max_balance_residual": run.max_balance_residual(),
        "stats": run.stats,
    });
    write_atomic(
        &outdir.join(format!("{name}.dump.json")),
        &tidewater::dump::to_json(&sim),
    )?;
    write_atomic(
        &outdir.join(format!("{name}.samples.csv")),
        &samples_csv(&run)?,
    )?;
    write_atomic(
        &outdir.join(format!("{name}.timing.json")),
        &serde_json::to_string_pretty(&timing)?,
    )?;
    println!(
        "{name}: {} samples, {} steps, engine run {:.3} ms (median of {})",
        run.samples.len(),
        run.stats.steps,
        median * 1e3,
        times.len()
    );
    Ok(())
}

fn usage() -> String {
    format!(
        "usage: crosscheck_export [--rtol R] [--plan NAME]... [--repeat N] OUTDIR\n\
         plans: {}",
        PLAN_NAMES.join(", ")
    )
}

fn main() -> ExitCode {
    match real_main() {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("crosscheck_export: {e}");
            ExitCode::FAILURE
        }
    }
}

fn real_main() -> Result<(), BoxError> {
    let mut rtol = 1e-8;
    let mut repeat = 7usize;
    let mut plans: Vec<String> = Vec::new();
    let mut outdir: Option<PathBuf> = None;
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        let mut value = |flag: &str| {
            args.next()
                .ok_or_else(|| format!("{flag} needs a value\n{}", usage()))
        };
        match arg.as_str() {
            "--rtol" => {
                let v = value("--rtol")?;
                rtol = v
                    .parse()
                    .map_err(|_| format!("--rtol: '{v}' is not a number"))?;
                if !(rtol > 0.0 && rtol < 1.0) {
                    return Err(format!("--rtol: {rtol} is outside (0, 1)").into());
                }
            }
            "--repeat" => {
                let v = value("--repeat")?;
                repeat = v
                    .parse()
                    .map_err(|_| format!("--repeat: '{v}' is not a whole number"))?;
            }
            "--plan" => {
                let v = value("--plan")?;
                if !PLAN_NAMES.contains(&v.as_str()) {
                    return Err(format!("--plan: unknown plan '{v}'\n{}", usage()).into());
                }
                plans.push(v);
            }
            "-h" | "--help" => {
                println!("{}", usage());
                return Ok(());
            }
            other if other.starts_with('-') => {
                return Err(format!("unknown option '{other}'\n{}", usage()).into())
            }
            other => {
                if outdir.replace(PathBuf::from(other)).is_some() {
                    return Err(format!("more than one OUTDIR given\n{}", usage()).into());
                }
            }
        }
    }
    let outdir = outdir.ok_or_else(usage)?;
    std::fs::create_dir_all(&outdir)
        .map_err(|e| format!("cannot create {}: {e}", outdir.display()))?;
    if plans.is_empty() {
        plans = PLAN_NAMES.iter().map(|s| s.to_string()).collect();
    }
    for name in &plans {
        export(name, rtol, repeat, &outdir)?;
    }
    Ok(())
}
