//! Benchmark: one answer of `tidewater plan` and of `tidewater fit` as a
//! whole process (start-up, script load, every run, printing or writing),
//! on the walk-through scenarios. Targets: a plan at most 100 ms, with
//! `--uncertainty 200` at most 2 s; a fit of 6 observations and 4 unknowns
//! with its forecast at most 2 s, on a 2-core machine.
//!
//! Run with `cargo bench -p tidewater-cli --bench answer_times` (release
//! build). Prints medians; it asserts nothing about time.

use std::path::PathBuf;
use std::process::Command;
use std::time::Instant;

fn median_ms(args: &[&str], runs: usize) -> f64 {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..");
    let mut times: Vec<f64> = (0..runs)
        .map(|_| {
            let t = Instant::now();
            let out = Command::new(env!("CARGO_BIN_EXE_tidewater"))
                .args(args)
                .current_dir(&root)
                .output()
                .expect("tidewater runs");
            let ms = t.elapsed().as_secs_f64() * 1e3;
            assert!(
                out.status.code().is_some_and(|c| c <= 1),
                "{}",
                String::from_utf8_lossy(&out.stderr)
            );
            ms
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[runs / 2]
}

fn main() {
    let base = [
        "plan",
        "scenarios/planning_saline_rate.rhai",
        "--fluid",
        "saline_3",
        "--goal-rise",
        "4..6",
        "--by",
        "24",
    ];
    println!(
        "plan, one answer:            median {:7.1} ms over 21 processes",
        median_ms(&base, 21)
    );
    let mut with = base.to_vec();
    with.extend(["--uncertainty", "200"]);
    println!(
        "plan, --uncertainty 200:     median {:7.1} ms over 7 processes",
        median_ms(&with, 7)
    );
    let relower = [
        "plan",
        "scenarios/planning_water_diuresis.rhai",
        "--relower",
        "--from",
        "10",
        "--by",
        "24",
        "--clamp",
        "2",
    ];
    println!(
        "plan --relower with a clamp: median {:7.1} ms over 21 processes",
        median_ms(&relower, 21)
    );
    let out = std::env::temp_dir().join(format!("tidewater-bench-fit-{}", std::process::id()));
    let out = out.to_string_lossy().into_owned();
    let fit = [
        "fit",
        "scenarios/labs_settling.rhai",
        "--observed",
        "scenarios/observations/settling_labs.csv",
        "--out",
        out.as_str(),
        "--quiet",
    ];
    println!(
        "fit with its forecast (200 draws): median {:7.1} ms over 7 processes",
        median_ms(&fit, 7)
    );
    let _ = std::fs::remove_dir_all(&out);
}
