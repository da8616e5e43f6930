//! Finding scenario scripts: the one place that knows a script by its
//! `.rhai` file name ending, for `check` and `render-reports`.

use anyhow::{Context, Result};
use std::path::{Path, PathBuf};

/// The file name ending of a scenario script.
pub const EXTENSION: &str = "rhai";

/// Whether `path` is a scenario script file.
pub fn is_script(path: &Path) -> bool {
    path.is_file() && path.extension().is_some_and(|e| e == EXTENSION)
}

/// The scenario scripts directly in `dir` (not recursive), sorted by name.
pub fn in_folder(dir: &Path) -> Result<Vec<PathBuf>> {
    let reading = || format!("reading {}", dir.display());
    let mut found = Vec::new();
    for entry in std::fs::read_dir(dir).with_context(reading)? {
        let path = entry.with_context(reading)?.path();
        if is_script(&path) {
            found.push(path);
        }
    }
    found.sort();
    Ok(found)
}

/// A script's file stem (`bolus` for `scenarios/bolus.rhai`).
pub fn stem(path: &Path) -> String {
    path.file_stem()
        .unwrap_or_default()
        .to_string_lossy()
        .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_script_files_sorted_by_name() {
        let dir = tempfile::tempdir().unwrap();
        for name in ["b.rhai", "a.rhai", "notes.txt", "c.rhai.bak"] {
            std::fs::write(dir.path().join(name), "").unwrap();
        }
        // A folder whose name ends in .rhai is no script.
        std::fs::create_dir(dir.path().join("d.rhai")).unwrap();
        let found = in_folder(dir.path()).unwrap();
        let names: Vec<String> = found.iter().map(|p| stem(p)).collect();
        assert_eq!(names, ["a", "b"]);
        assert!(in_folder(&dir.path().join("missing"))
            .unwrap_err()
            .to_string()
            .starts_with("reading "));
    }
}
