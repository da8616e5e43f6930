//! Benchmark: what a scenario script costs over the same plan built in Rust.
//!
//! * Rust: `tidewater::reference::benchmark_plan()` (three 3 % boluses, then
//!   isotonic saline; checks every 2 h, no controller), 48 h.
//! * Rust, 15 min checks: the same plan checked every 15 min by a Rust
//!   controller doing the script rule's test (separates the cost of more
//!   frequent solver stops from the cost of the script).
//! * Script: the same case written as a scenario script with a rule every
//!   15 min.
//!
//! Run with `cargo bench -p tidewater-engine --bench scenario_overhead`.
//! Prints medians; it asserts nothing about time.

use std::path::Path;
use std::time::Instant;
use tidewater::reference::benchmark_plan;
use tidewater::scenario::Scenario;
use tidewater::{Action, Controller, Simulation, Snapshot};

const SCRIPT: &str = r#"
title("Reference case as a script");
patient(#{ sex: "female", age_years: 58, weight_kg: 62, na: 118, onset: "chronic", cause: "hypovolemic" });
run_for(hours(48));
for k in 0..3 {
    at(minutes(30) * k, infuse("saline_3", ml(150), minutes(20)));
}
at(hours(1.5), infuse("saline_0_9", litres(1), hours(12.5)));
every(minutes(15), |labs| {
    if labs.na_change_24h > 12 && labs.running("saline_0_9") {
        stop("saline_0_9");
    }
});
"#;

/// The script's rule, in Rust.
struct Guard;

impl Controller for Guard {
    fn check(&mut self, s: &Snapshot) -> Result<Vec<Action>, String> {
        if s.na_change_24h > 12.0 && s.running.iter().any(|r| r == "saline_0_9") {
            Ok(vec![Action::Stop("saline_0_9".into())])
        } else {
            Ok(vec![])
        }
    }
}

fn median_us(n: usize, mut f: impl FnMut()) -> f64 {
    let mut times: Vec<f64> = (0..n)
        .map(|_| {
            let start = Instant::now();
            f();
            start.elapsed().as_secs_f64()
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[n / 2] * 1e6
}

fn main() {
    let n = 100;
    let sim = Simulation::new(benchmark_plan()).expect("valid plan");
    let sim15 = Simulation::new(benchmark_plan().check_every(0.25)).expect("valid plan");
    let scenario = Scenario::from_source("reference.rhai", SCRIPT, Path::new(".")).expect("script");
    // Interleave the three so that load from other processes hits each alike.
    let (mut t_rust, mut t_rust15, mut t_script) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..n {
        t_rust.push(median_us(1, || {
            std::hint::black_box(sim.run().expect("run"));
        }));
        t_rust15.push(median_us(1, || {
            std::hint::black_box(sim15.run_with(&mut Guard).expect("run"));
        }));
        // A loaded scenario runs once: a second run reloads the script so
        // that rule variables start fresh. Load outside the timer.
        let fresh =
            Scenario::from_source("reference.rhai", SCRIPT, Path::new(".")).expect("script");
        t_script.push(median_us(1, || {
            std::hint::black_box(fresh.run().expect("run"));
        }));
    }
    let med = |mut v: Vec<f64>| {
        v.sort_by(f64::total_cmp);
        v[v.len() / 2]
    };
    let (rust, rust15, script) = (med(t_rust), med(t_rust15), med(t_script));
    let load = median_us(n, || {
        std::hint::black_box(
            Scenario::from_source("reference.rhai", SCRIPT, Path::new(".")).expect("script"),
        );
    });

    let a = sim.run().expect("run");
    let c = sim15.run_with(&mut Guard).expect("run");
    let b = scenario.run().expect("run").trajectory;
    println!("reference case, 48 h, median of {n} runs");
    println!("  Rust plan, checks every 2 h        {rust:>10.1} us");
    println!("  Rust controller, checks every 15 min {rust15:>8.1} us");
    println!("  script, rule every 15 min          {script:>10.1} us");
    println!("  script load (compile + top level)  {load:>10.1} us");
    println!(
        "  script / Rust 2 h: {:.3}   script / Rust 15 min: {:.3}",
        script / rust,
        script / rust15
    );
    println!(
        "  final Na: Rust 2 h {:.4}, Rust 15 min {:.4}, script {:.4} mmol/L",
        a.last().obs.na_mmol_l,
        c.last().obs.na_mmol_l,
        b.last().obs.na_mmol_l,
    );
    println!(
        "  solver steps: Rust 2 h {}, Rust 15 min {}, script {}",
        a.stats.steps, c.stats.steps, b.stats.steps
    );
}
