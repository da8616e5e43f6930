//! # Tidewater engine
//!
//! A whole-body model of water and sodium: intracellular, interstitial and
//! plasma water; sodium, potassium, urea, glucose and albumin pools; osmotic
//! water shifts across cell membranes; Starling filtration and lymph at the
//! capillaries; renal excretion under antidiuretic hormone. It predicts how
//! serum sodium and the fluid compartments move under a plan of fluids,
//! drugs and losses, and flags corrections that outrun guideline limits.
//!
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.
//!
//! ## Principal types and how data flows
//!
//! * [`Patient`] (what the user describes) is resolved against [`Params`]
//!   (every parameter with unit and source) and turned by [`Model::new`]
//!   into a [`Model`] (pure physiology) and a steady initial [`Body`].
//! * A [`Plan`] holds the patient, the parameters, planned [`Event`]s
//!   (start or stop a [`Stream`]: an infusion, a drink, a loss), the check
//!   interval for a [`Controller`] (a protocol's rules), sampling and the
//!   guideline limits. These words of a plan live in `plan/`; nothing
//!   there integrates.
//! * [`Simulation`] (in `simulate/`, the solver driver) integrates the
//!   model over the plan with an implicit BDF method (diffsol), stopping
//!   exactly at every input change and check.
//! * The result is a [`Trajectory`]: samples with derived labs
//!   ([`Observation`]), sodium changes over trailing 24 h and 48 h, guideline
//!   [`limits::Flag`]s, the guideline goals judged ([`goals::GoalResult`]), the
//!   fall-below-start warning ([`goals::BelowStart`]) and a mass-balance ledger
//!   per species.
//!
//! ## Rooms
//!
//! The types of the rooms in plain code (`model/`, `plan/`, ...) are
//! re-exported here at the crate root, each under one path; the rooms
//! linked are public namespaces of their own.
//!
//! | module | what it holds |
//! |---|---|
//! | [`params`] | every physiological parameter: name, unit, default, range, source |
//! | [`physiology`] | one file of pure functions per mechanism: cell membranes, capillaries and lymph, the kidney, osmoregulation (vasopressin, thirst), blood volume, the gut, drugs, glucose, potassium, brain adaptation |
//! | `model/` | the wiring: inputs, the resting body and its calibration, the steady start, fluxes, the right-hand side, observations, changes during a run |
//! | `body` | the state layout and the mass-balance ledger |
//! | `patient`, `causes`, `fluids` | what the user describes: the patient, the cause of the disorder, the fluid library |
//! | `plan/` | the words of a plan: streams, actions, events, controllers |
//! | `simulate/` | the solver driver: schedule, diffsol problem, the run loop |
//! | `trajectory`, [`limits`], [`goals`] | results, derived series, guideline flags and goals |
//! | [`scenario`] | Rhai scripts to plans, rules and expectations |
//! | [`sweep`] | sweep specs, designs, parallel runs, result files, summaries |
//! | [`validation`] | the dossier of published human data and its metrics |
//! | [`dump`], [`reference`](mod@reference), [`formulas`] | the model dump for independent implementations, the reference case, bedside formulas |
//! | [`bedside`] | the Adrogué–Madias course of a run's infusions and the attribution of the body's departure from it |
//! | [`observations`] | observed labs as data: the CSV of measurements taken during a run, checked cell by cell |
//! | [`planner`] | the correction planner: the dose of a fluid that meets a goal within the limits, a re-lowering, the chance of crossing a limit over the plausible unknowns |
//! | [`fit`] | learning a patient's unknowns from observed labs (Levenberg–Marquardt on the posterior, Laplace uncertainty) and the forecast with bands |
//!
//! ```
//! use tidewater::{Cause, FluidLibrary, Patient, Plan, Sex, Simulation, Stream};
//!
//! let fluids = FluidLibrary::bundled();
//! let patient = Patient {
//!     na: Some(118.0),
//!     cause: Some(Cause::InappropriateAntidiuresis),
//!     ..Patient::healthy(Sex::Female, 60.0, 65.0)
//! };
//! let plan = Plan::new(patient)
//!     .run_for(24.0)
//!     .start(0.0, Stream::give(fluids.get("saline_3")?, 0.15, 20.0 / 60.0)?);
//! let run = Simulation::new(plan)?.run()?;
//! let first_hour = run.at(1.0).obs.na_mmol_l - 118.0;
//! assert!(first_hour > 1.0 && first_hour < 5.0);
//! assert!(run.max_balance_residual() < 1e-6);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! Units inside the engine: litres, mmol (albumin in grams), hours, mmHg.
//! Concentrations are per litre of water, and osmolality is taken equal to
//! mOsm per litre of water (the dilute-solution approximation).

#![warn(missing_docs)]

pub mod bedside;
mod body;
mod causes;
pub mod dump;
mod error;
pub mod fit;
mod fluids;
pub mod formulas;
pub mod goals;
pub mod limits;
mod model;
mod model_range;
pub(crate) mod newton_lu;
pub(crate) mod numeric;
pub mod observations;
pub mod params;
mod patient;
pub mod physiology;
mod plan;
pub mod planner;
pub mod reference;
pub mod scenario;
mod simulate;
pub mod suggest;
pub mod sweep;
pub mod textfile;
mod trajectory;
pub mod units;
pub mod validation;
pub mod yaml;

pub use body::{Body, Species, StateSlot, N_STATES_BODY, STATE_NAMES};
pub use causes::Cause;
pub use error::{InputError, SimulationError};
pub use fluids::{Fluid, FluidKind, FluidLibrary};
pub use model::{
    check_change, Inputs, Model, Observation, StartBalance, Switches, WaterIntakeSource,
};
pub use model_range::OutsideRange;
pub use params::{Params, PARAMETERS};
pub use patient::{
    numeric_patient_fields, patient_from_yaml, Onset, Patient, ResolvedPatient, Sex, Symptoms,
    WaterMethod, Word, PATIENT_FIELDS, TEXT_PATIENT_FIELDS,
};
pub use plan::{
    Action, Controller, Event, Plan, Route, SampleDetail, Snapshot, Stream, Tolerances,
};
pub use simulate::Simulation;
pub use trajectory::{interpolate, Sample, SolverStats, StreamTotal, Trajectory};

/// The caution every report carries.
pub const CAUTION: &str =
    "Tidewater is a simulation for planning and teaching, not a medical device. \
Defer to local protocols and licensed clinicians, and re-measure serum sodium.";

/// The caution in one short line, for charts that may travel alone.
pub const CAUTION_SHORT: &str = "Simulation for planning and teaching, not a medical device: defer to local protocols and clinicians; re-measure sodium.";
