//! Inputs that once crashed or hung a loader, each kept as a named test
//! (see DEVELOPERS.md, "Fuzzing"). Each asserts that the loader answers,
//! `Ok` or an error with a message, without a panic and within the bound
//! of the fuzz harness.
//!
//! The first ones are the loader inputs of issue 17 (found by hand and by
//! an earlier mutation run); inputs found by `engine/tests/fuzz.rs` are
//! added below them.

use std::sync::mpsc;
use std::time::Duration;
use tidewater::patient_from_yaml;
use tidewater::sweep::SweepSpec;
use tidewater::FluidLibrary;

/// The fuzz harness's bound: 20 s in release, 60 s in a debug build.
fn bound() -> Duration {
    Duration::from_secs(if cfg!(debug_assertions) { 60 } else { 20 })
}

/// Run `case` on its own thread; fail on a panic, on an empty error
/// message and on no answer within [`bound`].
fn answers<F>(what: &str, case: F)
where
    F: FnOnce() -> Result<(), String> + Send + 'static,
{
    let (tx, rx) = mpsc::channel();
    let handle = std::thread::Builder::new()
        .stack_size(64 << 20)
        .spawn(move || {
            let _ = tx.send(case());
        })
        .expect("spawn");
    match rx.recv_timeout(bound()) {
        Ok(Ok(())) => {}
        Ok(Err(message)) => assert!(!message.trim().is_empty(), "{what}: an empty error"),
        Err(mpsc::RecvTimeoutError::Disconnected) => {
            let _ = handle.join();
            panic!("{what}: the loader panicked");
        }
        Err(mpsc::RecvTimeoutError::Timeout) => {
            panic!("{what}: no answer within {} s", bound().as_secs())
        }
    }
}

/// A sweep spec in the shape of `scenarios/sweeps/bolus_dose_response.yaml`
/// with `band_every_h` set to `value`.
fn spec_with_band(value: &str) -> String {
    format!(
        "scenario: ../severe_chronic_boluses.rhai\ndesign: grid\n\
         parameters:\n  - name: patient.na\n    values: [120]\n\
         outputs:\n  na_at_h: [6]\n  band_every_h: {value}\n"
    )
}

// Issue 17: `band_every_h` of .inf / .nan panicked (index out of bounds)
// and 1e-300 overflowed a capacity when the sweep ran; the spec loader
// must answer for each without a panic.
#[test]
fn sweep_spec_band_every_inf() {
    let text = spec_with_band(".inf");
    answers("band_every_h: .inf", move || {
        SweepSpec::from_yaml(&text, "s.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

#[test]
fn sweep_spec_band_every_nan() {
    let text = spec_with_band(".nan");
    answers("band_every_h: .nan", move || {
        SweepSpec::from_yaml(&text, "s.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

#[test]
fn sweep_spec_band_every_tiny() {
    let text = spec_with_band("1e-300");
    answers("band_every_h: 1e-300", move || {
        SweepSpec::from_yaml(&text, "s.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

// Issue 17: YAML nested 100,000 deep took more than 30 s (serde_yaml's
// time grows with the square of the nesting). Now refused before the parser
// by the nesting bound of `tidewater::yaml` (64 levels).
fn nested(depth: usize) -> String {
    format!("{}{}", "[".repeat(depth), "]".repeat(depth))
}

#[test]
fn fluids_yaml_nested_100k_deep() {
    let text = format!("fluids: {}\n", nested(100_000));
    answers("fluids nested 100k deep", move || {
        FluidLibrary::from_yaml(&text, "f.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

#[test]
fn patient_yaml_nested_100k_deep() {
    let text = format!("sex: {}\n", nested(100_000));
    answers("patient nested 100k deep", move || {
        patient_from_yaml(&text, "p.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

#[test]
fn sweep_spec_nested_100k_deep() {
    let text = format!("parameters: {}\n", nested(100_000));
    answers("sweep spec nested 100k deep", move || {
        SweepSpec::from_yaml(&text, "s.yaml")
            .map(|_| ())
            .map_err(|e| e.to_string())
    });
}

// Issue 17: a fluids file of 400,000 fluids took more than 30 s (the
// duplicate-id check was quadratic). Now refused by the count bound
// (10,000 fluids per file) after a linear parse.
#[test]
fn fluids_yaml_400k_fluids() {
    let mut text = String::from("fluids:\n");
    for i in 0..400_000 {
        text.push_str(&format!(
            "  - {{ id: f{i}, name: \"f\", kind: given, na: 154, cl: 154 }}\n"
        ));
    }
    answers("400k fluids", move || {
        let e = FluidLibrary::from_yaml(&text, "f.yaml")
            .unwrap_err()
            .to_string();
        assert!(e.contains("at most 10000"), "{e}");
        Err(e)
    });
}
