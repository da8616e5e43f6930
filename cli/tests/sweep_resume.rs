//! A sweep killed half-way (SIGKILL, mid-write) and resumed gives the same
//! result file as an uninterrupted run.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_tidewater")
}

fn spec(dir: &Path) -> PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let script = root
        .join("scenarios/severe_chronic_boluses.rhai")
        .canonicalize()
        .unwrap();
    let text = format!(
        "scenario: {}\ndesign: latin_hypercube\nmembers: 400\nseed: 5\nparameters:\n  - name: patient.water_fraction\n    range: [0.38, 0.55]\n  - name: avp_floor_pmol_l\n    range: [0.8, 3.0]\noutputs:\n  na_at_h: [24]\n  band_every_h: 6\n",
        script.display()
    );
    let path = dir.join("spec.yaml");
    std::fs::write(&path, text).unwrap();
    path
}

fn rows(path: &Path) -> usize {
    std::fs::read_to_string(path)
        .map(|t| t.lines().count().saturating_sub(1))
        .unwrap_or(0)
}

#[test]
fn killed_and_resumed_sweep_equals_an_uninterrupted_one() {
    let dir = std::env::temp_dir().join(format!("tidewater-resume-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let spec = spec(&dir);
    let whole = dir.join("whole.csv");
    let status = Command::new(bin())
        .args([
            "sweep",
            spec.to_str().unwrap(),
            "--threads",
            "2",
            "--summary",
            "false",
            "--out",
        ])
        .arg(&whole)
        .stderr(Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());

    let cut = dir.join("cut.csv");
    let mut child = Command::new(bin())
        .args([
            "sweep",
            spec.to_str().unwrap(),
            "--threads",
            "2",
            "--summary",
            "false",
            "--out",
        ])
        .arg(&cut)
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = Instant::now();
    while rows(&cut) < 40 && start.elapsed() < Duration::from_secs(120) {
        std::thread::sleep(Duration::from_millis(5));
    }
    child.kill().unwrap(); // SIGKILL: no chance to tidy up
    child.wait().unwrap();
    let at_kill = rows(&cut);
    assert!(
        at_kill < 400,
        "the sweep finished before it could be killed ({at_kill} rows)"
    );

    let status = Command::new(bin())
        .args([
            "sweep",
            spec.to_str().unwrap(),
            "--threads",
            "2",
            "--summary",
            "false",
            "--out",
        ])
        .arg(&cut)
        .stderr(Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    assert_eq!(
        std::fs::read(&whole).unwrap(),
        std::fs::read(&cut).unwrap(),
        "resumed after a kill at {at_kill} rows"
    );
    std::fs::remove_dir_all(dir).ok();
}
