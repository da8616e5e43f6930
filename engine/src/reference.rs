//! The reference case used by benchmarks and the demonstration: an invented
//! patient with chronic hypovolemic hyponatremia given three 3 % saline
//! boluses and then isotonic saline, with checks every 2 h, over 48 h. As
//! volume is restored the non-osmotic vasopressin stimulus fades and a water
//! diuresis follows: the case overcorrects, which is why it teaches.

use crate::{Cause, Onset, Sex};

use crate::fluids::FluidLibrary;
use crate::patient::Patient;
use crate::plan::{Plan, Stream};

/// The benchmark plan (see the module docs).
pub fn benchmark_plan() -> Plan {
    let fluids = FluidLibrary::bundled();
    let hypertonic = fluids.get("saline_3").expect("bundled fluid");
    let isotonic = fluids.get("saline_0_9").expect("bundled fluid");
    let patient = Patient {
        na: Some(118.0),
        onset: Some(Onset::Chronic),
        cause: Some(Cause::Hypovolemic),
        ..Patient::healthy(Sex::Female, 58.0, 62.0)
    };
    let mut plan = Plan::new(patient).run_for(48.0).check_every(2.0);
    for k in 0..3 {
        let bolus = Stream::give(hypertonic, 0.15, 20.0 / 60.0).expect("valid bolus");
        plan = plan.start(k as f64 * 0.5, bolus);
    }
    let drip = Stream::give(isotonic, 1.0, 12.5).expect("valid infusion");
    plan.start(1.5, drip)
}
