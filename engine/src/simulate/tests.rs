//! Runs of the driver: steady state, a negative pool, a controller.

use crate::Sex;

use super::*;
use crate::error::SimulationError;
use crate::fluids::FluidLibrary;
use crate::patient::Patient;
use crate::plan::Snapshot;

#[test]
fn healthy_adult_run_balances_and_stays_steady() {
    let plan = Plan::new(Patient::healthy(Sex::Female, 35.0, 60.0)).run_for(24.0);
    let traj = Simulation::new(plan).unwrap().run().unwrap();
    assert_eq!(traj.samples.len(), 24 * 12 + 1);
    assert!(traj.max_balance_residual() < 1e-9, "{:?}", traj.balance);
    let na: Vec<f64> = traj.sodium();
    assert!(
        na.iter().all(|x| (x - 140.0).abs() < 0.05),
        "{:?}",
        &na[..5]
    );
}

#[test]
fn a_loss_larger_than_the_body_holds_stops_with_a_named_pool() {
    let lib = FluidLibrary::bundled();
    let mut potassium_loss = lib.get("gastric").unwrap().clone();
    potassium_loss.k = 1500.0;
    let plan = Plan::new(Patient::healthy(Sex::Male, 50.0, 70.0))
        .closed_system()
        .run_for(24.0)
        .start(1.0, Stream::lose(&potassium_loss, 3.0, 10.0).unwrap());
    let err = Simulation::new(plan).unwrap().run().unwrap_err();
    match err {
        SimulationError::Negative {
            quantity, time_h, ..
        } => {
            assert!(quantity.contains("potassium"), "{quantity}");
            assert!(time_h > 1.0 && time_h < 11.0, "{time_h}");
        }
        other => panic!("{other}"),
    }
}

struct StopAtFour;
impl Controller for StopAtFour {
    fn check(&mut self, s: &Snapshot) -> Result<Vec<Action>, String> {
        if s.na_change_since_start >= 4.0 && s.running.iter().any(|r| r == "saline_3") {
            Ok(vec![Action::Stop("saline_3".into())])
        } else {
            Ok(vec![])
        }
    }
}

#[test]
fn controller_stops_an_infusion_at_a_check() {
    let lib = FluidLibrary::bundled();
    let patient = Patient {
        na: Some(120.0),
        ..Patient::healthy(Sex::Male, 50.0, 70.0)
    };
    let plan = Plan::new(patient)
        .closed_system()
        .run_for(12.0)
        .check_every(0.5)
        .start(
            0.0,
            Stream::give_at_rate(lib.get("saline_3").unwrap(), 0.1).unwrap(),
        );
    let traj = Simulation::new(plan)
        .unwrap()
        .run_with(&mut StopAtFour)
        .unwrap();
    let last = traj.last();
    assert_eq!(last.inputs.na_in_mmol_h, 0.0);
    let rise = last.obs.na_mmol_l - 120.0;
    // The check sees plasma sodium, which runs ~1 mmol/L above the
    // interstitium while hypertonic saline runs: after the stop it settles lower.
    assert!((2.5..6.0).contains(&rise), "{rise}");
    assert!(traj.max_balance_residual() < 1e-9, "{:?}", traj.balance);
}

#[test]
fn stream_totals_count_what_each_stream_really_gave() {
    // 3 % saline at 100 mL/h stopped by a rule at a half-hour check, and
    // 500 mL of 0.9 % saline over 2 h from 1 h: the totals are rate x hours
    // run, and the infused sodium matches the ledger of what was infused.
    let lib = FluidLibrary::bundled();
    let patient = Patient {
        na: Some(120.0),
        ..Patient::healthy(Sex::Male, 50.0, 70.0)
    };
    let plan = Plan::new(patient)
        .closed_system()
        .run_for(12.0)
        .check_every(0.5)
        .start(
            0.0,
            Stream::give_at_rate(lib.get("saline_3").unwrap(), 0.1).unwrap(),
        )
        .start(
            1.0,
            Stream::give(lib.get("saline_0_9").unwrap(), 0.5, 2.0).unwrap(),
        );
    let traj = Simulation::new(plan)
        .unwrap()
        .run_with(&mut StopAtFour)
        .unwrap();
    let by = |label: &str| {
        traj.stream_totals
            .iter()
            .find(|s| s.label == label)
            .unwrap_or_else(|| panic!("{label} in {:?}", traj.stream_totals))
    };
    let normal = by("saline_0_9");
    assert!((normal.water_in_l - 0.5).abs() < 1e-12, "{normal:?}");
    // 0.9 % saline carries 154 mmol/L (fluid table).
    assert!((normal.na_in_mmol - 77.0).abs() < 1e-9, "{normal:?}");
    let hyper = by("saline_3");
    // Stopped at a whole number of half-hour checks, at 0.1 L/h.
    let hours = hyper.water_in_l / 0.1;
    assert!(
        hours > 0.4 && ((hours * 2.0).round() - hours * 2.0).abs() < 1e-9,
        "{hours}"
    );
    assert!((hyper.na_in_mmol - 513.0 * hyper.water_in_l).abs() < 1e-9);
    // The sum over streams is what the ledger counted as infused sodium.
    let infused: f64 = traj.stream_totals.iter().map(|s| s.na_in_mmol).sum();
    let ledger = traj.last().y[crate::body::StateSlot::InfusedNa as usize];
    assert!(
        (infused - ledger).abs() < 1e-6 * ledger,
        "{infused} vs {ledger}"
    );
}
