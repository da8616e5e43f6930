//! End-to-end checks of `tidewater plan` on the bundled walk-through
//! scenarios: the answer, its JSON keys, the exit codes.

use std::path::PathBuf;
use std::process::{Command, Output};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn plan(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .arg("plan")
        .args(args)
        .current_dir(root())
        .env("NO_COLOR", "1")
        .output()
        .expect("the tidewater binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

const RATE: &str = "scenarios/planning_saline_rate.rhai";
const DIURESIS: &str = "scenarios/planning_water_diuresis.rhai";

#[test]
fn the_walk_through_question_gets_a_rate_inside_the_goal() {
    let out = plan(&[
        RATE,
        "--fluid",
        "saline_3",
        "--goal-rise",
        "4..6",
        "--by",
        "24",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let p = &v["plan"];
    assert_eq!(p["verdict"], "met");
    let rate = p["outcome"]["dose"]["rate_ml_h"].as_f64().unwrap();
    assert!(rate > 0.0 && rate < 100.0, "{rate}");
    let change = p["outcome"]["na_change_at_goal_mmol_l"].as_f64().unwrap();
    assert!((3.95..=6.05).contains(&change), "{change}");
    // Every margin to a limit is non-negative.
    for m in p["outcome"]["margins"].as_array().unwrap() {
        if m["severity"] == "limit" {
            assert!(m["margin_mmol_l"].as_f64().unwrap() >= 0.0, "{m}");
        }
    }
    assert!(p["adrogue_madias_change_mmol_l"].as_f64().is_some());
    assert!(v["caution"]
        .as_str()
        .unwrap()
        .contains("not a medical device"));
}

#[test]
fn a_goal_the_water_diuresis_outruns_exits_1_with_the_reason() {
    let out = plan(&[
        DIURESIS,
        "--fluid",
        "saline_3",
        "--goal-rise",
        "4..6",
        "--by",
        "24",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("Not reachable"), "{s}");
    assert!(s.contains("already crosses \"first 24 h\""), "{s}");
    assert!(s.contains("nearest feasible dose"), "{s}");
    assert!(s.contains("not a medical device"), "{s}");
}

#[test]
fn the_relowering_of_the_walk_through_meets_its_aim() {
    let out = plan(&[
        DIURESIS,
        "--relower",
        "--from",
        "10",
        "--by",
        "24",
        "--clamp",
        "2",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let r = &v["relowering"];
    assert!(
        r["window_rise_at_by_mmol_l"].as_f64().unwrap() <= 10.0,
        "{r}"
    );
    assert!(
        r["outcome"]["dose"]["rate_ml_h"].as_f64().unwrap() > 0.0,
        "{r}"
    );
}

#[test]
fn bad_options_exit_2_naming_the_option() {
    for (args, needle) in [
        (
            vec![
                RATE,
                "--fluid",
                "saline_3",
                "--goal-rise",
                "4-6",
                "--by",
                "24",
            ],
            "--goal-rise",
        ),
        (
            vec![
                RATE,
                "--fluid",
                "saline_33",
                "--goal-rise",
                "4..6",
                "--by",
                "24",
            ],
            "--fluid",
        ),
        (
            vec![
                RATE,
                "--fluid",
                "saline_3",
                "--goal-rise",
                "4..6",
                "--by",
                "72",
            ],
            "by",
        ),
        (
            vec![RATE, "--fluid", "saline_3", "--by", "24"],
            "--goal-rise",
        ),
        (
            vec![
                DIURESIS,
                "--relower",
                "--fluid",
                "saline_0_9",
                "--from",
                "10",
                "--by",
                "24",
            ],
            "hypotonic",
        ),
    ] {
        let out = plan(&args);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?}: {}",
            text(&out.stdout)
        );
        let e = text(&out.stderr);
        assert!(e.contains(needle), "{args:?}: {e}");
    }
}
