//! A correction protocol written in Rust as a [`Controller`]: 3 % saline
//! boluses for a severe chronic hyponatremia while sodium has risen less
//! than 4 mmol/L, and a clamp when the rise over the trailing 24 h reaches
//! 8 mmol/L (desmopressin and 5 % dextrose), as a ward protocol would do.
//! The patient is invented.
//!
//! Run: `cargo run -p tidewater-engine --example protocol_controller`
//!
//! Caution: a simulation for planning and teaching, not a medical device.
//! Defer to local protocols and licensed clinicians; re-measure sodium.

use tidewater::{Cause, Onset, Sex};

use tidewater::{
    Action, Controller, FluidLibrary, Patient, Plan, Route, Simulation, Snapshot, Stream,
};

/// Boluses while the rise is small; a clamp once the 24 h rise nears the
/// limit.
struct Protocol {
    fluids: FluidLibrary,
    boluses: usize,
    clamped: bool,
}

impl Controller for Protocol {
    fn check(&mut self, s: &Snapshot) -> Result<Vec<Action>, String> {
        let mut actions = Vec::new();
        let bolus_running = s.running.iter().any(|l| l == "saline_3");
        if s.na_change_since_start < 4.0 && self.boluses < 3 && !bolus_running {
            self.boluses += 1;
            let fluid = self.fluids.get("saline_3").map_err(|e| e.to_string())?;
            let bolus = Stream::give(fluid, 0.1, 1.0 / 6.0).map_err(|e| e.to_string())?;
            actions.push(Action::Start(bolus));
        }
        if !self.clamped && s.na_change_24h >= 8.0 {
            self.clamped = true;
            let params = tidewater::Params::default();
            let ddavp = Stream::desmopressin(2.0, Route::Intravenous, &params)
                .map_err(|e| e.to_string())?;
            let fluid = self.fluids.get("dextrose_5").map_err(|e| e.to_string())?;
            let dextrose = Stream::give(fluid, 0.5, 6.0).map_err(|e| e.to_string())?;
            actions.push(Action::Start(ddavp));
            actions.push(Action::Start(dextrose));
        }
        Ok(actions)
    }
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let patient = Patient {
        na: Some(114.0),
        onset: Some(Onset::Chronic),
        cause: Some(Cause::Hypovolemic),
        ..Patient::healthy(Sex::Female, 71.0, 58.0)
    };
    let fluids = FluidLibrary::bundled();
    let saline = Stream::give(fluids.get("saline_0_9")?, 1.5, 12.0)?;
    let plan = Plan::new(patient)
        .run_for(36.0)
        .check_every(0.5)
        .at(0.0, Action::Stop("habitual".into()))
        .start(0.0, saline);
    let mut protocol = Protocol {
        fluids,
        boluses: 0,
        clamped: false,
    };
    let run = Simulation::new(plan)?.run_with(&mut protocol)?;
    println!("Caution: a simulation for planning and teaching, not a medical device.");
    println!("time_h  sodium  urine_ml_h");
    for t in [0.0, 1.0, 2.0, 4.0, 8.0, 12.0, 18.0, 24.0, 36.0] {
        let s = run.at(t);
        println!(
            "{t:6.1}  {:6.1}  {:10.0}",
            s.obs.na_mmol_l, s.obs.urine_ml_h
        );
    }
    let (rise, at) = run.largest_rise(24.0);
    println!(
        "{} boluses; clamp {}; largest 24 h rise {rise:.1} mmol/L (window ending at {at:.1} h)",
        protocol.boluses,
        if protocol.clamped {
            "given"
        } else {
            "not needed"
        }
    );
    Ok(())
}
