//! Every file a sweep writes has the same mode: the one a plain file
//! created by this process gets (the umask decides it), not the owner-only
//! mode of a temporary file.

#[cfg(unix)]
#[test]
fn every_file_of_a_sweep_has_the_mode_of_a_plain_file() {
    use std::os::unix::fs::PermissionsExt;
    use std::path::Path;

    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let script = root
        .join("scenarios/nausea_settles.rhai")
        .canonicalize()
        .unwrap();
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-modes-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("spec.yaml");
    std::fs::write(
        &spec,
        format!(
            "scenario: {}\ndesign: grid\nparameters:\n  - name: patient.water_fraction\n    values: [0.45, 0.5, 0.55]\noutputs:\n  na_at_h: [6]\n",
            script.display()
        ),
    )
    .unwrap();
    let out = dir.join("results").join("r.csv");
    let run = std::process::Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["sweep", spec.to_str().unwrap(), "--threads", "1", "--out"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let plain = dir.join("plain");
    std::fs::File::create(&plain).unwrap();
    let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    let expected = mode(&plain);
    let mut seen = Vec::new();
    for entry in std::fs::read_dir(out.parent().unwrap()).unwrap() {
        let path = entry.unwrap().path();
        seen.push(path.file_name().unwrap().to_string_lossy().to_string());
        assert_eq!(
            mode(&path),
            expected,
            "{} is {:o}, a plain file {:o}",
            path.display(),
            mode(&path),
            expected
        );
    }
    seen.sort();
    assert_eq!(
        seen,
        [
            "r.csv",
            "r.csv.fingerprint",
            "r.csv.lock",
            "sensitivity.svg",
            "sensitivity_by_output.svg",
            "sodium_bands.svg",
            "summary.json"
        ]
    );
    std::fs::remove_dir_all(&dir).unwrap();
}
