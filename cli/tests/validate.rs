//! End-to-end checks of `tidewater validate`: the dossier's page, its exit
//! codes, and bad input named by file, line and field with nothing written.

use std::path::Path;
use std::process::{Command, Output};

fn tidewater(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .output()
        .expect("the tidewater binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// A one-check dossier on an invented 2 h scenario: 1 L of 0.9 % saline
/// over 1 h into a closed system raises the extracellular fluid by 1 L
/// with no change of tonicity, so about a quarter stays in plasma (common
/// practice). `range` and `mark` are the check's range and optional
/// expected-failure line.
fn dossier(range: &str, mark: &str) -> tempfile::TempDir {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("dossier");
    std::fs::create_dir_all(dir.join("scenarios")).unwrap();
    std::fs::write(
        dir.join("scenarios/saline.rhai"),
        "patient(#{ sex: \"male\", age_years: 40, weight_kg: 70 });\nclosed_system();\nrun_for(hours(2));\nat(hours(0), infuse(\"saline_0_9\", litres(1), hours(1)));\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("checks.yaml"),
        format!(
            "checks:
  - id: saline_plasma_share
    topic: isotonic saline
    source_key: common_practice
    source: \"common practice: a quarter of an isotonic crystalloid stays in plasma\"
    published: {{text: \"about one quarter\", value: 0.25, unit: \"plasma gain / volume\"}}
    range: {range}
    range_basis: \"the rule's own tolerance\"
    scenario: saline.rhai
    metric: plasma_volume_change_fraction_of_load
    args: {{at_h: 2, load_ml: 1000}}
{mark}"
        ),
    )
    .unwrap();
    root
}

#[test]
fn the_page_carries_the_caution_summary_and_each_check() {
    let root = dossier("[0.15, 0.35]", "");
    let out = tidewater(
        root.path(),
        &["validate", "dossier", "--out", "page", "--threads", "1"],
    );
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let html = std::fs::read_to_string(root.path().join("page/index.html")).unwrap();
    let caution = html.find("not a medical device").expect("the caution");
    assert!(
        caution < html.find("Summary").unwrap(),
        "the caution comes first"
    );
    assert!(html.contains("re-measure serum sodium"));
    assert!(html.contains("id=\"saline_plasma_share\""));
    assert!(html.contains("<svg"), "inline charts");
    assert!(
        !html.contains("src=\"http") && !html.contains("href=\"http"),
        "self-contained"
    );
    assert!(!html.contains("<script"), "no scripts");
    assert!(text(&out.stderr).contains("1 checks from 0 published sources: 1 pass"));
}

#[test]
fn a_miss_exits_1_and_a_stale_mark_says_remove_it() {
    let root = dossier("[0.9, 1.0]", "");
    let out = tidewater(root.path(), &["validate", "dossier", "--out", "page"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stderr).contains("never widen the range"),
        "{}",
        text(&out.stderr)
    );
    assert!(
        root.path().join("page/index.html").exists(),
        "the page shows the failure"
    );

    let root = dossier(
        "[0.15, 0.35]",
        "    expected_failure: \"a mechanism said to be missing\"\n",
    );
    let out = tidewater(root.path(), &["validate", "dossier", "--out", "page"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        text(&out.stderr).contains("remove the mark"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn bad_input_names_file_line_and_field_and_writes_nothing() {
    let root = dossier("[0.35, 0.15]", "");
    let out = tidewater(root.path(), &["validate", "dossier", "--out", "page"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("checks.yaml:7: check saline_plasma_share: range:"),
        "{err}"
    );
    assert!(!root.path().join("page").exists(), "nothing half-written");
}
