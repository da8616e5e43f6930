//! The sweep summary gives the probability of crossing each limit of the
//! scenario's guideline set, consistent with the rows of the result file.

use std::path::Path;
use std::process::Command;

/// A fresh folder named for `what` holding a spec over the bundled bolus
/// scenario: `scenario: <path>` followed by `rest`.
fn spec_in_fresh_dir(what: &str, rest: &str) -> (std::path::PathBuf, std::path::PathBuf) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let script = root
        .join("scenarios/severe_chronic_boluses.rhai")
        .canonicalize()
        .unwrap();
    spec_over(what, &script, rest)
}

/// A fresh folder named for `what` holding a spec over `script`.
fn spec_over(what: &str, script: &Path, rest: &str) -> (std::path::PathBuf, std::path::PathBuf) {
    let dir = std::env::temp_dir().join(format!("tidewater-{what}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("spec.yaml");
    std::fs::write(&spec, format!("scenario: {}\n{rest}", script.display())).unwrap();
    (dir, spec)
}

#[test]
fn summary_lists_every_limit_with_its_probability() {
    // Body water wide enough that some members overcorrect and some do not,
    // under the US panel's high-risk limit of 8 mmol/L in any 24 h
    // (Verbalis et al. 2013, from memory): the bundled bolus scenario with
    // that guideline set.
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let bundled =
        std::fs::read_to_string(root.join("scenarios/severe_chronic_boluses.rhai")).unwrap();
    let high_risk = bundled.replace("limits(\"europe-2014\");", "limits(\"us-2013\", true);");
    assert_ne!(bundled, high_risk, "the scenario names its guideline set");
    let script = std::env::temp_dir().join(format!(
        "tidewater-sweep-summary-script-{}.rhai",
        std::process::id()
    ));
    std::fs::write(&script, high_risk).unwrap();
    let (dir, spec) = spec_over(
        "sweep-summary",
        &script,
        "design: latin_hypercube\nmembers: 60\nseed: 9\nrtol: 1e-4\nparameters:\n  - name: patient.water_fraction\n    range: [0.33, 0.58]\n",
    );
    let out = dir.join("r.csv");
    let run = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--out"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let stdout = String::from_utf8(run.stdout).unwrap();
    assert!(stdout.starts_with("Caution: "), "{stdout}");
    for name in [
        "sodium_bands.svg",
        "sensitivity.svg",
        "sensitivity_by_output.svg",
    ] {
        let chart = std::fs::read_to_string(dir.join(name)).unwrap();
        assert!(
            chart.contains("not a medical device"),
            "{name} carries the caution"
        );
    }
    assert!(
        stdout.contains("limit of us-2013 (high risk)")
            && stdout.contains("1. high risk, any 24 h"),
        "{stdout}"
    );

    // Share of rows naming rule 1 in `limits_crossed`.
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = header.iter().position(|h| *h == "limits_crossed").unwrap();
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let share = rows
        .iter()
        .filter(|r| r[col].split_whitespace().any(|k| k == "1"))
        .count() as f64
        / rows.len() as f64;
    assert!(
        share > 0.0 && share < 1.0,
        "some members cross, some not: {share}"
    );

    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let by_limit = json["probability_by_limit"].as_array().unwrap();
    assert_eq!(
        by_limit.len(),
        2,
        "both rules of the high-risk set are listed"
    );
    assert_eq!(by_limit[0]["rule"], 1);
    assert_eq!(by_limit[0]["probability"].as_f64().unwrap(), share);
    assert_eq!(by_limit[1]["probability"].as_f64().unwrap(), 0.0);
    assert_eq!(json["probability_limit_crossed"].as_f64().unwrap(), share);
    // More body water dilutes the same boluses: a smaller rise (the
    // Adrogue-Madias direction, common practice) and a brain that shrinks
    // less on correction.
    let by_output = json["sensitivity_by_output"].as_array().unwrap();
    let r = |output: &str| {
        by_output.iter().find(|o| o["output"] == output).unwrap()["rank_correlation"][0]
            ["rank_correlation"]
            .as_f64()
            .unwrap()
    };
    assert!(
        r("largest_rise_24h_mmol_l") < -0.5,
        "{}",
        r("largest_rise_24h_mmol_l")
    );
    assert!(
        r("min_brain_volume_index") > 0.5,
        "{}",
        r("min_brain_volume_index")
    );
    std::fs::remove_dir_all(&dir).ok();
    std::fs::remove_file(&script).ok();
}

#[test]
fn design_only_prints_the_members_a_run_would_use_and_runs_nothing() {
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-design-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let spec = root.join("scenarios/sweeps/bolus_dose_response.yaml");
    let out = dir.join("r.csv");
    let design = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--design-only", "--out"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(design.status.success());
    assert!(!out.exists(), "nothing is run or written");
    let printed = String::from_utf8(design.stdout).unwrap();
    let run = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args([
            "sweep",
            spec.to_str().unwrap(),
            "--summary",
            "false",
            "--out",
        ])
        .arg(&out)
        .output()
        .unwrap();
    assert!(run.status.success());
    // The same members and values as the first columns of the result file.
    let results = std::fs::read_to_string(&out).unwrap();
    let n_cols = printed.lines().next().unwrap().split(',').count();
    let leading: Vec<String> = results
        .lines()
        .map(|l| l.split(',').take(n_cols).collect::<Vec<_>>().join(","))
        .collect();
    let printed: Vec<&str> = printed.lines().collect();
    assert_eq!(printed.len(), 26, "header and 25 members");
    assert_eq!(printed, leading);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_sweep_in_which_every_member_fails_finishes_without_a_fan_chart() {
    // Every member refused (sodium 300 mmol/L is outside the admissible
    // range): the result file records the failures, the summary is written,
    // and the fan chart, which would have no finite band, is left out
    // (the chart library used to spin forever on the NaN bands).
    let (dir, spec) = spec_in_fresh_dir(
        "sweep-allfail",
        "design: grid\nlevels: 1\nseed: 1\nparameters:\n  - name: patient.na\n    values: [300]\noutputs:\n  band_every_h: 4\n",
    );
    let out = dir.join("r.csv");
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--out"])
        .arg(&out)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let start = std::time::Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if start.elapsed() > std::time::Duration::from_secs(120) {
            child.kill().unwrap();
            panic!("the sweep did not finish");
        }
        std::thread::sleep(std::time::Duration::from_millis(50));
    };
    assert!(status.code().is_some());
    assert!(dir.join("summary.json").exists());
    assert!(!dir.join("sodium_bands.svg").exists());
    std::fs::remove_dir_all(&dir).ok();
}
