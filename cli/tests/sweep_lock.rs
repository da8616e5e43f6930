//! Two sweeps into one result file: the second is refused (exit 2, naming
//! the file) while the first writes, and the first's file holds each
//! member once.

use std::path::Path;
use std::process::{Command, Stdio};

#[test]
fn a_second_sweep_into_the_same_file_is_refused_while_the_first_runs() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let bundled = root.join("scenarios/sweeps/bolus_uncertainty.yaml");
    let script = root
        .join("scenarios/severe_chronic_boluses.rhai")
        .canonicalize()
        .unwrap();
    // The bundled sweep with enough members to run for seconds on one
    // thread.
    let text = std::fs::read_to_string(&bundled)
        .unwrap()
        .replace(
            "scenario: ../severe_chronic_boluses.rhai",
            &format!("scenario: {}", script.display()),
        )
        .replace("members: 200", "members: 2000");
    assert!(text.contains("members: 2000"), "the bundled spec changed");
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-lock-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("spec.yaml");
    std::fs::write(&spec, text).unwrap();
    let out = dir.join("r.csv");
    let sweep = || {
        let mut c = Command::new(env!("CARGO_BIN_EXE_tidewater"));
        c.args([
            "sweep",
            spec.to_str().unwrap(),
            "--threads",
            "1",
            "--summary",
            "false",
            "--out",
        ])
        .arg(&out);
        c
    };
    let first = sweep()
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // The first holds the lock before it writes the result file's header.
    for _ in 0..400 {
        if out.exists() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(25));
    }
    assert!(out.exists(), "the first sweep started writing");
    let second = sweep().output().unwrap();
    let stderr = String::from_utf8_lossy(&second.stderr);
    assert_eq!(second.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&format!(
            "another tidewater sweep or merge is writing {}",
            out.display()
        )),
        "{stderr}"
    );
    // A merge of the shard still being written is refused, and so is a
    // merge into it.
    let merge = |inputs: &[&Path], into: &Path| {
        Command::new(env!("CARGO_BIN_EXE_tidewater"))
            .arg("merge")
            .args(inputs)
            .arg("--out")
            .arg(into)
            .output()
            .unwrap()
    };
    let merged = dir.join("merged.csv");
    let m = merge(&[&out], &merged);
    let err = String::from_utf8_lossy(&m.stderr);
    assert_eq!(m.status.code(), Some(2), "{err}");
    assert!(err.contains("still writing this shard"), "{err}");
    assert!(!merged.exists());
    let m = merge(&[&merged], &out);
    let err = String::from_utf8_lossy(&m.stderr);
    assert_eq!(m.status.code(), Some(2), "{err}");
    assert!(
        err.contains("another tidewater sweep or merge is writing"),
        "{err}"
    );
    let first = first.wait_with_output().unwrap();
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let rows = std::fs::read_to_string(&out).unwrap();
    let mut members: Vec<usize> = rows
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    members.sort_unstable();
    assert_eq!(members, (0..2000).collect::<Vec<_>>(), "each member once");

    // The lock went with the first run: a rerun resumes (nothing to do).
    let again = sweep().output().unwrap();
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
    std::fs::remove_dir_all(&dir).unwrap();
}
