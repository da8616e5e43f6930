//! End-to-end checks of `tidewater check`: scenarios held as regression
//! tests against stored baselines.

use std::path::{Path, PathBuf};
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

/// An invented 12 h scenario: inappropriate antidiuresis, 3 % saline then
/// isotonic saline. `extra`
/// goes after the plan (a parameter override, an expectation).
fn scenario(extra: &str) -> String {
    format!(
        r#"title("Check fixture: hypertonic then isotonic saline");
patient(#{{ sex: "female", age_years: 50, weight_kg: 60, na: 122, onset: "chronic", cause: "inappropriate_antidiuresis" }});
run_for(hours(12));
at(hours(0), infuse("saline_3", ml(150), minutes(20)));
at(hours(1), infuse("saline_0_9", litres(1), hours(8)));
expect_change("na", hours(0), hours(12), 0.3, 6);
{extra}
"#
    )
}

/// A folder holding `fixture.rhai` with `extra` appended.
fn fixture(extra: &str) -> (tempfile::TempDir, PathBuf) {
    let root = tempfile::tempdir().unwrap();
    let script = root.path().join("fixture.rhai");
    std::fs::write(&script, scenario(extra)).unwrap();
    (root, script)
}

fn baseline(root: &Path) -> PathBuf {
    root.join("baselines").join("fixture.csv")
}

#[test]
fn an_unchanged_scenario_passes_its_baseline() {
    let (root, _) = fixture("");
    let dir = root.path();
    // No baseline yet: expectations only, said so.
    let out = tidewater(dir, &["check", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).contains("no baseline"),
        "{}",
        text(&out.stdout)
    );
    assert!(
        !baseline(dir).exists(),
        "check alone never writes a baseline"
    );
    // Write it explicitly.
    let out = tidewater(dir, &["check", "--update", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let written = std::fs::read_to_string(baseline(dir)).unwrap();
    assert!(written.starts_with("# Tidewater baseline of fixture.rhai"));
    // 0..=12 h every hour.
    assert_eq!(
        written.lines().filter(|l| !l.starts_with('#')).count(),
        1 + 13
    );
    // Nothing changed: it passes, and a second update leaves the file alone.
    let out = tidewater(dir, &["check", "--require-baseline", "."]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
    assert!(
        text(&out.stdout).contains("13 key samples x 22 columns within tolerance"),
        "{}",
        text(&out.stdout)
    );
    let out = tidewater(dir, &["check", "--update", "fixture.rhai"]);
    assert!(
        text(&out.stdout).contains("unchanged"),
        "{}",
        text(&out.stdout)
    );
    assert_eq!(std::fs::read_to_string(baseline(dir)).unwrap(), written);
}

#[test]
fn a_changed_parameter_fails_with_a_readable_difference() {
    let (root, script) = fixture("");
    let dir = root.path();
    assert_eq!(
        tidewater(dir, &["check", "--update", "."]).status.code(),
        Some(0)
    );
    // Pressure natriuresis 10 % stronger (default 13): a model change the
    // scenario's own expectation does not notice.
    std::fs::write(&script, scenario(r#"set_param("natriuresis_gain", 14.3);"#)).unwrap();
    let junit = dir.join("out").join("check.xml");
    let out = tidewater(
        dir,
        &["check", "fixture.rhai", "--junit", junit.to_str().unwrap()],
    );
    let stdout = text(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{stdout}");
    assert!(
        stdout.contains("FAILED  fixture.rhai: the run left its baseline"),
        "{stdout}"
    );
    // Which column, at what time, expected vs got, by how much.
    let line = stdout
        .lines()
        .find(|l| l.trim_start().starts_with("urine_na_mmol_l:"))
        .unwrap_or_else(|| panic!("no urine sodium line in\n{stdout}"));
    for part in [
        "key samples outside tolerance",
        "first at ",
        " h: expected ",
        ", got ",
        "tolerance ±",
    ] {
        assert!(line.contains(part), "{line}");
    }
    assert!(stdout.contains("1 failed"), "{stdout}");
    let xml = std::fs::read_to_string(&junit).unwrap();
    assert!(
        xml.contains("tests=\"1\" failures=\"1\" errors=\"0\""),
        "{xml}"
    );
    assert!(xml.contains("<failure type=\"regression\""), "{xml}");
    // The baseline is untouched by a failing check.
    assert!(std::fs::read_to_string(baseline(dir))
        .unwrap()
        .contains("time_h,na_mmol_l"));
}

#[test]
fn a_tolerance_file_can_accept_a_known_difference() {
    let (root, script) = fixture("");
    let dir = root.path();
    assert_eq!(
        tidewater(dir, &["check", "--update", "."]).status.code(),
        Some(0)
    );
    // A 1 % smaller body-water fraction moves every value a little.
    std::fs::write(
        &script,
        scenario(r#"set_param("tbw_fraction_woman", 0.495);"#),
    )
    .unwrap();
    let out = tidewater(dir, &["check", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stdout));
    // Loose tolerances for this scenario only, for every column the
    // baseline holds.
    let written = std::fs::read_to_string(baseline(dir)).unwrap();
    let header = written.lines().find(|l| l.starts_with("time_h,")).unwrap();
    let loose: String = header
        .split(',')
        .skip(1)
        .map(|c| format!("    {c}: {{ rel: 0.05, abs: 1 }}\n"))
        .collect();
    std::fs::write(
        dir.join("baselines").join("tolerances.yaml"),
        format!("scenarios:\n  fixture:\n{loose}"),
    )
    .unwrap();
    let out = tidewater(dir, &["check", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
}

#[test]
fn update_refuses_a_scenario_whose_expectation_fails() {
    let (root, _) = fixture(r#"expect_above("na", hours(12), 150);"#);
    let dir = root.path();
    let out = tidewater(dir, &["check", "--update", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stdout));
    assert!(
        text(&out.stdout).contains("baseline not written"),
        "{}",
        text(&out.stdout)
    );
    assert!(
        text(&out.stdout).contains("expectation (line 7) failed"),
        "{}",
        text(&out.stdout)
    );
    assert!(!baseline(dir).exists());
}

#[test]
fn bad_baselines_give_clear_errors() {
    let (root, _) = fixture("");
    let dir = root.path();
    // Missing, when CI requires one.
    let out = tidewater(dir, &["check", "--require-baseline", "fixture.rhai"]);
    assert_eq!(out.status.code(), Some(2));
    let stdout = text(&out.stdout);
    assert!(
        stdout.contains("ERROR   fixture.rhai: no baseline at baselines/fixture.csv"),
        "{stdout}"
    );
    assert!(
        stdout.contains("tidewater check --update fixture.rhai"),
        "{stdout}"
    );
    assert!(text(&out.stderr).contains("1 of 1 scenarios could not be checked"));
    assert_eq!(
        tidewater(dir, &["check", "--update", "."]).status.code(),
        Some(0)
    );
    let good = std::fs::read_to_string(baseline(dir)).unwrap();
    // A cell of the third key sample (line 7), replaced.
    let with_cell = |column: usize, cell: &str| {
        let mut lines: Vec<String> = good.lines().map(String::from).collect();
        let mut cells: Vec<String> = lines[6].split(',').map(String::from).collect();
        cells[column] = cell.into();
        lines[6] = cells.join(",");
        lines.join("\n")
    };
    let cases: [(String, &str); 8] = [
        (
            good.replace("urine_ml_h", "urine_mlh"),
            "unknown column `urine_mlh` (did you mean `urine_ml_h`?)",
        ),
        (
            good.replace("time_h,", "hours,"),
            ":4: the first column must be `time_h`, found `hours`",
        ),
        (
            with_cell(1, "12O.5"),
            "baselines/fixture.csv:7:2: column `na_mmol_l`: `12O.5` is not a number",
        ),
        // A NaN or an infinity is a broken baseline (exit 2), not a value
        // whose tolerance is ±NaN (it used to fail the check with exit 1).
        (
            with_cell(1, "NaN"),
            "baselines/fixture.csv:7:2: column `na_mmol_l`: `NaN` is not a finite number",
        ),
        (
            with_cell(3, "inf"),
            "baselines/fixture.csv:7:4: column `glucose_mmol_l`: `inf` is not a finite number",
        ),
        (
            with_cell(0, "nan"),
            "baselines/fixture.csv:7:1: column `time_h`: `nan` is not a finite number",
        ),
        (
            good.lines().take(5).collect::<Vec<_>>().join("\n") + ",1\n",
            ":5: 24 values where the header has 23 columns",
        ),
        (String::new(), "is empty"),
    ];
    for (content, message) in cases {
        std::fs::write(baseline(dir), &content).unwrap();
        let out = tidewater(dir, &["check", "fixture.rhai"]);
        let stdout = text(&out.stdout);
        assert_eq!(out.status.code(), Some(2), "{stdout}");
        assert!(stdout.contains("the baseline cannot be used"), "{stdout}");
        assert!(stdout.contains(message), "want `{message}` in\n{stdout}");
    }
    // A bad tolerance file stops before anything runs or is written.
    std::fs::write(baseline(dir), &good).unwrap();
    std::fs::write(
        dir.join("baselines/tolerances.yaml"),
        "columns:\n  sodium: { abs: 1 }\n",
    )
    .unwrap();
    let junit = dir.join("check.xml");
    let out = tidewater(
        dir,
        &["check", "fixture.rhai", "--junit", junit.to_str().unwrap()],
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("baselines/tolerances.yaml:2: columns.sodium: unknown column"),
        "{}",
        text(&out.stderr)
    );
    assert!(!junit.exists());
    let out = tidewater(
        dir,
        &["check", "--tolerances", "nowhere.yaml", "fixture.rhai"],
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("nowhere.yaml"));
    let out = tidewater(dir, &["check", "no_such.rhai"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no_such.rhai: no such file or folder"));
}

/// The bundled scenarios, from the repository root.
fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .unwrap()
        .to_path_buf()
}

#[test]
fn bundled_scenarios_hold_their_baselines_on_one_and_two_threads() {
    let root = tempfile::tempdir().unwrap();
    let mut outputs = Vec::new();
    for threads in ["1", "2"] {
        let junit = root.path().join(format!("check-{threads}.xml"));
        let out = tidewater(
            &repo(),
            &[
                "check",
                "--require-baseline",
                "--threads",
                threads,
                "--junit",
                junit.to_str().unwrap(),
                "scenarios",
            ],
        );
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}{}",
            text(&out.stdout),
            text(&out.stderr)
        );
        outputs.push((out.stdout, std::fs::read(&junit).unwrap()));
    }
    assert_eq!(
        outputs[0], outputs[1],
        "1 and 2 threads give the same bytes"
    );
}

#[test]
fn samples_are_byte_identical_across_runs() {
    let (root, _) = fixture("");
    let dir = root.path();
    let mut files = Vec::new();
    for out in ["a", "b"] {
        let o = tidewater(dir, &["run", "fixture.rhai", "--out", out, "--quiet"]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        files.push(std::fs::read(dir.join(out).join("samples.csv")).unwrap());
    }
    assert!(files[0].len() > 1000);
    assert_eq!(files[0], files[1]);
}
