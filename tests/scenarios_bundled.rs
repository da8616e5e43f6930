//! Every bundled scenario script (`scenarios/*.rhai`) loads, runs, keeps
//! every species in balance (REFERENCES.md check M9: conservation of mass,
//! relative residual below 1e-6) and meets each of its own expectations.

use std::path::{Path, PathBuf};
use tidewater::scenario::Scenario;

fn bundled_scripts() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let mut out: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("scenarios folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "rhai"))
        .collect();
    out.sort();
    out
}

#[test]
fn at_least_eight_bundled_scenarios() {
    assert!(bundled_scripts().len() >= 8, "{:?}", bundled_scripts());
}

#[test]
fn every_bundled_scenario_meets_its_expectations_and_balances() {
    let mut failures = Vec::new();
    for path in bundled_scripts() {
        let scenario = Scenario::load(&path).unwrap_or_else(|e| panic!("{e}"));
        assert!(!scenario.title().is_empty());
        assert!(!scenario.description().is_empty(), "{}", path.display());
        let run = scenario.run().unwrap_or_else(|e| panic!("{e}"));
        let residual = run.trajectory.max_balance_residual();
        assert!(residual < 1e-6, "{}: residual {residual:e}", path.display());
        let (_, n_expect) = scenario.counts();
        assert!(n_expect >= 2, "{}: too few expectations", path.display());
        assert_eq!(run.expectations.len(), n_expect);
        println!("{} ({})", path.display(), scenario.title());
        for e in &run.expectations {
            println!(
                "  line {:>3} [{}] {}: {}",
                e.line,
                if e.passed { "ok" } else { "FAILED" },
                e.description,
                e.detail
            );
            if !e.passed {
                failures.push(format!(
                    "{}:{}: {} ({})",
                    path.display(),
                    e.line,
                    e.description,
                    e.detail
                ));
            }
        }
        for l in &run.log {
            println!("  log: {l}");
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
