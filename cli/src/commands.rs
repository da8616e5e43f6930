//! The commands other than `run`: `fluids`, `patient`, `render-reports`,
//! `demo`, `bench`, `params`, `completions`.

use crate::cli::{FluidsArgs, PatientArgs, RenderArgs};
use crate::format::{fixed, sig};
use crate::input::{self, patient_rows, RunInput};
use crate::options::Style;
use crate::report::{write_report, Report};
use anyhow::{Context, Result};
use serde_json::json;
use std::path::{Path, PathBuf};
use std::time::Instant;
use tidewater::patient::patient_from_yaml;
use tidewater::{reference, FluidLibrary, Patient, Plan, Simulation, Species, CAUTION, PARAMETERS};

/// Print rows as aligned columns.
pub fn table(header: &[&str], rows: &[Vec<String>]) -> String {
    let mut widths: Vec<usize> = header.iter().map(|h| h.chars().count()).collect();
    for r in rows {
        for (w, cell) in widths.iter_mut().zip(r) {
            *w = (*w).max(cell.chars().count());
        }
    }
    let line = |cells: Vec<&str>| {
        let mut s = String::new();
        for (i, (cell, w)) in cells.iter().zip(&widths).enumerate() {
            if i + 1 == cells.len() {
                s.push_str(cell);
            } else {
                s.push_str(&format!("{cell:<w$}  "));
            }
        }
        s.trim_end().to_string() + "\n"
    };
    let mut out = line(header.to_vec());
    for r in rows {
        out.push_str(&line(r.iter().map(String::as_str).collect()));
    }
    out
}

/// `tidewater fluids`.
pub fn fluids(args: FluidsArgs) -> Result<()> {
    let mut lib = FluidLibrary::bundled();
    if let Some(path) = &args.file {
        let text =
            std::fs::read_to_string(path).with_context(|| format!("reading {}", path.display()))?;
        lib.extend(FluidLibrary::from_yaml(&text, &path.display().to_string())?);
    }
    if args.json {
        let list: Vec<_> = lib
            .fluids
            .iter()
            .map(|f| {
                let mut v = serde_json::to_value(f).unwrap_or_default();
                v["osmolarity_mosm_l"] = json!(crate::format::round_sig(f.osmolarity(), 6));
                v
            })
            .collect();
        println!(
            "{}",
            serde_json::to_string_pretty(&json!({ "fluids": list }))?
        );
        return Ok(());
    }
    let header = [
        "id",
        "kind",
        "na",
        "k",
        "cl",
        "buffer",
        "ca",
        "mg",
        "glucose",
        "urea",
        "albumin_g_l",
        "osm_mosm_l",
        "name",
    ];
    let rows: Vec<Vec<String>> = lib
        .fluids
        .iter()
        .map(|f| {
            vec![
                f.id.clone(),
                format!("{:?}", f.kind).to_lowercase(),
                sig(f.na, 4),
                sig(f.k, 4),
                sig(f.cl, 4),
                sig(f.buffer, 4),
                sig(f.calcium, 4),
                sig(f.magnesium, 4),
                sig(f.glucose, 4),
                sig(f.urea, 4),
                sig(f.albumin_g_l, 4),
                fixed(f.osmolarity(), 0),
                f.name.clone(),
            ]
        })
        .collect();
    print!("{}", table(&header, &rows));
    eprintln!("concentrations in mmol/L of solution (albumin in g/L); osm: effective osmolarity 2(Na+K)+glucose+urea");
    Ok(())
}

/// The patient described by `patient` options.
pub fn patient_from_args(args: &PatientArgs) -> Result<Patient> {
    if let Some(path) = &args.file {
        let text =
            std::fs::read_to_string(path).with_context(|| format!("reading {}", path.display()))?;
        return Ok(patient_from_yaml(&text, &path.display().to_string())?);
    }
    let (Some(sex), Some(age), Some(weight)) = (&args.sex, args.age, args.weight) else {
        anyhow::bail!("--sex, --age and --weight are required without --file");
    };
    Ok(Patient {
        height_cm: args.height,
        na: args.na,
        k: args.k,
        glucose_mmol_l: args.glucose,
        urea_mmol_l: args.urea,
        albumin_g_l: args.albumin,
        hematocrit: args.hematocrit,
        onset: args.onset.clone(),
        cause: args.cause.clone(),
        water_method: args.water_method.clone(),
        ..Patient::healthy(sex, age, weight)
    })
}

