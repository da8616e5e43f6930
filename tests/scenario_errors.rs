//! A corpus of bad scripts and data files (`tests/bad_scripts/`): each must
//! fail with a message that names the file and the line and says what is
//! wrong, never with a panic. Each `NAME.rhai` has a sidecar `NAME.expect`:
//! a first line `line: N` (the script line the message must name) and then
//! fragments the message must contain, one per line.

use std::path::{Path, PathBuf};
use tidewater::scenario::{Scenario, ScenarioError};

fn corpus() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad_scripts");
    let mut out: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("bad_scripts folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "rhai"))
        .collect();
    out.sort();
    out
}

/// Load and run; the error a user would see.
fn failure(path: &Path) -> Option<ScenarioError> {
    match Scenario::load(path) {
        Err(e) => Some(e),
        Ok(s) => s.run().err(),
    }
}

#[test]
fn the_corpus_is_large_enough() {
    assert!(corpus().len() >= 25, "{}", corpus().len());
}

#[test]
fn every_bad_script_fails_naming_file_line_and_problem() {
    let mut problems = Vec::new();
    for path in corpus() {
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let result = std::panic::catch_unwind(|| failure(&path));
        let err = match result {
            Err(_) => {
                problems.push(format!("{name}: panicked"));
                continue;
            }
            Ok(None) => {
                problems.push(format!("{name}: ran without an error"));
                continue;
            }
            Ok(Some(e)) => e,
        };
        let text = err.to_string();
        println!("--- {name}\n{text}\n");
        let expect_path = path.with_extension("expect");
        let Ok(expect) = std::fs::read_to_string(&expect_path) else {
            problems.push(format!("{name}: no .expect file"));
            continue;
        };
        let mut lines = expect.lines();
        let line: usize = lines
            .next()
            .and_then(|l| l.strip_prefix("line:"))
            .and_then(|l| l.trim().parse().ok())
            .unwrap_or_else(|| panic!("{name}.expect: first line must be `line: N`"));
        // The message names the script (or the data file, which in turn
        // names the script) and the line.
        if !text.contains(&name) {
            problems.push(format!("{name}: message does not name the file:\n{text}"));
        }
        // Line 0: an error about the script as a whole (nothing to point at).
        if line > 0 && !text.contains(&format!("{name}:{line}")) {
            problems.push(format!(
                "{name}: message does not point at line {line}:\n{text}"
            ));
        }
        if err.line() != line {
            problems.push(format!(
                "{name}: error line {} instead of {line}",
                err.line()
            ));
        }
        for fragment in lines.map(str::trim).filter(|l| !l.is_empty()) {
            if !text.contains(fragment) {
                problems.push(format!("{name}: message lacks \"{fragment}\":\n{text}"));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n\n"));
}
