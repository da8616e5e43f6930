//! Shared helpers for the reference checks in `tests/`: patients of a given
//! total body water and short ways to run a plan.

use tidewater::{FluidLibrary, Patient, Plan, Simulation, Stream, Trajectory};

/// A patient of the given sex, sodium and total body water (weight chosen so
/// that a water fraction of 0.5 gives `tbw_l`).
pub fn patient_with_water(sex: &str, na: f64, tbw_l: f64) -> Patient {
    Patient {
        na: Some(na),
        water_fraction: Some(0.5),
        ..Patient::healthy(sex.parse().expect("male or female"), 50.0, tbw_l / 0.5)
    }
}

/// The bundled fluid library.
pub fn fluids() -> FluidLibrary {
    FluidLibrary::bundled()
}

/// A stream of `volume_l` of a bundled fluid over `hours`.
pub fn give(fluid: &str, volume_l: f64, hours: f64) -> Stream {
    Stream::give(fluids().get(fluid).expect("bundled fluid"), volume_l, hours)
        .expect("valid stream")
}

/// Run a plan, panicking with the error text if it fails.
pub fn run(plan: Plan) -> Trajectory {
    Simulation::new(plan)
        .expect("valid plan")
        .run()
        .unwrap_or_else(|e| panic!("run failed: {e}"))
}

/// Assert that water and every solute balance to `1e-6` relative at every
/// sample (REFERENCES.md check M9: conservation of mass).
pub fn assert_balanced(traj: &Trajectory) {
    for b in &traj.balance {
        assert!(
            b.max_relative_residual < 1e-6,
            "{} does not balance: residual {:e}",
            b.species,
            b.max_relative_residual
        );
    }
    assert_eq!(traj.balance.len(), 6, "every species has a ledger");
}
