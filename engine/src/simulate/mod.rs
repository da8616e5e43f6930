//! The solver driver: integrates the [`Model`] over a [`Plan`] with
//! diffsol's BDF method, segment by segment.
//!
//! Inputs are piecewise constant. The driver stops exactly at every input
//! change (an event, the end of an infusion) and at every check time, where
//! a [`Controller`] (a scenario's rules) may start or stop inputs. When the
//! inputs change the solver is restarted from the current state with a
//! recomputed derivative and a fresh step size; when they do not, it goes
//! on without a restart. Samples are interpolated on a fixed grid. After
//! every step the body pools are checked: a pool that would become negative
//! stops the run with an error naming the time and the pool.
//!
//! The rooms:
//!
//! * this file: [`Simulation`] (check the plan, resolve the patient, build
//!   the model and the initial body) and the schedule at the start;
//! * `driver.rs`: [`Simulation::run_with`], the integration loop, samples,
//!   checks and changes to the model as the run goes;
//! * `schedule.rs`: the planned events, running streams and check times;
//! * `problem.rs`: the diffsol problem (right-hand side, Jacobian-vector
//!   product, absolute tolerances, restarts);
//! * `segments.rs`: [`Simulation::planned_segments`], the inputs as planned.
//!
//! The vocabulary of a plan ([`Plan`], [`Stream`], [`Action`],
//! [`Controller`], ...) lives in [`crate::plan`] and is re-exported here.

mod driver;
mod problem;
mod schedule;
mod segments;
#[cfg(test)]
mod tests;

pub use crate::plan::{
    Action, Controller, Event, NoController, Plan, Route, SampleDetail, Snapshot, Stream,
    Tolerances,
};

use crate::body::Body;
use crate::error::SimulationError;
use crate::model::{Inputs, Model};
use crate::patient::ResolvedPatient;
use crate::trajectory::Trajectory;
use schedule::Schedule;
use std::sync::Arc;

/// A run in preparation: the model, its initial body and the plan.
#[derive(Debug, Clone)]
pub struct Simulation {
    plan: Plan,
    patient: ResolvedPatient,
    model: Arc<Model>,
    initial: Body,
}

impl Simulation {
    /// Check the plan, resolve the patient and build the initial state.
    pub fn new(plan: Plan) -> Result<Self, SimulationError> {
        plan.check()?;
        // The patient is resolved with the overrides in place (they may
        // name a body-water fraction or a hematocrit); the cause then
        // adjusts the parameters and the overrides have the last word.
        let mut resolving = plan.params.clone();
        for (name, value) in &plan.overrides {
            resolving.set(name, *value)?;
        }
        let patient = plan.patient.resolve(&resolving)?;
        let mut params = plan.params.clone();
        patient.cause.apply(&patient, &mut params);
        for (name, value) in &plan.overrides {
            params.set(name, *value)?;
        }
        let (model, initial) = Model::new(&patient, &params, plan.switches)?;
        if plan.events.iter().any(|e| e.action == Action::ResolveCause) {
            crate::model::check_resolvable(patient.cause)?;
        }
        Ok(Simulation {
            plan,
            patient,
            model: Arc::new(model),
            initial,
        })
    }

    /// The model (parameters, calibration, switches).
    pub fn model(&self) -> &Model {
        &self.model
    }

    /// The resolved patient.
    pub fn patient(&self) -> &ResolvedPatient {
        &self.patient
    }

    /// The initial body state.
    pub fn initial(&self) -> &Body {
        &self.initial
    }

    /// The plan.
    pub fn plan(&self) -> &Plan {
        &self.plan
    }

    /// The schedule at the start: planned events, the habitual intake and
    /// the standing treatments of the cause.
    fn initial_schedule(&self) -> Schedule {
        let mut schedule = Schedule::new(&self.plan);
        let habitual_rates = self.model.habitual_inputs();
        if habitual_rates != Inputs::default() {
            // Habitual intake is an ordinary stream: a scenario can stop it
            // (nil by mouth, fluid restriction).
            let habitual = Stream {
                label: "habitual".into(),
                rates: habitual_rates,
                duration_h: None,
            };
            schedule.events.insert(
                0,
                Event {
                    time_h: 0.0,
                    action: Action::Start(habitual),
                },
            );
        }
        for (k, stream) in self
            .patient
            .cause
            .standing_streams()
            .into_iter()
            .enumerate()
        {
            schedule.events.insert(
                k,
                Event {
                    time_h: 0.0,
                    action: Action::Start(stream),
                },
            );
        }
        schedule
    }

    /// Run the plan without a controller.
    pub fn run(&self) -> Result<Trajectory, SimulationError> {
        self.run_with(&mut NoController)
    }
}
