//! The inputs of a plan as planned, segment by segment (no controller).

use super::schedule::EPS_H;
use super::Simulation;
use crate::model::Inputs;

impl Simulation {
    /// The piecewise-constant input segments of the plan as planned (no
    /// controller): `(start_h, end_h, inputs)` for every stretch between
    /// input changes, covering the whole run. The habitual intake and any
    /// standing treatment of the patient's cause are included.
    pub fn planned_segments(&self) -> Vec<(f64, f64, Inputs)> {
        let end = self.plan.duration_h;
        let mut schedule = self.initial_schedule();
        schedule.check_every_h = None;
        schedule.next_check_h = f64::INFINITY;
        // Without checks, the only breaks are the hard ones.
        let mut segments: Vec<(f64, f64, Inputs)> = Vec::new();
        let mut t = 0.0;
        schedule.advance_to(0.0);
        loop {
            let inputs = schedule.inputs();
            let stop = schedule.next_hard_break(t, end);
            match segments.last_mut() {
                Some(last) if last.2 == inputs => last.1 = stop,
                _ => segments.push((t, stop, inputs)),
            }
            if stop >= end - EPS_H {
                break;
            }
            t = stop;
            schedule.advance_to(t);
        }
        segments
    }
}
