//! Runs of the driver: steady state, a negative pool, a controller.

use super::*;
use crate::error::SimulationError;
use crate::fluids::FluidLibrary;
use crate::patient::Patient;

#[test]
fn healthy_adult_run_balances_and_stays_steady() {
    let plan = Plan::new(Patient::healthy("female", 35.0, 60.0)).run_for(24.0);
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
    let plan = Plan::new(Patient::healthy("male", 50.0, 70.0))
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
        ..Patient::healthy("male", 50.0, 70.0)
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
