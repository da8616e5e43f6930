//! Causes of hyponatremia behave as their physiology says (common practice
//! unless noted).

use tidewater::Sex;

use tidewater::{Patient, Plan, Simulation};
use tidewater_checks::*;

fn patient(na: f64, cause: &str) -> Patient {
    Patient {
        na: Some(na),
        cause: Some(cause.parse().expect("a cause")),
        ..Patient::healthy(Sex::Male, 45.0, 75.0)
    }
}

#[test]
fn every_cause_starts_steady_or_explains_why_not() {
    // Causes whose initial state is a steady state (habitual intake
    // balances output): sodium stays within 0.3 mmol/L over 24 h.
    for cause in [
        "hypovolemic",
        "inappropriate_antidiuresis",
        "reset_osmostat",
        "low_solute_intake",
    ] {
        let traj = run(Plan::new(patient(128.0, cause))
            .run_for(24.0)
            .sample_every(1.0));
        assert_balanced(&traj);
        let drift = (traj.last().obs.na_mmol_l - 128.0).abs();
        assert!(drift < 0.3, "{cause}: drifted {drift:.2}");
    }
    // Without a cause, hyponatremia is not sustained (vasopressin is
    // suppressed at plasma osmolality ~266 and the kidney excretes the
    // excess water), so a start at 128 with no cause is refused, and the
    // message lists the causes with what each implies.
    let err = Simulation::new(Plan::new(patient(128.0, "none"))).expect_err("refused");
    let text = err.to_string();
    assert!(text.contains("reference interval"), "{text}");
    for name in [
        "hypovolemic",
        "inappropriate_antidiuresis",
        "primary_polydipsia",
    ] {
        assert!(text.contains(name), "{text}");
    }
}

#[test]
fn unknown_cause_is_a_named_error() {
    // The word is refused where it is read, naming the field and the causes.
    let err = "bad_luck"
        .parse::<tidewater::Cause>()
        .expect_err("an error");
    assert_eq!(err.field(), "cause");
    assert!(
        err.to_string().contains("inappropriate_antidiuresis"),
        "{err}"
    );
}

#[test]
fn reset_osmostat_defends_its_lower_sodium() {
    // A reset osmostat holds a lower sodium: after a water load the excess
    // is excreted and sodium returns to its starting value, not to 140.
    let traj = run(Plan::new(patient(127.0, "reset_osmostat"))
        .run_for(12.0)
        .start(1.0, give("water", 1.0, 0.5)));
    assert_balanced(&traj);
    let low = traj
        .samples
        .iter()
        .map(|s| s.obs.na_mmol_l)
        .fold(f64::INFINITY, f64::min);
    assert!(low < 125.5, "{low}");
    assert!(
        (traj.last().obs.na_mmol_l - 127.0).abs() < 1.0,
        "{}",
        traj.last().obs.na_mmol_l
    );
}

#[test]
fn low_solute_intake_limits_water_excretion() {
    // "Beer potomania" (common practice): the kidney can excrete at most
    // solute / minimal urine osmolality. With little salt and protein, 8 L of
    // fluid a day exceeds that and sodium falls; with a normal diet the same
    // intake is excreted.
    let plan = |cause: &str| {
        Plan::new(patient(138.0, cause))
            .run_for(72.0)
            .sample_every(1.0)
            .set_param("habitual_water_l_day", 8.0)
            .unwrap()
    };
    let low = run(plan("low_solute_intake"));
    let normal = run(plan("none"));
    assert_balanced(&low);
    let (l, n) = (low.last().obs.na_mmol_l, normal.last().obs.na_mmol_l);
    assert!(l < 133.0, "low solute: {l:.1}");
    assert!(n > 135.5, "normal diet: {n:.1}");
}

#[test]
fn hypovolemic_vasopressin_fades_as_volume_is_restored() {
    // docs/model.md, the kidney: the non-osmotic stimulus fades as volume returns.
    let traj = run(Plan::new(patient(124.0, "hypovolemic"))
        .run_for(12.0)
        .start(0.0, give("saline_0_9", 1.5, 3.0)));
    let (start, later) = (
        traj.samples[0].obs.vasopressin_pmol_l,
        traj.at(4.0).obs.vasopressin_pmol_l,
    );
    assert!(
        start > 3.0 && later < 0.5 * start,
        "{start:.2} -> {later:.2}"
    );
}
