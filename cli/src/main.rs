//! `tidewater`: the command line of the Tidewater water and sodium simulator.
//!
//! Presentation lives here (tables, files, progress); everything that
//! computes lives in the `tidewater` engine crate.

use anyhow::Result;
use clap::{Parser, Subcommand};
use std::process::ExitCode;
use std::time::Instant;
use tidewater::{reference, FluidLibrary, Simulation, CAUTION, PARAMETERS};

/// Whole-body water and sodium simulator.
#[derive(Parser, Debug)]
#[command(name = "tidewater", bin_name = "tidewater", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Run the built-in demonstration case (an invented patient with chronic
    /// hyponatremia given three 3 % saline boluses, then isotonic saline)
    /// and print serum sodium every 4 h.
    Demo,
    /// Time the reference 48 h run: median over repeated runs, with solver
    /// step and right-hand-side counts.
    Bench {
        /// Number of timed runs.
        #[arg(long, default_value_t = 200)]
        runs: usize,
    },
    /// List every model parameter with unit, default and source.
    Params,
    /// List the bundled fluid library.
    Fluids,
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}

fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Demo => demo(),
        Command::Bench { runs } => bench(runs),
        Command::Params => {
            println!("name\tunit\tdefault\tmin\tmax\tsource");
            for p in PARAMETERS {
                println!(
                    "{}\t{}\t{}\t{}\t{}\t{}",
                    p.name, p.unit, p.default, p.min, p.max, p.source
                );
            }
            Ok(())
        }
        Command::Fluids => {
            println!("id\tkind\tNa\tK\tCl\tglucose\talbumin_g_l\tname");
            for f in FluidLibrary::bundled().fluids {
                println!(
                    "{}\t{:?}\t{}\t{}\t{}\t{}\t{}\t{}",
                    f.id, f.kind, f.na, f.k, f.cl, f.glucose, f.albumin_g_l, f.name
                );
            }
            Ok(())
        }
    }
}

fn demo() -> Result<()> {
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

fn bench(runs: usize) -> Result<()> {
    let runs = runs.max(1);
    let sim = Simulation::new(reference::benchmark_plan())?;
    let first = sim.run()?;
    let mut times: Vec<f64> = Vec::with_capacity(runs);
    for _ in 0..runs {
        let start = Instant::now();
        let traj = sim.run()?;
        times.push(start.elapsed().as_secs_f64());
        std::hint::black_box(traj);
    }
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
