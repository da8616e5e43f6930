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

/// The script path end to end against a published formula: in a closed
/// system, 1 L of 3 % saline (513 mmol/L) given to a patient with 30 L of
/// body water and sodium 120 mmol/L raises sodium by
/// (513 − 120) / (30 + 1) = 12.68 mmol/L (Adrogué & Madias, NEJM 2000;
/// REFERENCES.md check M1). Within 5 %, as the Rust-built check allows.
#[test]
fn a_script_agrees_with_adrogue_madias_in_a_closed_system() {
    let script = r#"
        title("Closed-system check");
        description("One litre of 3 % saline in a closed system.");
        patient(#{ sex: "female", age_years: 50, weight_kg: 60, water_fraction: 0.5, na: 120 });
        closed_system();
        run_for(hours(24));
        at(hours(0), infuse("saline_3", litres(1), hours(1)));
        expect_change("na", hours(0), hours(24), 12.05, 13.31);
    "#;
    let scenario = Scenario::from_source("closed.rhai", script, Path::new(".")).unwrap();
    let run = scenario.run().unwrap();
    let predicted = (513.0 - 120.0) / (30.0 + 1.0);
    let change = run.trajectory.last().obs.na_mmol_l - 120.0;
    assert!(
        (change - predicted).abs() / predicted < 0.05,
        "{change} vs {predicted}"
    );
    assert!(run.all_expectations_hold(), "{:?}", run.expectations);
    assert!(run.trajectory.max_balance_residual() < 1e-6);
}
