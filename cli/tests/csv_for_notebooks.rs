//! `results.csv` of a sweep and `samples.csv` of a run, read as a notebook
//! reads them: Python's `csv` module with no option. Every value column
//! carries its unit in its name (or is a documented ratio, count or flag),
//! numbers parse as numbers, `limits_crossed` is a `;`-joined list of rule
//! numbers (empty when none) and `error` is empty for a member that ran.
//! Without Python the check fails when `CI` is set and is skipped with a
//! message otherwise.

use std::path::Path;
use std::process::Command;

const CHECK: &str = r#"
import csv, re, sys
results, samples = sys.argv[1], sys.argv[2]
unit = re.compile(r".*_(mmol_l|mmol|mosm_kg|l|ml_h|ml|h|g_l)$")
# Ratios, counts, flags and text, documented in scenarios/sweeps/README.md
# and docs/equations.md.
unitless = {"member", "status", "error", "limit_crossed", "caution_crossed",
            "limits_crossed", "balance_residual", "min_brain_volume_index",
            "brain_volume_index", "hematocrit"}
with open(results, newline="") as f:
    rows = list(csv.DictReader(f))
assert rows, "no rows"
for name in rows[0]:
    if name.startswith("patient.") or name in unitless:
        continue
    assert unit.match(name), "results.csv column without a unit: " + name
ok = [r for r in rows if r["status"] == "ok"]
failed = [r for r in rows if r["status"] == "failed"]
assert ok and failed, (len(ok), len(failed))
for r in ok:
    assert r["error"] == "", r["error"]
    assert re.fullmatch(r"(\d+(;\d+)*)?", r["limits_crossed"]), r["limits_crossed"]
    for name, v in r.items():
        if name not in ("status", "error", "limits_crossed", "balance_residual"):
            float(v)
for r in failed:
    assert r["error"] != ""
with open(samples, newline="") as f:
    srows = list(csv.DictReader(f))
for name in srows[0]:
    assert name in unitless or unit.match(name), "samples.csv column without a unit: " + name
for r in srows:
    for v in r.values():
        float(v)
print("ok", len(rows), len(srows))
"#;

fn python() -> Option<&'static str> {
    ["python3", "python"].into_iter().find(|p| {
        Command::new(p)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    })
}

fn tidewater(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(args)
        .output()
        .expect("the tidewater binary runs")
}

#[test]
fn results_and_samples_read_with_pythons_csv_module_with_units_and_types() {
    let Some(py) = python() else {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI needs Python for this check"
        );
        eprintln!("skipped: no Python");
        return;
    };
    let root = tempfile::tempdir().unwrap();
    let scenarios = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios");
    let script = scenarios
        .join("nausea_settles.rhai")
        .canonicalize()
        .unwrap();
    let spec = root.path().join("spec.yaml");
    // Three members: two run (one crosses the European limit), one fails
    // (a sodium of 300 mmol/L is refused).
    std::fs::write(
        &spec,
        format!(
            "scenario: {}\ndesign: grid\nparameters:\n  - name: patient.na\n    values: [122, 126, 300]\noutputs:\n  na_at_h: [6, 24]\n  band_every_h: 12\n",
            script.display()
        ),
    )
    .unwrap();
    let results = root.path().join("results.csv");
    let out = tidewater(&[
        "sweep",
        spec.to_str().unwrap(),
        "--threads",
        "1",
        "--out",
        results.to_str().unwrap(),
    ]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let run = root.path().join("run");
    let out = tidewater(&[
        "run",
        script.to_str().unwrap(),
        "--out",
        run.to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = Command::new(py)
        .args(["-c", CHECK])
        .arg(&results)
        .arg(run.join("samples.csv"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}
