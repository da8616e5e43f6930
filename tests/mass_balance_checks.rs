//! Model check M9 of REFERENCES.md (conservation of mass): water and every
//! solute balance to 1e-6 relative at every sample, whatever the scenario:
//! body content now = initial + intake − losses.

use tidewater::{Cause, Sex};

use tidewater::{Action, FluidLibrary, Patient, Plan, Stream};
use tidewater_checks::*;

#[test]
fn m9_busy_scenario_with_kidneys_balances_at_every_sample() {
    let lib = FluidLibrary::bundled();
    let patient = Patient {
        na: Some(124.0),
        cause: Some(Cause::InappropriateAntidiuresis),
        k: Some(3.1),
        glucose_mmol_l: Some(9.0),
        albumin_g_l: Some(30.0),
        ..Patient::healthy(Sex::Female, 72.0, 61.0)
    };
    let plan = Plan::new(patient)
        .run_for(36.0)
        .start(0.0, give("saline_3", 0.15, 1.0 / 3.0))
        .start(0.5, give("albumin_20", 0.1, 1.0))
        .start(1.0, Stream::bleed(0.5, 0.5).unwrap())
        .start(
            2.0,
            Stream::lose(lib.get("gastric").unwrap(), 1.2, 6.0).unwrap(),
        )
        .start(
            3.0,
            Stream::give_at_rate(lib.get("lactated_ringers").unwrap(), 0.125).unwrap(),
        )
        .start(4.0, give("dextrose_10", 0.5, 4.0))
        .at(20.0, Action::Stop("lactated_ringers".into()))
        .start(22.0, give("water", 0.8, 0.5));
    let traj = run(plan);
    assert_balanced(&traj);
    // Every species really moved: the check is not vacuous.
    for b in &traj.balance {
        if b.species != "albumin" {
            assert!(b.output > 0.0, "{} has no output", b.species);
        }
        assert!(b.intake > 0.0, "{} has no intake", b.species);
    }
}

#[test]
fn m9_closed_system_balances_after_a_loss_of_blood() {
    let plan = Plan::new(Patient::healthy(Sex::Male, 30.0, 80.0))
        .closed_system()
        .run_for(12.0)
        .start(0.0, Stream::bleed(1.0, 1.0).unwrap())
        .start(1.0, give("saline_0_9", 2.0, 2.0));
    let traj = run(plan);
    assert_balanced(&traj);
    let (a, b) = (&traj.samples[0].obs, &traj.last().obs);
    // Crystalloid after bleeding dilutes the red cells.
    assert!(
        b.hematocrit < a.hematocrit - 0.03,
        "{} -> {}",
        a.hematocrit,
        b.hematocrit
    );
}
