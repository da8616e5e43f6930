//! The model: pure physiology that maps a body state and the current inputs
//! to rates of change (for the solver) and to observations (for reports).
//!
//! [`Model::new`] turns a [`ResolvedPatient`](crate::patient::ResolvedPatient)
//! and [`Params`] into a [`Calibration`] (patient-specific constants such as
//! membrane conductances, resting pressures and excretion rates) and a
//! steady, consistent initial state: equal tonicity in every compartment,
//! filtration equal to lymph flow, albumin escape equal to its return, brain
//! osmolytes adapted when the disorder is chronic. [`Model::derivative`] is
//! the right-hand side of the ODE system; [`Model::observe`] the derived
//! labs.
//!
//! How the files hand data to one another:
//!
//! * `inputs.rs`: [`Switches`] and [`Inputs`], what the model is given, and
//!   their flat form for the solver ([`N_INPUTS`]).
//! * `resting.rs`: the resting body of the start, one piece per function
//!   (compartments, capillaries and lymph, membranes, metabolism, kidney)
//!   and the initial state vector.
//! * `calibration.rs`: [`Calibration`] and [`StartBalance`]; [`Model::new`]
//!   gathers the pieces of `resting.rs` into them, then `start.rs` makes the
//!   start steady (vasopressin threshold or water intake) and the gut is
//!   filled to its steady content.
//! * `fluxes.rs`: [`Fluxes`], every flow at one instant, from a state and
//!   [`Inputs`] under the [`Calibration`].
//! * `derivative.rs`: [`Model::derivative`] places those flows into the
//!   pools and the ledger.
//! * `observe.rs`: [`Observation`], the labs and flows a report shows, from
//!   the same [`Fluxes`].
//! * `change.rs`: which parameters may change mid-run and what follows.

use crate::params::Params;
use serde::Serialize;

mod calibration;
mod change;
mod derivative;
mod fluxes;
mod inputs;
mod observe;
mod resting;
mod start;
#[cfg(test)]
mod tests;

pub use calibration::{Calibration, StartBalance, WaterIntakeSource};
pub use change::{check_change, check_resolvable};
pub use inputs::{Inputs, Switches, N_INPUTS};
pub use observe::Observation;
pub use start::habitual_water_l_day;

/// The model: parameters, calibration and switches. Pure: it holds no
/// mutable state; the state vector lives with the solver.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Model {
    /// Parameters in force.
    #[serde(skip)]
    pub params: Params,
    /// Derived patient-specific constants.
    pub calibration: Calibration,
    /// Mechanisms switched on or off.
    pub switches: Switches,
}

/// Concentration with a guard against empty or (in a solver's trial step)
/// negative volumes.
fn conc(amount: f64, volume_l: f64) -> f64 {
    amount / volume_l.max(1e-9)
}
