//! End-to-end checks of `tidewater fit` on the bundled walk-through: the
//! files it writes, what it learns, and bad observation files (exit 2,
//! nothing written).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn fit(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .arg("fit")
        .args(args)
        .current_dir(root())
        .env("NO_COLOR", "1")
        .output()
        .expect("the tidewater binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

const SCRIPT: &str = "scenarios/labs_settling.rhai";
const LABS: &str = "scenarios/observations/settling_labs.csv";

#[test]
fn the_walk_through_fit_finds_the_end_of_the_antidiuresis_and_warns() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("fit");
    let o = fit(&[
        SCRIPT,
        "--observed",
        LABS,
        "--out",
        out.to_str().unwrap(),
        "--draws",
        "40",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    for f in ["forecast.csv", "fit.json", "forecast.svg", "report.html"] {
        assert!(out.join(f).is_file(), "{f}");
    }
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("fit.json")).unwrap()).unwrap();
    assert!(v["convergence"]["converged"].as_bool().unwrap(), "{v}");
    let resolves = v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["name"] == "cause_resolves_h")
        .unwrap();
    // The invented labs were made with the antidiuresis ending at 5.5 h:
    // the urine of 818 mL between 6 and 8 h shows it.
    let t = resolves["value"].as_f64().unwrap();
    assert!((4.0..7.5).contains(&t), "{resolves}");
    // The forecast warns before the first-day limit is crossed.
    let first_day = v["forecast"]["limits"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["label"] == "first 24 h")
        .unwrap();
    assert!(
        first_day["p_in_forecast"].as_f64().unwrap() > 0.9,
        "{first_day}"
    );
    let csv = std::fs::read_to_string(out.join("forecast.csv")).unwrap();
    assert!(
        csv.starts_with("time_h,na_fit_mmol_l,na_p5_mmol_l,"),
        "{csv}"
    );
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("not a medical device"));
}

fn bad_file(dir: &Path, name: &str, body: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, body).unwrap();
    p
}

#[test]
fn bad_observation_files_exit_2_naming_the_cell_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    for (name, body, needle) in [
        (
            "unsorted.csv",
            "time_h,na_mmol_l\n0,121\n4,123\n2,122\n",
            "unsorted.csv:4:1 (time_h)",
        ),
        ("unknown.csv", "time_h,na_mmol\n0,121\n", "unknown.csv:1:2"),
        (
            "text.csv",
            "time_h,na_mmol_l\n0,121\n2,high\n",
            "text.csv:3:2 (na_mmol_l)",
        ),
        (
            "sodium400.csv",
            "time_h,na_mmol_l\n0,121\n2,400\n",
            "sodium400.csv:3:2 (na_mmol_l)",
        ),
    ] {
        let p = bad_file(dir.path(), name, body);
        let out = dir.path().join(format!("out-{name}"));
        let o = fit(&[
            SCRIPT,
            "--observed",
            p.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        assert_eq!(o.status.code(), Some(2), "{name}: {}", text(&o.stdout));
        let e = text(&o.stderr);
        assert!(e.contains(needle), "{name}: {e}");
        assert!(!out.exists(), "{name}: something was written");
    }
}

#[test]
fn a_run_with_observations_carries_the_fit_in_its_report() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let o = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args([
            "run",
            SCRIPT,
            "--observed",
            LABS,
            "--out",
            out.to_str().unwrap(),
            "-q",
        ])
        .current_dir(root())
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    for f in [
        "samples.csv",
        "report.html",
        "fit.json",
        "forecast.csv",
        "forecast.svg",
    ] {
        assert!(out.join(f).is_file(), "{f}");
    }
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("What the measurements taught"));
    assert!(html.contains("cause_resolves_h"));
}
