//! A cause that resolves during a run, and parameters changed by a rule.
//!
//! Fact of the trade (common practice; reviews of overcorrection, from
//! memory): when the stimulus to vasopressin goes away during a correction
//! (volume restored, a drug stopped, nausea or pain relieved, cortisol
//! replaced), a water diuresis of several hundred mL/h with urine below
//! 100 mOsm/kg follows, and sodium can rise by more than 10 mmol/L in 24 h
//! although no more sodium is given.

use std::path::Path;
use tidewater::scenario::Scenario;

const PATIENT: &str = r#"patient(#{ sex: "female", age_years: 58, weight_kg: 66,
    na: 122, onset: "chronic", cause: "inappropriate_antidiuresis" });
run_for(hours(30));
at(hours(0), fluid_restriction(litres(1)));
"#;

fn run(extra: &str) -> tidewater::scenario::ScenarioRun {
    let source = format!("{PATIENT}{extra}");
    Scenario::from_source("cause_change", &source, Path::new("."))
        .unwrap_or_else(|e| panic!("{e}"))
        .run()
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn a_resolved_antidiuresis_brings_a_water_diuresis_and_a_fast_rise() {
    let held = run("");
    let resolved = run("at(hours(6), resolve_cause());\n");
    let (h, r) = (&held.trajectory, &resolved.trajectory);
    // Before the change the two runs are the same (to the solver tolerance:
    // the planned change is a break the solver steps to).
    assert!((h.at(5.0).obs.na_mmol_l - r.at(5.0).obs.na_mmol_l).abs() < 1e-6);
    // Held antidiuresis: concentrated urine, sodium nearly flat.
    assert!(h.at(9.0).obs.urine_osm_mosm_kg > 300.0);
    assert!(h.largest_rise(24.0).0 < 4.0, "{:?}", h.largest_rise(24.0));
    // Resolved: dilute urine at several hundred mL/h within 3 h ...
    let u = r.at(9.0).obs;
    assert!(u.urine_osm_mosm_kg < 100.0, "{}", u.urine_osm_mosm_kg);
    assert!(u.urine_ml_h > 250.0, "{}", u.urine_ml_h);
    // ... and a rise beyond the 10 mmol/L per 24 h limit.
    assert!(r.largest_rise(24.0).0 > 10.0, "{:?}", r.largest_rise(24.0));
    assert!(r.balance.iter().all(|b| b.max_relative_residual < 1e-6));
}

#[test]
fn a_rule_that_sets_the_floor_to_zero_is_the_same_as_resolving_the_cause() {
    let by_rule = run(
        "let done = false;\nevery(hours(1), |labs| { if !done && labs.time_h >= 6 { done = true; set_param(\"avp_floor_pmol_l\", 0); } });\n",
    );
    let by_plan = run("at(hours(6), resolve_cause());\n");
    for t in [5.0, 8.0, 12.0, 30.0] {
        let (a, b) = (
            by_rule.trajectory.at(t).obs.na_mmol_l,
            by_plan.trajectory.at(t).obs.na_mmol_l,
        );
        assert!((a - b).abs() < 1e-3, "at {t} h: {a} vs {b}");
    }
}

#[test]
fn a_resolved_polydipsia_stops_the_drinking() {
    let src = r#"patient(#{ sex: "male", age_years: 40, weight_kg: 70,
    na: 131, onset: "chronic", cause: "primary_polydipsia" });
run_for(hours(12));
at(hours(2), resolve_cause());
"#;
    let run = Scenario::from_source("polydipsia", src, Path::new("."))
        .unwrap()
        .run()
        .unwrap();
    let t = &run.trajectory;
    // Twelve litres a day before, the default two and a half after.
    let before = t.at(1.0).inputs.oral_water_l_h;
    let after = t.at(3.0).inputs.oral_water_l_h;
    assert!((before - 0.5).abs() < 1e-9, "{before}");
    assert!((after - 2.5 / 24.0).abs() < 1e-9, "{after}");
    assert!(t.at(12.0).obs.na_mmol_l > t.at(2.0).obs.na_mmol_l);
}

/// A patient free to drink who is put on a fluid restriction or nil by
/// mouth drinks only what is allowed (common practice: a restriction is a
/// limit on all drinking): the order ends drinking at will, so the course
/// equals the one where thirst is switched off by hand at the same time.
#[test]
fn a_restriction_or_nil_by_mouth_ends_drinking_at_will() {
    let start = r#"patient(#{ sex: "male", age_years: 30, weight_kg: 75 });
set_param("thirst_enabled", 1.0);
run_for(hours(24));
"#;
    let sodium_24h = |extra: &str| {
        let source = format!("{start}{extra}");
        let run = Scenario::from_source("thirst", &source, Path::new("."))
            .unwrap_or_else(|e| panic!("{e}"))
            .run()
            .unwrap_or_else(|e| panic!("{e}"));
        run.trajectory.at(24.0).obs.na_mmol_l
    };
    for order in ["nil_by_mouth()", "fluid_restriction(ml(500))"] {
        let ordered = sodium_24h(&format!("at(hours(2), {order});\n"));
        let by_hand = sodium_24h(&format!(
            "at(hours(2), {order});\nat(hours(2), change_param(\"thirst_enabled\", 0.0));\n"
        ));
        let thirsty = sodium_24h(&format!(
            "at(hours(2), {order});\nat(hours(2.01), change_param(\"thirst_enabled\", 1.0));\n"
        ));
        assert!(
            (ordered - by_hand).abs() < 1e-6,
            "{order}: {ordered} vs {by_hand}"
        );
        // Drinking at will would have held sodium down.
        assert!(ordered > thirsty + 0.5, "{order}: {ordered} vs {thirsty}");
    }
}
