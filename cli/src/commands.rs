//! The commands but `sweep`, `merge` (`sweep_command.rs`) and `check`
//! (`check/`): `run`, `render-reports`, `fluids`, `patient`, `demo`,
//! `bench`, `params`, `dump`, `completions`.

use crate::format::{fixed, sig, terminal_safe};
use crate::input::{self, patient_rows, RunInput};
use crate::options::{
    FluidsOptions, PatientOptions, PatientSource, RenderOptions, RunOptions, RunSource, Style,
};
use crate::output::report::Report;
use crate::scripts;
use anyhow::{Context, Result};
use serde_json::json;
use std::path::{Path, PathBuf};
use std::time::Instant;
use tidewater::patient_from_yaml;
use tidewater::{reference, FluidLibrary, Patient, Plan, Simulation, Species, CAUTION, PARAMETERS};

/// `tidewater run`: run, write the report, tell how it went. Returns
/// whether the run holds: every expectation held and, under `--strict`, no
/// guideline limit was crossed.
pub fn run(opts: RunOptions, style: Style) -> Result<bool> {
    if let Some(out) = &opts.out {
        check_out_dir(out)?;
    }
    let run = match &opts.source {
        RunSource::Demo => input::demo_input()?,
        RunSource::Script(path) => input::load_script(path)?,
    };
    let dir = opts.out_dir(&run.name);
    let mut report = Report::new(run)?;
    if let (Some(labs), RunSource::Script(path)) = (&opts.observed, &opts.source) {
        let fit = crate::fit_command::fit_report(path, labs, None, 200, 1)?;
        if !opts.quiet {
            crate::fit_command::print_fit(&fit);
        }
        report = report.with_fit(fit)?;
    }
    report.write(&dir)?;
    let s = &report.summary;
    if !opts.quiet {
        eprintln!("{}", style.warn(&format!("Caution: {CAUTION}")));
        eprintln!("{}", terminal_safe(&s.title));
        eprintln!(
            "serum sodium {} -> {} mmol/L (min {}, max {}); largest rise {} mmol/L in 24 h, {} mmol/L in 48 h",
            fixed(s.sodium.start.mmol_l, 1),
            fixed(s.sodium.end.mmol_l, 1),
            fixed(s.sodium.min.mmol_l, 1),
            fixed(s.sodium.max.mmol_l, 1),
            fixed(s.sodium.largest_rise_24h.mmol_l, 1),
            fixed(s.sodium.largest_rise_48h.mmol_l, 1),
        );
        for f in &s.flags {
            let text = format!(
                "flag ({}): {} ({} at most {} mmol/L per {} h) crossed at {} h; worst {} mmol/L at {} h",
                f.severity,
                f.rule,
                f.direction,
                f.max_mmol_l,
                f.window_h,
                sig(f.time_h, 4),
                fixed(f.worst_change_mmol_l, 1),
                sig(f.worst_time_h, 4)
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
        for g in &s.goals {
            let text = format!(
                "goal ({}): {} ({} at least {} mmol/L by {} h): change {} mmol/L at {} h{}",
                g.status.replace('_', " "),
                g.goal,
                g.direction,
                g.min_mmol_l,
                g.by_h,
                fixed(g.change_mmol_l, 1),
                sig(g.time_h, 4),
                match g.reached_h {
                    Some(t) if g.status != "met" => format!("; reached at {} h", sig(t, 4)),
                    _ => String::new(),
                }
            );
            eprintln!(
                "{}",
                match g.status.as_str() {
                    "met" => style.good(&text),
                    _ => style.warn(&text),
                }
            );
        }
        if let Some(b) = &s.below_start {
            eprintln!(
                "{}",
                style.warn(&format!(
                    "warning: serum sodium fell below its start of {} mmol/L at {} h; lowest {} mmol/L at {} h",
                    fixed(b.start_mmol_l, 1),
                    sig(b.first_time_h, 4),
                    fixed(b.lowest_mmol_l, 1),
                    sig(b.lowest_time_h, 4)
                ))
            );
        }
        // What each fluid gave in all (the habitual intake aside).
        for g in s.given.iter().filter(|g| g.stream != "habitual") {
            if g.volume_in_ml > 0.0 {
                eprintln!(
                    "given: {} mL of {} ({} mmol of sodium)",
                    fixed(g.volume_in_ml, 0),
                    terminal_safe(&g.stream),
                    fixed(g.na_in_mmol, 1)
                );
            } else if g.volume_out_ml > 0.0 {
                eprintln!(
                    "removed: {} mL by {} ({} mmol of sodium)",
                    fixed(g.volume_out_ml, 0),
                    terminal_safe(&g.stream),
                    fixed(g.na_out_mmol, 1)
                );
            }
        }
        if let Some(w) = &s.outside_model_range {
            eprintln!(
                "{}",
                style.bad(&format!(
                    "warning: {}",
                    crate::summary::outside_range_text(w)
                ))
            );
        }
        for e in &s.expectations {
            let mark = if e.passed {
                style.good("held  ")
            } else {
                style.bad("FAILED")
            };
            eprintln!(
                "{mark} line {}: {}",
                e.line,
                terminal_safe(&format!("{} ({})", e.description, e.detail))
            );
        }
        eprintln!("wrote {}", dir.display());
    }
    // The data product: where the report is.
    println!("{}", dir.join("report.html").display());
    Ok(report.input.all_expectations_hold() && !(opts.strict && s.limit_crossed()))
}

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
pub fn fluids(args: FluidsOptions) -> Result<()> {
    let mut lib = FluidLibrary::bundled();
    if let Some(path) = &args.file {
        let text = tidewater::textfile::read_text(path)
            .with_context(|| format!("reading {}", path.display()))?;
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
    print!("{}", terminal_safe(&table(&header, &rows)));
    eprintln!("concentrations in mmol/L of solution (albumin in g/L); osm: osmolarity 2(Na+K)+glucose+urea (urea crosses cell membranes freely, so it adds to osmolarity but not to tonicity)");
    Ok(())
}

/// `tidewater patient`.
pub fn patient(args: PatientOptions) -> Result<()> {
    let (p, source): (Patient, String) = match args.source {
        PatientSource::File(path) => {
            let text = tidewater::textfile::read_text(&path)
                .with_context(|| format!("reading {}", path.display()))?;
            (
                patient_from_yaml(&text, &path.display().to_string())?,
                format!("{}: ", path.display()),
            )
        }
        PatientSource::Flags(p) => (*p, String::new()),
    };
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
        format!("{} mL/min", fixed(cal.gfr_l_h() * 1000.0 / 60.0, 0)),
    ]);
    rows.push(vec![
        "Urine osmolality range".into(),
        format!(
            "{}–{} mOsm/kg",
            fixed(cal.urine_osm_range().0, 0),
            fixed(cal.urine_osm_range().1, 0)
        ),
    ]);
    print!("{}", table(&["quantity", "value"], &rows));
    Ok(())
}

/// Run and write the reports of the demonstration case and every scenario
/// script in `args.scenarios`. Returns whether every expectation held.
pub fn render_reports(args: RenderOptions, style: Style) -> Result<bool> {
    if !args.scenarios.exists() {
        anyhow::bail!("{}: no such folder", args.scenarios.display());
    }
    let scripts = scripts::in_folder(&args.scenarios)?;
    let mut jobs: Vec<(String, Option<PathBuf>)> = Vec::new();
    if args.demo {
        jobs.push(("demo".into(), None));
    }
    // Each report's folder is named after its script's file, as the user
    // named it (`acute_120.rhai` -> `acute_120/`).
    for s in scripts {
        jobs.push((scripts::stem(&s), Some(s)));
    }
    let bar = crate::progress::bar(jobs.len() as u64, "rendering", style);
    let mut all_hold = true;
    let mut failures: Vec<String> = Vec::new();
    for (name, script) in jobs {
        bar.set_message(name.clone());
        let result = (|| -> Result<bool> {
            let run: RunInput = match &script {
                None => input::demo_input()?,
                Some(path) => input::load_script(path)?,
            };
            let report = Report::new(run)?;
            report.write(&args.reports.join(&name))?;
            Ok(report.input.all_expectations_hold())
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
                bar.suspend(|| {
                    eprintln!(
                        "{} {name}: {}",
                        style.bad("error:"),
                        terminal_safe(&format!("{e:#}"))
                    )
                });
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

/// `tidewater bench`: `runs` (at least 1) timed runs.
pub fn bench(runs: usize, style: Style) -> Result<()> {
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

/// `tidewater dump`: the model dump of a scenario's plan, JSON on stdout.
pub fn dump(script: &Path) -> Result<()> {
    let scenario =
        tidewater::scenario::Scenario::load(script).map_err(|e| anyhow::anyhow!("{e}"))?;
    let sim = Simulation::new(scenario.plan().clone())?;
    println!("{}", tidewater::dump::to_json(&sim));
    Ok(())
}

/// `tidewater completions`: the completion script of `shell` on stdout.
pub fn completions(shell: clap_complete::Shell) {
    use clap::CommandFactory;
    clap_complete::generate(
        shell,
        &mut crate::cli::Cli::command(),
        "tidewater",
        &mut std::io::stdout(),
    );
}

/// Whether `path` names a folder we may replace.
pub fn check_out_dir(path: &Path) -> Result<()> {
    if path.exists() && !path.is_dir() {
        anyhow::bail!("{}: exists and is not a folder", path.display());
    }
    Ok(())
}

/// `tidewater compare`: run each script and write the side-by-side report.
pub fn compare(args: crate::cli::CompareArgs) -> Result<()> {
    use crate::output::compare::{check_count, Comparison};
    check_count(args.scripts.len())?;
    let mut inputs = Vec::with_capacity(args.scripts.len());
    for path in &args.scripts {
        inputs.push(input::load_script(path)?);
    }
    let comparison = Comparison::new(inputs)?;
    comparison.write(&args.out)?;
    if !args.quiet {
        eprintln!("Caution: {CAUTION}");
        for h in comparison.headlines() {
            eprintln!(
                "{}: serum sodium {} -> {} mmol/L; largest rise {} mmol/L in 24 h; brain-cell volume index {}-{}; {} limit{} crossed",
                terminal_safe(&h.scenario),
                fixed(h.na_start_mmol_l, 1),
                fixed(h.na_end_mmol_l, 1),
                fixed(h.largest_rise_24h_mmol_l, 1),
                fixed(h.brain_index_min, 3),
                fixed(h.brain_index_max, 3),
                h.limits_crossed,
                if h.limits_crossed == 1 { "" } else { "s" }
            );
        }
        eprintln!("wrote {}", args.out.join("report.html").display());
    }
    Ok(())
}
