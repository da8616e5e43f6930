//! Benchmark: median wall time of one 48 h run of the reference case
//! (three 3 % saline boluses then isotonic saline, checks every 2 h).
//! Run with `cargo bench -p tidewater-engine`.

use std::time::Instant;
use tidewater::reference::benchmark_plan;
use tidewater::Simulation;

fn main() {
    let sim = Simulation::new(benchmark_plan()).expect("valid plan");
    let first = sim.run().expect("run");
    let n = 200;
    let mut times = Vec::with_capacity(n);
    for _ in 0..n {
        let start = Instant::now();
        let traj = sim.run().expect("run");
        times.push(start.elapsed().as_secs_f64());
        std::hint::black_box(traj);
    }
    times.sort_by(f64::total_cmp);
    let median = times[n / 2];
    let s = first.stats;
    println!("reference 48 h run (three 3 % boluses, then 0.9 % saline, checks every 2 h)");
    println!(
        "  median {:.1} us over {n} runs (min {:.1} us, max {:.1} us)",
        median * 1e6,
        times[0] * 1e6,
        times[n - 1] * 1e6
    );
    println!(
        "  steps {}  rhs calls {}  jacobian products {}  jacobian evaluations {}  restarts {}  rejected {}",
        s.steps, s.rhs_calls, s.jacobian_products, s.jacobian_evaluations, s.restarts, s.error_test_failures
    );
    println!(
        "  samples {}  final Na {:.2} mmol/L",
        first.samples.len(),
        first.last().obs.na_mmol_l
    );
    if std::env::var("TIDEWATER_BENCH_VARIANTS").is_ok() {
        for (label, every, rtol) in [
            ("hourly samples", 1.0, 1e-6),
            ("rtol 1e-4", 5.0 / 60.0, 1e-4),
            ("rtol 1e-5", 5.0 / 60.0, 1e-5),
        ] {
            let mut plan = benchmark_plan();
            plan.sample_every_h = every;
            plan.tolerances.rtol = rtol;
            let sim = Simulation::new(plan).expect("valid plan");
            let mut times: Vec<f64> = (0..50)
                .map(|_| {
                    let s = Instant::now();
                    std::hint::black_box(sim.run().expect("run"));
                    s.elapsed().as_secs_f64()
                })
                .collect();
            times.sort_by(f64::total_cmp);
            let r = sim.run().expect("run");
            println!(
                "  {label}: median {:.1} us, steps {}, final Na {:.4}",
                times[25] * 1e6,
                r.stats.steps,
                r.last().obs.na_mmol_l
            );
        }
    }
}

#[allow(dead_code)]
fn variants() {}
