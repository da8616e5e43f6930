//! The validation dossier (`tests/validation/`): the model against
//! published human data. Every check names its source in `checks.yaml`
//! (authors, journal, year, volume:pages; "common practice"; "from memory"
//! where a value was recalled), and its acceptance range was fixed from the
//! publication before the model was run on it.
//!
//! This test fails when a check without `expected_failure` misses its
//! range, when a check marked `expected_failure` now passes (remove the
//! mark), when a scenario or metric cannot be evaluated, or when the
//! dossier shrinks below 30 checks or 12 distinct published sources.

use std::path::Path;
use tidewater::validation::{Dossier, Status};

const MIN_CHECKS: usize = 30;
const MIN_SOURCES: usize = 12;

#[test]
fn the_model_meets_the_validation_dossier() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/validation");
    let dossier = Dossier::load(&dir).unwrap_or_else(|e| panic!("{e}"));
    assert!(
        dossier.checks.len() >= MIN_CHECKS,
        "the dossier has {} checks; it must keep at least {MIN_CHECKS}",
        dossier.checks.len()
    );
    assert!(
        dossier.distinct_sources() >= MIN_SOURCES,
        "the dossier cites {} distinct published sources; it must keep at least {MIN_SOURCES}",
        dossier.distinct_sources()
    );
    let outcome = dossier.run(2);
    let file = dossier.file();
    let mut problems = Vec::new();
    for (check, result) in dossier.checks.iter().zip(&outcome.results) {
        if !result.status.as_expected() {
            problems.push(result.message(check, &file));
        }
    }
    let expected = outcome.count(|s| *s == Status::ExpectedFailure);
    assert!(
        problems.is_empty(),
        "{} of {} checks did not come out as the dossier expects ({} expected failures):\n{}",
        problems.len(),
        dossier.checks.len(),
        expected,
        problems.join("\n")
    );
}

/// The dossier's README documents every metric and series of the
/// vocabulary (a name the page or a check may use must be explained).
#[test]
fn the_readme_documents_the_whole_vocabulary() {
    let readme = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/validation/README.md"),
    )
    .expect("tests/validation/README.md");
    for (_, info) in tidewater::validation::metrics::METRICS {
        assert!(
            readme.contains(&format!("| `{}` |", info.name)),
            "tests/validation/README.md does not document the metric {}",
            info.name
        );
    }
    for (_, name, _) in tidewater::validation::metrics::SERIES {
        assert!(
            readme.contains(&format!("`{name}`")),
            "tests/validation/README.md does not document the series {name}"
        );
    }
}
