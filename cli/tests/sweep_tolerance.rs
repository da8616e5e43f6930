//! The bundled uncertainty sweep runs its members at a looser solver
//! tolerance than the engine's default (its `rtol:`). The outputs it keeps
//! must not depend on that choice: every member's sodium outputs agree with
//! a run at the default tolerance within 0.02 mmol/L, and every flag and
//! status is the same.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_tidewater")
}

/// The bundled spec with `members` members, its scenario path made
/// absolute, with or without its `rtol:` line.
fn spec(dir: &Path, members: usize, keep_rtol: bool) -> PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let bundled = root.join("scenarios/sweeps/bolus_uncertainty.yaml");
    let text = std::fs::read_to_string(&bundled).unwrap();
    assert!(
        text.lines().any(|l| l.starts_with("rtol:")),
        "the bundled spec sets rtol"
    );
    let script = root
        .join("scenarios/severe_chronic_boluses.rhai")
        .canonicalize()
        .unwrap();
    let text: String = text
        .lines()
        .filter(|l| keep_rtol || !l.starts_with("rtol:"))
        .map(|l| {
            if l.starts_with("scenario:") {
                format!("scenario: {}", script.display())
            } else if l.starts_with("members:") {
                format!("members: {members}")
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n");
    let path = dir.join(if keep_rtol {
        "loose.yaml"
    } else {
        "tight.yaml"
    });
    std::fs::write(&path, text).unwrap();
    path
}

fn run(spec: &Path, out: &Path) -> Vec<Vec<String>> {
    let status = Command::new(bin())
        .args([
            "sweep",
            spec.to_str().unwrap(),
            "--summary",
            "false",
            "--out",
        ])
        .arg(out)
        .stderr(Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    std::fs::read_to_string(out)
        .unwrap()
        .lines()
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

#[test]
fn the_bundled_sweep_tolerance_leaves_its_outputs_unchanged() {
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-rtol-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let loose = run(&spec(&dir, 120, true), &dir.join("loose.csv"));
    let tight = run(&spec(&dir, 120, false), &dir.join("tight.csv"));
    assert_eq!(loose[0], tight[0], "same columns");
    assert_eq!(loose.len(), 121);
    let header = &loose[0];
    let mut largest = 0.0f64;
    for (a, b) in loose[1..].iter().zip(&tight[1..]) {
        for ((name, x), y) in header.iter().zip(a).zip(b) {
            let sodium = name.starts_with("na_at_")
                || name.starts_with("band_na_")
                || name.starts_with("largest_rise_");
            if sodium {
                let d = (x.parse::<f64>().unwrap() - y.parse::<f64>().unwrap()).abs();
                largest = largest.max(d);
                assert!(d <= 0.02, "member {}: {name} {x} vs {y}", a[0]);
            } else if name == "status" || name.ends_with("_crossed") || name == "member" {
                assert_eq!(x, y, "member {}: {name}", a[0]);
            }
        }
    }
    assert!(largest > 0.0, "the tolerance made some difference");
    std::fs::remove_dir_all(&dir).ok();
}
