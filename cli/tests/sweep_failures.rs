//! A sweep whose members fail: every member failed is no result (exit 1,
//! the first failure named, the result file kept); some failed is a
//! result (exit 0) with the count and the first failure on stderr.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A fresh folder named for `what` with a grid spec over the bundled
/// scenario `nausea_settles.rhai` varying `patient.na` over `values`.
fn grid_over_na(what: &str, values: &str) -> (PathBuf, PathBuf) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let script = root
        .join("scenarios/nausea_settles.rhai")
        .canonicalize()
        .unwrap();
    let dir = std::env::temp_dir().join(format!("tidewater-{what}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("spec.yaml");
    std::fs::write(
        &spec,
        format!(
            "scenario: {}\ndesign: grid\nparameters:\n  - name: patient.na\n    values: {values}\noutputs:\n  na_at_h: [6]\n",
            script.display()
        ),
    )
    .unwrap();
    (dir, spec)
}

fn sweep(spec: &Path, out: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--threads", "1", "--out"])
        .arg(out)
        .output()
        .unwrap()
}

#[test]
fn a_sweep_whose_every_member_failed_exits_1_naming_the_first_failure() {
    // Serum sodium 300 mmol/L is outside the range the patient loader
    // admits (95..=190 mmol/L), so the only member fails.
    let (dir, spec) = grid_over_na("sweep-all-fail", "[300]");
    let out = dir.join("r.csv");
    let run = sweep(&spec, &out);
    let stderr = String::from_utf8_lossy(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("every member failed (1 of 1)")
            && stderr.contains("member 0 (patient.na = 300.000000)")
            && stderr.contains("na = 300 is outside the admissible range"),
        "{stderr}"
    );
    assert!(
        stderr.contains(&format!("{} is kept", out.display())),
        "{stderr}"
    );
    let rows = std::fs::read_to_string(&out).unwrap();
    assert_eq!(rows.lines().count(), 2, "the result file stays: {rows}");
    // The summary still records the failure (members 1, failed 1).
    let summary = std::fs::read_to_string(dir.join("summary.json")).unwrap();
    assert!(summary.contains("\"failed\": 1"), "{summary}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_sweep_with_some_failed_members_exits_0_and_counts_them() {
    let (dir, spec) = grid_over_na("sweep-some-fail", "[130, 300, 400]");
    let out = dir.join("r.csv");
    let run = sweep(&spec, &out);
    let stderr = String::from_utf8_lossy(&run.stderr);
    assert!(run.status.success(), "{stderr}");
    assert!(
        stderr.contains("2 of 3 members failed")
            && stderr.contains("the first, member 1 (patient.na = 300.000000), failed")
            && !stderr.contains("every member failed"),
        "{stderr}"
    );
    assert!(dir.join("summary.json").exists());
    std::fs::remove_dir_all(&dir).unwrap();
}
