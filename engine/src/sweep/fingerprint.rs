//! Fingerprints: a result file is resumed, or shards merged, only with
//! rows of the same spec, scenario and engine. The fingerprint lives in a
//! file beside the results (`results.csv.fingerprint`).

use super::error::{ResultProblem, SweepError};
use super::spec::SweepSpec;
use std::path::Path;

/// A stable fingerprint of everything that decides a sweep's rows: the
/// spec, the base scenario's text and the engine's version (64-bit FNV-1a,
/// hex). The header alone cannot tell a changed range or seed.
pub fn fingerprint(spec: &SweepSpec, scenario_source: &str) -> String {
    let spec_json = serde_json::to_string(spec).unwrap_or_default();
    let text = format!(
        "{spec_json}\n{scenario_source}\n{}",
        env!("CARGO_PKG_VERSION")
    );
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// The file beside a result file that holds its fingerprint
/// (`results.csv.fingerprint`).
pub fn fingerprint_path(out: &Path) -> std::path::PathBuf {
    let mut name = out.file_name().unwrap_or_default().to_os_string();
    name.push(".fingerprint");
    out.with_file_name(name)
}

/// The fingerprint beside a result file (`None` if there is none).
pub(super) fn read_fingerprint(out: &Path) -> Result<Option<String>, SweepError> {
    let side = fingerprint_path(out);
    match std::fs::read_to_string(&side) {
        Ok(t) => Ok(Some(t.trim().to_string())),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(SweepError::io(&side.display().to_string(), e)),
    }
}

/// Write the fingerprint beside a result file.
pub(super) fn write_fingerprint(out: &Path, fingerprint: &str) -> Result<(), SweepError> {
    let side = fingerprint_path(out);
    std::fs::write(&side, format!("{fingerprint}\n"))
        .map_err(|e| SweepError::io(&side.display().to_string(), e))
}

/// Before a sweep writes `out`: a new result file gets the fingerprint
/// beside it; an existing one (a run to resume) must carry the same one,
/// so that rows of another spec, scenario or engine are never mixed in.
pub fn claim_output(out: &Path, fingerprint: &str) -> Result<(), SweepError> {
    let name = out.display().to_string();
    if !out.exists() {
        return write_fingerprint(out, fingerprint);
    }
    match read_fingerprint(out)? {
        Some(f) if f == fingerprint => Ok(()),
        Some(found) => Err(SweepError::results(
            &name,
            ResultProblem::OtherFingerprint {
                found,
                expected: fingerprint.to_string(),
            },
        )),
        None => Err(SweepError::results(
            &name,
            ResultProblem::NoFingerprint {
                fingerprint_file: fingerprint_path(out)
                    .file_name()
                    .unwrap_or_default()
                    .to_string_lossy()
                    .into_owned(),
            },
        )),
    }
}
