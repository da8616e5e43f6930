//! Unit tests of the dossier loader and runner.

use super::*;

fn dir_with(scenarios: &[&str]) -> tempdir::Dir {
    tempdir::Dir::new(scenarios)
}

/// A throwaway dossier folder (no external crate: a folder under the
/// system temporary directory, removed on drop).
mod tempdir {
    pub struct Dir(pub std::path::PathBuf);
    impl Dir {
        pub fn new(scenarios: &[&str]) -> Dir {
            use std::sync::atomic::{AtomicUsize, Ordering};
            static N: AtomicUsize = AtomicUsize::new(0);
            let p = std::env::temp_dir().join(format!(
                "tidewater-validation-{}-{}",
                std::process::id(),
                N.fetch_add(1, Ordering::Relaxed)
            ));
            std::fs::create_dir_all(p.join(super::SCENARIOS_DIR)).unwrap();
            for s in scenarios {
                std::fs::write(p.join(super::SCENARIOS_DIR).join(s), "run_for(hours(1));\n")
                    .unwrap();
            }
            Dir(p)
        }
    }
    impl Drop for Dir {
        fn drop(&mut self) {
            let _ = std::fs::remove_dir_all(&self.0);
        }
    }
}

const GOOD: &str = "checks:
  - id: one
    topic: water loading
    source_key: paper2000
    source: \"Author A. A paper. J Test 2000;1:1-2\"
    published: {text: \"1 ± 1\", value: 1, unit: mmol/L}
    range: [0, 2]
    range_basis: mean ± 2 SD
    scenario: a.rhai
    metric: na_change
    args: {at_h: 1}
";

fn err(text: &str) -> ValidationError {
    let d = dir_with(&["a.rhai"]);
    Dossier::from_text(&d.0, "checks.yaml", text).unwrap_err()
}

#[test]
fn a_good_dossier_loads() {
    let d = dir_with(&["a.rhai"]);
    let dossier = Dossier::from_text(&d.0, "checks.yaml", GOOD).unwrap();
    assert_eq!(dossier.checks.len(), 1);
    assert_eq!(dossier.checks[0].line, 2);
    assert_eq!(dossier.distinct_sources(), 1);
}

#[test]
fn errors_name_file_line_and_field() {
    let e = err(&GOOD.replace("na_change", "na_chang"));
    let s = e.to_string();
    assert!(
        s.starts_with("checks.yaml:10: check one: metric: unknown metric \"na_chang\""),
        "{s}"
    );
    assert!(s.contains("did you mean \"na_change\""), "{s}");

    let s = err(&GOOD.replace("[0, 2]", "[2, 0]")).to_string();
    assert!(s.starts_with("checks.yaml:7: check one: range:"), "{s}");

    let s = err(&GOOD.replace("{at_h: 1}", "{at: 1}")).to_string();
    assert!(s.contains("args") && s.contains("needs at_h"), "{s}");

    let s = err(&GOOD.replace("{at_h: 1}", "{at_h: 1, load_ml: 3}")).to_string();
    assert!(
        s.contains("args.load_ml") && s.contains("takes no argument"),
        "{s}"
    );

    let s = err(&GOOD.replace("a.rhai", "missing.rhai")).to_string();
    assert!(
        s.starts_with("checks.yaml:9: check one: scenario:") && s.contains("does not exist"),
        "{s}"
    );

    let s = err(&GOOD.replace("    range_basis", "    colour: red\n    range_basis")).to_string();
    assert!(
        s.starts_with("checks.yaml:8:") && s.contains("unknown field `colour`"),
        "{s}"
    );
}

#[test]
fn one_source_key_one_citation_and_ids_unique() {
    let second = GOOD
        .split_once("\n")
        .unwrap()
        .1
        .replace("id: one", "id: two");
    let s = err(&format!(
        "{GOOD}{}",
        second.replace("J Test 2000", "J Other 2001")
    ))
    .to_string();
    assert!(
        s.contains("check two: source:") && s.contains("cited differently by check one"),
        "{s}"
    );
    let s = err(&format!("{GOOD}{}", GOOD.split_once("\n").unwrap().1)).to_string();
    assert!(s.contains("id: this id is used by an earlier check"), "{s}");
}

#[test]
fn an_expected_failure_needs_a_reason() {
    let s = err(&format!("{GOOD}    expected_failure: \"no\"\n")).to_string();
    assert!(
        s.contains("expected_failure: give the physiological reason"),
        "{s}"
    );
}

fn check(range: [f64; 2], expected_failure: Option<&str>) -> Check {
    let d = dir_with(&["a.rhai"]);
    let mut c = Dossier::from_text(&d.0, "checks.yaml", GOOD)
        .unwrap()
        .checks
        .remove(0);
    c.range = range;
    c.expected_failure = expected_failure.map(String::from);
    c
}

#[test]
fn statuses_follow_range_and_mark() {
    let run = run_scenario_text(
        "patient(#{ sex: \"male\", age_years: 30, weight_kg: 70 }); run_for(hours(2));",
    );
    let cases = [
        ([-1.0, 1.0], None, Status::Pass),
        ([5.0, 6.0], None, Status::Fail),
        (
            [5.0, 6.0],
            Some("a mechanism is missing"),
            Status::ExpectedFailure,
        ),
        (
            [-1.0, 1.0],
            Some("a mechanism is missing"),
            Status::UnexpectedPass,
        ),
    ];
    for (range, mark, want) in cases {
        let c = check(range, mark);
        let r = evaluate(&c, &run);
        assert_eq!(r.status, want, "{range:?} {mark:?}");
        let msg = r.message(&c, "checks.yaml");
        if want == Status::UnexpectedPass {
            assert!(msg.contains("remove the mark"), "{msg}");
        }
    }
    let r = evaluate(&check([0.0, 1.0], None), &Err("boom".into()));
    assert!(matches!(r.status, Status::Error(ref e) if e.contains("boom")));
}

fn run_scenario_text(src: &str) -> RunResult {
    let s = Scenario::from_source("t.rhai", src, Path::new(".")).map_err(|e| e.to_string())?;
    let facts = RunFacts {
        weight_kg: s.plan().patient.weight_kg,
    };
    Ok((s.run().map_err(|e| e.to_string())?.trajectory, facts))
}