/// `tidewater patient`.
pub fn patient(args: PatientArgs) -> Result<()> {
    let p = patient_from_args(&args)?;
    let source = args
        .file
        .as_ref()
        .map(|f| format!("{}: ", f.display()))
        .unwrap_or_default();
    let sim = Simulation::new(Plan::new(p)).with_context(|| format!("{source}invalid patient"))?;
    let cal = &sim.model().calibration;
    let y = &sim.initial().y;
    let obs = sim.model().observe(y, &tidewater::Inputs::default());
    if args.json {
        let contents: serde_json::Map<String, serde_json::Value> = Species::ALL
            .iter()
            .map(|sp| {
                (
                    format!("{}_{}", sp.name(), sp.unit().to_lowercase()),
                    json!(crate::format::round_sig(sp.content(y), 7)),
                )
            })
            .collect();
        let r = |x: f64| crate::format::round_sig(x, 7);
        let value = json!({
            "patient": sim.patient(),
            "volumes_l": {
                "total_water": r(obs.total_water_l),
                "tissue_cells": r(obs.cells_l),
                "red_cells": r(obs.red_cells_l),
                "brain_cells": r(obs.brain_l),
                "interstitium": r(obs.interstitium_l),
                "plasma": r(obs.plasma_l),
                "blood": r(obs.blood_volume_l),
            },
            "contents": contents,
            "labs": {
                "osmolality_mosm_kg": r(obs.osmolality_mosm_kg),
                "tonicity_mosm_kg": r(obs.tonicity_mosm_kg),
                "hematocrit": r(obs.hematocrit),
            },
            "calibration": cal,
            "caution": CAUTION,
        });
        println!("{}", serde_json::to_string_pretty(&value)?);
        return Ok(());
    }
    let mut rows: Vec<Vec<String>> = patient_rows(&sim)
        .into_iter()
        .map(|r| vec![r.label, r.value])
        .collect();
    rows.push(vec![
        "Glomerular filtration (calibrated)".into(),
        format!("{} mL/min", fixed(cal.gfr_l_h * 1000.0 / 60.0, 0)),
    ]);
    rows.push(vec![
        "Urine osmolality range".into(),
        format!(
            "{}–{} mOsm/kg",
            fixed(cal.urine_osm_min, 0),
            fixed(cal.urine_osm_max, 0)
        ),
    ]);
    print!("{}", table(&["quantity", "value"], &rows));
    Ok(())
}

/// Run and write the reports of the demonstration case and every `*.rhai`
/// script in `args.scenarios`. Returns whether every expectation held.
pub fn render_reports(args: RenderArgs, style: Style) -> Result<bool> {
    let mut scripts: Vec<PathBuf> = Vec::new();
    if args.scenarios.exists() {
        for entry in std::fs::read_dir(&args.scenarios)
            .with_context(|| format!("reading {}", args.scenarios.display()))?
        {
            let path = entry?.path();
            if path.extension().is_some_and(|e| e == "rhai") {
                scripts.push(path);
            }
        }
    } else {
        anyhow::bail!("{}: no such folder", args.scenarios.display());
    }
    scripts.sort();
    let bar = crate::progress::bar(scripts.len() as u64 + 1, "rendering", style);
    let mut all_hold = true;
    let mut failures: Vec<String> = Vec::new();
    let mut jobs: Vec<(String, Option<PathBuf>)> = vec![("demo".into(), None)];
    for s in scripts {
        let name = input::slug(&s.file_stem().unwrap_or_default().to_string_lossy());
        jobs.push((name, Some(s)));
    }
    for (name, script) in jobs {
        bar.set_message(name.clone());
        let result = (|| -> Result<bool> {
            let run: RunInput = match &script {
                None => input::demo_input()?,
                Some(path) => input::load_script(path)?,
            };
            let report = Report::new(&run)?;
            write_report(&report, &args.reports.join(&name))?;
            Ok(run.all_expectations_hold())
        })();
        match result {
            Ok(hold) => {
                all_hold &= hold;
                bar.suspend(|| {
                    eprintln!(
                        "{} {}",
                        if hold {
                            style.good("rendered")
                        } else {
                            style.warn("rendered, expectation failed:")
                        },
                        args.reports.join(&name).display()
                    )
                });
            }
            Err(e) => {
                bar.suspend(|| eprintln!("{} {name}: {e:#}", style.bad("error:")));
                failures.push(name);
            }
        }
        bar.inc(1);
    }
    bar.finish_and_clear();
    if !failures.is_empty() {
        anyhow::bail!(
            "{} report(s) failed: {}",
            failures.len(),
            failures.join(", ")
        );
    }
    Ok(all_hold)
}

