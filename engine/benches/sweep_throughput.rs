//! Benchmark: members per second of a Latin-hypercube sweep over the
//! reference case (48 h, three 3 % boluses then isotonic saline), on 1 and
//! 2 worker threads. Run with `cargo bench -p tidewater-engine --bench
//! sweep_throughput` (set TIDEWATER_SWEEP_MEMBERS to change the size).

use std::time::Instant;
use tidewater::reference::benchmark_plan;
use tidewater::sweep::{run_sweep, PlanRunner, Shard, SweepSpec};

fn main() {
    let members: usize = std::env::var("TIDEWATER_SWEEP_MEMBERS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(400);
    let text = format!(
        "scenario: reference\ndesign: latin_hypercube\nmembers: {members}\nseed: 3\n\
         parameters:\n  - name: patient.water_fraction\n    range: [0.42, 0.58]\n  - name: volume_avp_gain_pmol_l\n    distribution: {{ kind: log_normal, median: 150, sigma: 0.4 }}\n  - name: urea_generation_mmol_kg_day\n    range: [2, 8]\n"
    );
    let spec = SweepSpec::from_yaml(&text, "bench").expect("valid spec");
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    for threads in [1, 2] {
        let out = dir.join(format!("t{threads}.csv"));
        let _ = std::fs::remove_file(&out);
        let start = Instant::now();
        let n = run_sweep(
            &spec,
            48.0,
            &out,
            Shard::ALL,
            threads,
            || {
                Ok(PlanRunner {
                    base: benchmark_plan(),
                })
            },
            &(),
        )
        .expect("sweep");
        let secs = start.elapsed().as_secs_f64();
        println!(
            "{threads} thread(s): {n} members in {secs:.2} s = {:.0} members/s",
            n as f64 / secs
        );
    }
    std::fs::remove_dir_all(dir).ok();
}
