//! A complete, self-describing dump of a planned run: every parameter, the
//! patient calibration, the switches, the initial state with the name of
//! each entry, the piecewise-constant input segments and the sample times.
//! An independent implementation of the equations (docs/equations.md) can
//! rebuild the same problem from it without copying any value by hand.

use crate::body::{N_STATES, STATE_NAMES};
use crate::model::{Calibration, Inputs, Switches};
use crate::params::PARAMETERS;
use crate::plan::Tolerances;
use crate::simulate::Simulation;
use serde::Serialize;
use std::collections::BTreeMap;

/// Format identifier of the dump.
pub const FORMAT: &str = "tidewater-model-dump/1";

/// One stretch of constant inputs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Segment {
    /// Start, h.
    pub start_h: f64,
    /// End, h.
    pub end_h: f64,
    /// Inputs in force.
    pub inputs: Inputs,
}

/// The dump (serialise with `serde_json`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelDump {
    /// [`FORMAT`].
    pub format: &'static str,
    /// Every parameter in force (after the cause and overrides), by name.
    pub params: BTreeMap<String, f64>,
    /// Patient-specific constants.
    pub calibration: Calibration,
    /// Mechanisms on or off.
    pub switches: Switches,
    /// Names of the state entries, in order.
    pub state_names: Vec<&'static str>,
    /// Initial state, in the same order.
    pub initial_state: Vec<f64>,
    /// Input segments covering the run.
    pub segments: Vec<Segment>,
    /// Sample times, h.
    pub sample_times_h: Vec<f64>,
    /// Solver tolerances used by the engine.
    pub tolerances: Tolerances,
    /// Planned changes to the model during the run (time, h, and what
    /// changes). The equations page describes one model: an independent
    /// implementation must refuse a dump where this is not empty.
    pub model_changes: Vec<(f64, String)>,
}

/// Build the dump of a simulation's plan (rules are not included: a plan
/// with a controller is dumped as planned, without the controller's
/// actions).
pub fn dump(sim: &Simulation) -> ModelDump {
    let model = sim.model();
    let params = PARAMETERS
        .iter()
        .map(|p| {
            (
                p.name.to_string(),
                model.params.get(p.name).unwrap_or(f64::NAN),
            )
        })
        .collect();
    let plan = sim.plan();
    let n = (plan.duration_h / plan.sample_every_h + 1e-9).floor() as usize;
    let mut sample_times_h: Vec<f64> = (0..=n).map(|k| k as f64 * plan.sample_every_h).collect();
    if plan.duration_h - sample_times_h[sample_times_h.len() - 1] > 1e-9 {
        sample_times_h.push(plan.duration_h);
    }
    ModelDump {
        format: FORMAT,
        params,
        calibration: model.calibration.clone(),
        switches: model.switches,
        state_names: STATE_NAMES.to_vec(),
        initial_state: sim.initial().y[..N_STATES].to_vec(),
        segments: sim
            .planned_segments()
            .into_iter()
            .map(|(start_h, end_h, inputs)| Segment {
                start_h,
                end_h,
                inputs,
            })
            .collect(),
        sample_times_h,
        tolerances: plan.tolerances,
        model_changes: plan
            .events
            .iter()
            .filter(|e| e.action.changes_the_model())
            .map(|e| (e.time_h, format!("{:?}", e.action)))
            .collect(),
    }
}

/// The dump as pretty JSON text.
pub fn to_json(sim: &Simulation) -> String {
    serde_json::to_string_pretty(&dump(sim)).expect("the dump serialises")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::benchmark_plan;

    #[test]
    fn dump_covers_the_run_and_names_every_state() {
        let sim = Simulation::new(benchmark_plan()).unwrap();
        let d = dump(&sim);
        assert_eq!(d.state_names.len(), d.initial_state.len());
        assert_eq!(d.segments.first().unwrap().start_h, 0.0);
        assert_eq!(d.segments.last().unwrap().end_h, 48.0);
        for w in d.segments.windows(2) {
            assert_eq!(w[0].end_h, w[1].start_h);
            assert_ne!(w[0].inputs, w[1].inputs);
        }
        // Three boluses, the gaps between them, the drip, and after it.
        assert!(d.segments.len() >= 6, "{}", d.segments.len());
        let json = to_json(&sim);
        assert!(json.contains("\"gfr_ml_min\"") && json.contains(FORMAT));
    }
}
