//! Model checks M4 and M5 of REFERENCES.md: where infused water goes.
//! Common practice: about one quarter of an isotonic crystalloid stays in
//! the plasma once it has equilibrated, the rest is interstitial; 5 %
//! dextrose, once its glucose is metabolised, distributes like water (about
//! 7–10 % in plasma, two thirds in cells).

use tidewater::Sex;

use tidewater::{Patient, Plan};
use tidewater_checks::*;

#[test]
fn m4_isotonic_saline_stays_one_quarter_intravascular() {
    let plan = Plan::new(Patient::healthy(Sex::Male, 40.0, 70.0))
        .closed_system()
        .run_for(6.0)
        .start(0.0, give("saline_0_9", 1.0, 0.5));
    let traj = run(plan);
    assert_balanced(&traj);
    let (a, b) = (&traj.samples[0].obs, &traj.last().obs);
    let plasma = b.plasma_l - a.plasma_l;
    let interstitium = b.interstitium_l - a.interstitium_l;
    let cells = b.cells_l - a.cells_l;
    assert!(
        (0.20..=0.30).contains(&plasma),
        "plasma kept {plasma:.3} L of 1 L"
    );
    assert!(interstitium > 0.65, "interstitium took {interstitium:.3} L");
    assert!(
        cells.abs() < 0.005 * a.cells_l,
        "cells changed by {cells:.3} L"
    );
    // Equilibrated: filtration back to lymph flow.
    assert!((b.filtration_ml_h - b.lymph_ml_h).abs() < 5.0);
}

#[test]
fn m5_dextrose_distributes_like_water() {
    let plan = Plan::new(Patient::healthy(Sex::Male, 40.0, 70.0))
        .closed_system()
        .run_for(12.0)
        .start(0.0, give("dextrose_5", 1.0, 1.0));
    let traj = run(plan);
    assert_balanced(&traj);
    let (a, b) = (&traj.samples[0].obs, &traj.last().obs);
    assert!(
        (b.glucose_mmol_l - a.glucose_mmol_l).abs() < 0.05,
        "glucose metabolised"
    );
    let total = b.total_water_l - a.total_water_l;
    let plasma = (b.plasma_l - a.plasma_l) / total;
    let cells =
        (b.cells_l + b.red_cells_l + b.brain_l - a.cells_l - a.red_cells_l - a.brain_l) / total;
    // Expected failure, kept: the rule of thumb's 7-10 % in plasma assumes a
    // plasma of one quarter of extracellular water (3-3.5 L for 70 kg). The
    // model now sizes blood volume by published prediction (70 mL/kg in men
    // without a height, Nadler 1962 with one), which gives 2.7 L of plasma
    // and ~5.5 % of the water in plasma. The range is not widened; this
    // asserts the known departure so that a change is noticed.
    assert!(
        (0.045..0.07).contains(&plasma),
        "plasma share {plasma:.3}: the expected failure changed; revisit the rule of thumb"
    );
    assert!((0.60..=0.72).contains(&cells), "cell share {cells:.3}");
}

/// The body-water rule of thumb (0.5 L/kg for a woman under 65, common
/// practice) can be overridden by name, and the override reaches the
/// patient's volumes, not only the parameter table.
#[test]
fn a_body_water_fraction_override_sizes_the_compartments() {
    let sim = |fraction: Option<f64>| {
        let mut plan = Plan::new(Patient::healthy(Sex::Female, 50.0, 60.0)).run_for(1.0);
        if let Some(f) = fraction {
            plan = plan.set_param("tbw_fraction_woman", f).unwrap();
        }
        tidewater::Simulation::new(plan).unwrap()
    };
    assert!((sim(None).patient().total_water_l - 30.0).abs() < 1e-9);
    assert!((sim(Some(0.45)).patient().total_water_l - 27.0).abs() < 1e-9);
    let traj = run(Plan::new(Patient::healthy(Sex::Female, 50.0, 60.0))
        .run_for(1.0)
        .set_param("tbw_fraction_woman", 0.45)
        .unwrap());
    assert!((traj.samples[0].obs.total_water_l - 27.0).abs() < 1e-6);
}
