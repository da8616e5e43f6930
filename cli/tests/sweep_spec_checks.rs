//! A spec that cannot run is refused before any member runs: exit 2, the
//! spec file with the line and the field in the message, and no result
//! file written.

use std::path::{Path, PathBuf};
use std::process::Output;

/// A fresh folder named for `what` holding a spec over the bundled
/// scenario `nausea_settles.rhai`: `scenario: <path>` followed by `rest`.
fn spec_in_fresh_dir(what: &str, rest: &str) -> (PathBuf, PathBuf) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let script = root
        .join("scenarios/nausea_settles.rhai")
        .canonicalize()
        .unwrap();
    let dir = std::env::temp_dir().join(format!("tidewater-{what}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("spec.yaml");
    std::fs::write(&spec, format!("scenario: {}\n{rest}", script.display())).unwrap();
    (dir, spec)
}

/// Run the spec into `r.csv` beside it, refused: exit 2, nothing written.
/// Returns stderr.
fn refused(dir: &Path, spec: &Path) -> String {
    let out = dir.join("r.csv");
    let run: Output = std::process::Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--threads", "1", "--out"])
        .arg(&out)
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&run.stderr).into_owned();
    assert_eq!(run.status.code(), Some(2), "{stderr}");
    assert!(!out.exists(), "no result file: {stderr}");
    stderr
}

#[test]
fn a_misspelt_patient_field_is_refused_before_any_member_runs() {
    let (dir, spec) = spec_in_fresh_dir(
        "sweep-misspelt",
        "design: grid\nparameters:\n  - name: patient.water_fracction\n    values: [0.5]\noutputs:\n  na_at_h: [6]\n",
    );
    let stderr = refused(&dir, &spec);
    assert!(
        stderr.contains(&format!("{}:4:5: parameter patient.water_fracction: not a numeric patient field (did you mean \"patient.water_fraction\"?)", spec.display())),
        "{stderr}"
    );
    assert!(!stderr.contains("members ("), "no member ran: {stderr}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_member_count_beyond_the_maximum_is_refused_at_once() {
    let (dir, spec) = spec_in_fresh_dir(
        "sweep-huge",
        "design: latin_hypercube\nmembers: 4294967296\nparameters:\n  - name: patient.water_fraction\n    range: [0.4, 0.5]\noutputs:\n  na_at_h: [6]\n",
    );
    let stderr = refused(&dir, &spec);
    assert!(
        stderr.contains(&format!(
            "{}:3:1: members: 4294967296 is more than the most one sweep runs (10000000)",
            spec.display()
        )),
        "{stderr}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_script_setting_the_base_script_never_reads_is_refused() {
    // nausea_settles.rhai reads no setting at all.
    let (dir, spec) = spec_in_fresh_dir(
        "sweep-script-name",
        "design: grid\nparameters:\n  - name: script.nothing\n    values: [1, 2]\noutputs:\n  na_at_h: [6]\n",
    );
    let stderr = refused(&dir, &spec);
    assert!(
        stderr.contains(&format!(
            "{}:4:5: parameter script.nothing: the base script never reads setting(\"nothing\", ...); it reads no setting",
            spec.display()
        )),
        "{stderr}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_misspelt_script_setting_is_refused_with_the_settings_the_script_reads() {
    // severe_chronic_boluses.rhai reads setting("bolus_ml", 150).
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let bundled = root.join("scenarios/sweeps/bolus_dose_response.yaml");
    let script = root
        .join("scenarios/severe_chronic_boluses.rhai")
        .canonicalize()
        .unwrap();
    let text = std::fs::read_to_string(bundled).unwrap();
    let rest = text
        .lines()
        .filter(|l| !l.starts_with("scenario:"))
        .collect::<Vec<_>>()
        .join("\n")
        .replace("script.bolus_ml", "script.bolus_mll");
    assert!(
        rest.contains("script.bolus_mll"),
        "the bundled spec changed"
    );
    let (dir, spec) = spec_in_fresh_dir("sweep-script-misspelt", &format!("{rest}\n"));
    std::fs::write(&spec, format!("scenario: {}\n{rest}\n", script.display())).unwrap();
    let stderr = refused(&dir, &spec);
    assert!(
        stderr.contains("parameter script.bolus_mll: the base script never reads setting(\"bolus_mll\", ...) (did you mean \"script.bolus_ml\"?); the settings it reads: bolus_ml"),
        "{stderr}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}
