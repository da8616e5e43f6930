//! Absorption of what is drunk: the gut lumen (docs/model.md, the gut).
//!
//! Source: Péronnet et al. 2012, pharmacokinetics of 300 mL of ingested
//! D2O-labelled water in 36 adults: the water appears in plasma within
//! 5 min, absorption half-life ~11-13 min, absorption complete within
//! ~75-120 min (abstract read; journal details from memory).

use tidewater::Sex;

use tidewater::{Patient, Plan, Stream};
use tidewater_checks::*;

fn drink_water(volume_l: f64, minutes: f64) -> Stream {
    Stream::drink(fluids().get("water").unwrap(), volume_l, minutes / 60.0).unwrap()
}

fn closed_woman() -> Plan {
    // A closed system isolates absorption from excretion.
    Plan::new(Patient {
        na: Some(140.0),
        ..Patient::healthy(Sex::Female, 30.0, 60.0)
    })
    .closed_system()
    .sample_every(1.0 / 60.0)
}

#[test]
fn a_drink_reaches_plasma_over_tens_of_minutes_not_at_once() {
    let traj = run(closed_woman()
        .run_for(3.0)
        .start(0.0, drink_water(0.3, 1.0)));
    assert_balanced(&traj);
    let gut = |t: f64| traj.at(t).obs.gut_ml;
    // Just after the minute of drinking nearly all of it is still in the
    // gut (at most ~6 % absorbed in the first minute, half-life 12 min).
    assert!(gut(1.0 / 60.0) > 280.0, "gut at 1 min {}", gut(1.0 / 60.0));
    // Half absorbed one half-life (11-13 min) after drinking.
    let half = gut(13.0 / 60.0);
    assert!((120.0..=170.0).contains(&half), "gut at 13 min {half}");
    // Complete (< 5 % left) by 75-120 min.
    assert!(gut(1.5) < 15.0, "gut at 90 min {}", gut(1.5));
}

#[test]
fn what_is_absorbed_spreads_through_body_water_and_sodium_settles_at_dilution() {
    // Closed system: 1.2 L of water into 30 L of body water. Once absorbed
    // and equilibrated, sodium is the closed-system dilution
    // 140 x 30 / 31.2 (conservation of mass, common practice), to 0.3.
    let plan = closed_woman()
        .run_for(4.0)
        .start(0.0, drink_water(1.2, 15.0));
    let traj = run(plan);
    let tbw0 = traj.samples[0].obs.total_water_l;
    let na_end = traj.last().obs.na_mmol_l;
    let expect = 140.0 * tbw0 / (tbw0 + 1.2);
    assert!((na_end - expect).abs() < 0.3, "{na_end} vs {expect}");
    // Total body water excludes what is still in the gut: at 5 min most of
    // the drink is not yet body water.
    let early = traj.at(5.0 / 60.0);
    assert!(early.obs.total_water_l - tbw0 < 0.5 * 1.2 / 3.0 + 0.1);
    assert!(early.obs.gut_ml > 200.0);
}

#[test]
fn an_infusion_does_not_pass_through_the_gut() {
    let traj = run(closed_woman()
        .run_for(1.0)
        .start(0.0, give("water", 0.3, 0.25)));
    assert!(traj.samples.iter().all(|s| s.obs.gut_ml.abs() < 1e-9));
}

#[test]
fn albumin_cannot_be_drunk() {
    let err = Stream::drink(fluids().get("albumin_5").unwrap(), 0.5, 1.0).unwrap_err();
    assert!(err.to_string().contains("albumin"), "{err}");
}