/// `tidewater demo`: sodium every 4 h on stdout.
pub fn demo() -> Result<()> {
    let sim = Simulation::new(reference::benchmark_plan())?;
    let traj = sim.run()?;
    eprintln!("Caution: {CAUTION}");
    println!(
        "time_h\tna_mmol_l\tna_change_24h\turine_ml_h\turine_osm\tplasma_l\tbrain_volume_index"
    );
    for (s, c24) in traj.samples.iter().zip(traj.na_change_24h.iter()) {
        if (s.time_h / 4.0 - (s.time_h / 4.0).round()).abs() < 1e-9 {
            let o = &s.obs;
            println!(
                "{:.1}\t{:.1}\t{:+.1}\t{:.0}\t{:.0}\t{:.2}\t{:.3}",
                s.time_h,
                o.na_mmol_l,
                c24,
                o.urine_ml_h,
                o.urine_osm_mosm_kg,
                o.plasma_l,
                o.brain_volume_index
            );
        }
    }
    for f in &traj.flags {
        eprintln!(
            "flag: {} ({}: at most {} mmol/L per {} h) crossed at {:.1} h; worst {:.1} mmol/L at {:.1} h",
            traj.limits.guideline.id, f.rule.label, f.rule.max_mmol_l, f.rule.window_h, f.time_h, f.worst_change_mmol_l, f.worst_time_h
        );
    }
    Ok(())
}

/// `tidewater bench`.
pub fn bench(runs: usize, style: Style) -> Result<()> {
    let runs = runs.max(1);
    let sim = Simulation::new(reference::benchmark_plan())?;
    let first = sim.run()?;
    let mut times: Vec<f64> = Vec::with_capacity(runs);
    let bar = crate::progress::bar(runs as u64, "timing", style);
    for _ in 0..runs {
        let start = Instant::now();
        let traj = sim.run()?;
        times.push(start.elapsed().as_secs_f64());
        std::hint::black_box(traj);
        bar.inc(1);
    }
    bar.finish_and_clear();
    times.sort_by(f64::total_cmp);
    let s = first.stats;
    println!(
        "reference 48 h run: median {:.1} us over {runs} runs",
        times[runs / 2] * 1e6
    );
    println!(
        "steps {}  rhs calls {}  jacobian products {}  jacobian evaluations {}  restarts {}  rejected steps {}",
        s.steps, s.rhs_calls, s.jacobian_products, s.jacobian_evaluations, s.restarts, s.error_test_failures
    );
    Ok(())
}

/// `tidewater params`.
pub fn params() {
    println!("name\tunit\tdefault\tmin\tmax\tsource");
    for p in PARAMETERS {
        println!(
            "{}\t{}\t{}\t{}\t{}\t{}",
            p.name, p.unit, p.default, p.min, p.max, p.source
        );
    }
}

/// Whether `path` names a folder we may replace.
pub fn check_out_dir(path: &Path) -> Result<()> {
    if path.exists() && !path.is_dir() {
        anyhow::bail!("{}: exists and is not a folder", path.display());
    }
    Ok(())
}
