//! The vocabulary of a plan: what is given, lost or changed and when, what
//! a protocol's rules see and may do, and the solver settings.
//!
//! * [`Plan`]: patient, parameters, switches, planned [`Event`]s, check
//!   interval, sampling, guideline limits and [`Tolerances`]; checked by
//!   [`crate::Simulation::new`].
//! * [`Stream`] (in `stream.rs`): a named flow, constant while it runs,
//!   with the constructors that check volumes, rates and doses; [`Route`]
//!   says how a drug is given.
//! * [`Action`] (in `action.rs`): start or stop streams, change a
//!   parameter, resolve the cause.
//! * [`Controller`] (in `controller.rs`): a protocol's rules, shown a
//!   [`Snapshot`] at every check.
//!
//! Nothing here integrates: the solver driver is [`crate::simulate`].

mod action;
mod controller;
mod stream;

pub use action::Action;
pub use controller::{Controller, NoController, Snapshot};
pub use stream::{Route, Stream};

use crate::error::InputError;
use crate::limits::LimitChoice;
use crate::model::Switches;
use crate::params::Params;
use crate::patient::Patient;
use serde::Serialize;

/// An action at a planned time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Event {
    /// Time, h.
    pub time_h: f64,
    /// What happens.
    pub action: Action,
}

/// Solver settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tolerances {
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance as a fraction of each state's scale.
    pub atol_fraction: f64,
    /// Largest number of steps of one solver segment.
    pub max_steps: usize,
}

impl Default for Tolerances {
    fn default() -> Self {
        Self {
            rtol: 1e-6,
            atol_fraction: 1e-8,
            max_steps: 100_000,
        }
    }
}

/// Everything needed for a run: patient, parameters, switches, planned
/// events, checks and sampling.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// The patient.
    pub patient: Patient,
    /// Model parameters.
    #[serde(skip)]
    pub params: Params,
    /// Mechanisms on or off.
    pub switches: Switches,
    /// Planned events.
    pub events: Vec<Event>,
    /// Length of the run, h.
    pub duration_h: f64,
    /// Sampling interval, h.
    pub sample_every_h: f64,
    /// Interval of controller checks, h (none: no checks).
    pub check_every_h: Option<f64>,
    /// Parameter overrides by name, applied after the patient's cause (so
    /// they win over it). Set with [`Plan::set_param`].
    pub overrides: Vec<(String, f64)>,
    /// Guideline limits to flag.
    pub limits: LimitChoice,
    /// Solver settings.
    pub tolerances: Tolerances,
    /// What each sample holds (every observation, or what the state
    /// alone gives).
    #[serde(skip)]
    pub sample_detail: SampleDetail,
    /// Whether the trajectory works out the mass balance (every species at
    /// every sample; [`crate::Trajectory::balance`]). A sweep member whose
    /// row does not report it skips it.
    #[serde(skip)]
    pub mass_balance: bool,
}

/// What each sample of a run holds.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum SampleDetail {
    /// Every observation (the flows need a model evaluation per sample).
    #[default]
    Full,
    /// What the state alone gives ([`crate::Model::observe_state`]):
    /// concentrations, volumes and the brain-cell volume index, the same
    /// numbers as [`SampleDetail::Full`]; flows, pressures and urine are
    /// NaN. For runs read only for those, such as sweep members. Rules
    /// still see every observation at their check times.
    StateOnly,
}

impl Plan {
    /// A plan for a patient: 48 h, 5-min samples, no events, European limits.
    pub fn new(patient: Patient) -> Self {
        Plan {
            patient,
            params: Params::default(),
            switches: Switches::default(),
            events: Vec::new(),
            duration_h: 48.0,
            sample_every_h: 5.0 / 60.0,
            check_every_h: None,
            overrides: Vec::new(),
            limits: LimitChoice::default(),
            tolerances: Tolerances::default(),
            sample_detail: SampleDetail::Full,
            mass_balance: true,
        }
    }

    /// Switch to a closed system (see [`Switches::closed`]).
    pub fn closed_system(mut self) -> Self {
        self.switches = Switches::closed();
        self
    }

    /// Override a parameter by name (checked now; applied after the cause).
    pub fn set_param(mut self, name: &str, value: f64) -> Result<Self, InputError> {
        self.params.clone().set(name, value)?;
        self.overrides.push((name.to_string(), value));
        Ok(self)
    }

    /// Set the run length.
    pub fn run_for(mut self, hours: f64) -> Self {
        self.duration_h = hours;
        self
    }

    /// Set the sampling interval.
    pub fn sample_every(mut self, hours: f64) -> Self {
        self.sample_every_h = hours;
        self
    }

    /// Set the check interval.
    pub fn check_every(mut self, hours: f64) -> Self {
        self.check_every_h = Some(hours);
        self
    }

    /// Add an action at a time.
    pub fn at(mut self, time_h: f64, action: Action) -> Self {
        self.events.push(Event { time_h, action });
        self
    }

    /// Start a stream at a time.
    pub fn start(self, time_h: f64, stream: Stream) -> Self {
        self.at(time_h, Action::Start(stream))
    }

    /// Check the plan: run length, sampling, check interval, event times,
    /// parameter changes and tolerances.
    pub(crate) fn check(&self) -> Result<(), InputError> {
        let range = |field: &str, v: f64, min: f64, max: f64, unit: &str| {
            if v.is_finite() && v >= min && v <= max {
                Ok(())
            } else {
                Err(InputError::OutOfRange {
                    field: field.into(),
                    value: v,
                    min,
                    max,
                    unit: unit.into(),
                })
            }
        };
        range("run_for", self.duration_h, 1.0 / 60.0, 24.0 * 60.0, "h")?;
        range(
            "sample_every",
            self.sample_every_h,
            1.0 / 3600.0,
            self.duration_h,
            "h",
        )?;
        if self.duration_h / self.sample_every_h > 1e6 {
            return Err(InputError::OutOfRange {
                field: "sample_every".into(),
                value: self.sample_every_h,
                min: self.duration_h / 1e6,
                max: self.duration_h,
                unit: "h (at most a million samples)".into(),
            });
        }
        if let Some(c) = self.check_every_h {
            range(
                "check_every",
                c,
                1.0 / 60.0,
                self.duration_h.max(1.0 / 60.0),
                "h",
            )?;
        }
        for e in &self.events {
            range("event time", e.time_h, 0.0, self.duration_h, "h")?;
            if let Action::SetParam { name, value } = &e.action {
                crate::model::check_change(name, *value)?;
            }
        }
        range("rtol", self.tolerances.rtol, 1e-12, 1e-2, "1")?;
        Ok(())
    }
}
