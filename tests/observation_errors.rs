//! A corpus of bad observed-labs files (`tests/bad_observations/`): each
//! must be refused by `Observations::load` with a message that names the
//! file, the line and the column, never with a panic. Each `NAME.csv` has a
//! sidecar `NAME.expect`: fragments the message must contain, one per line
//! (the first names `NAME.csv:line:column (header)`).

use std::path::{Path, PathBuf};
use tidewater::observations::{Lab, Observations};

fn corpus() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad_observations");
    let mut out: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("bad_observations folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "csv"))
        .collect();
    out.sort();
    out
}

#[test]
fn the_corpus_covers_the_cases_the_issue_names() {
    let names: Vec<String> = corpus()
        .iter()
        .map(|p| p.file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    for needed in [
        "unsorted_times",
        "unknown_column",
        "text_in_number",
        "sodium_400",
    ] {
        assert!(names.iter().any(|n| n == needed), "{needed} missing");
    }
    assert!(names.len() >= 12, "{}", names.len());
}

#[test]
fn every_bad_observation_file_is_refused_naming_file_line_column_and_problem() {
    let mut problems = Vec::new();
    for path in corpus() {
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let result = std::panic::catch_unwind(|| Observations::load(&path));
        let text = match result {
            Err(_) => {
                problems.push(format!("{name}: panicked"));
                continue;
            }
            Ok(Ok(_)) => {
                problems.push(format!("{name}: accepted"));
                continue;
            }
            Ok(Err(e)) => e.to_string(),
        };
        println!("--- {name}\n{text}\n");
        let Ok(expect) = std::fs::read_to_string(path.with_extension("expect")) else {
            problems.push(format!("{name}: no .expect file"));
            continue;
        };
        let fragments: Vec<&str> = expect.lines().filter(|l| !l.trim().is_empty()).collect();
        if fragments.is_empty() {
            problems.push(format!("{name}.expect: holds no fragment"));
        }
        if !fragments
            .first()
            .is_some_and(|f| f.starts_with(name.as_str()))
        {
            problems.push(format!(
                "{name}.expect: the first fragment must name the file"
            ));
        }
        for f in fragments {
            if !text.contains(f) {
                problems.push(format!("{name}: {f:?} not in:\n{text}"));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn the_bundled_example_parses() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios/observations/nausea_settles_labs.csv");
    let obs = Observations::load(&path).unwrap_or_else(|e| panic!("{e}"));
    let na_times: Vec<f64> = obs
        .rows
        .iter()
        .filter(|r| r.get(Lab::Na).is_some())
        .map(|r| r.time_h)
        .collect();
    assert_eq!(na_times, [0.0, 2.0, 4.0, 6.0, 8.0]);
    assert!(obs.labs().contains(&Lab::UrineMl));
    assert_eq!(obs.last_time_h(), 8.0);
    // Every row from 2 h on holds the urine collected since the row before.
    assert_eq!(obs.urine_collections().len(), 4);
}
