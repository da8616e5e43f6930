//! What the model says about each observed lab, and how far a measurement
//! may be from it: the residuals of the fit, scaled by each lab's
//! measurement error.

use crate::body::StateSlot;
use crate::observations::{Lab, Observations};
use crate::trajectory::Trajectory;
use serde::Serialize;

/// Measurement error (one standard deviation) of a lab at a value:
/// `max(absolute, relative·|value|)`.
///
/// | lab | absolute | relative | why |
/// |---|---|---|---|
/// | serum sodium | 1 mmol/L | – | analyser and sampling variability near 1 mmol/L (common practice) |
/// | serum potassium | 0.15 mmol/L | – | (common practice, from memory) |
/// | glucose | 0.3 mmol/L | 5 % | (from memory) |
/// | urine volume per collection | 30 mL | 10 % | collections are incomplete and read off bags (common practice) |
/// | urine osmolality | 15 mOsm/kg | 5 % | (from memory) |
/// | urine sodium, potassium | 5, 3 mmol/L | 10 % | spot samples, not timed (from memory) |
/// | weight | 0.3 kg | – | bed scales (from memory) |
pub fn measurement_sd(lab: Lab, value: f64) -> f64 {
    let (abs, rel): (f64, f64) = match lab {
        Lab::Na => (1.0, 0.0),
        Lab::K => (0.15, 0.0),
        Lab::Glucose => (0.3, 0.05),
        Lab::UrineMl => (30.0, 0.1),
        Lab::UrineOsm => (15.0, 0.05),
        Lab::UrineNa => (5.0, 0.1),
        Lab::UrineK => (3.0, 0.1),
        Lab::WeightKg => (0.3, 0.0),
    };
    abs.max(rel * value.abs())
}

/// One observed value beside the model's.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Residual {
    /// Line of the observation file.
    pub line: usize,
    /// Time, h.
    pub time_h: f64,
    /// The lab (its column name).
    pub lab: &'static str,
    /// Measured.
    pub observed: f64,
    /// Model.
    pub model: f64,
    /// Measurement error used, same unit.
    pub sd: f64,
    /// `(model − observed)/sd`.
    pub scaled: f64,
}

/// The model's value of `lab` at `t` (for `urine_ml`: the volume passed
/// between `since` and `t`, mL; for weight, `weight_kg` at the start plus
/// the change of body water).
pub fn model_value(traj: &Trajectory, lab: Lab, t: f64, since: f64, weight_kg: f64) -> f64 {
    match lab {
        Lab::Na => traj.value_at(t, |s| s.obs.na_mmol_l),
        Lab::K => traj.value_at(t, |s| s.obs.k_mmol_l),
        Lab::Glucose => traj.value_at(t, |s| s.obs.glucose_mmol_l),
        Lab::UrineOsm => traj.value_at(t, |s| s.obs.urine_osm_mosm_kg),
        Lab::UrineNa => traj.value_at(t, |s| s.obs.urine_na_mmol_l),
        Lab::UrineK => traj.value_at(t, |s| s.obs.urine_k_mmol_l),
        Lab::UrineMl => {
            let urine = |s: &crate::trajectory::Sample| s.y[StateSlot::UrineL as usize];
            1000.0 * (traj.value_at(t, urine) - traj.value_at(since, urine))
        }
        Lab::WeightKg => {
            // Weight moves with the water in the body, the gut's included
            // (1 L of water weighs 1 kg).
            let w = |s: &crate::trajectory::Sample| {
                crate::body::total_water_l(&s.y) + s.y[StateSlot::GutWater as usize]
            };
            let w0 = w(&traj.samples[0]);
            weight_kg + traj.value_at(t, |s| w(s) - w0)
        }
    }
}

/// Every residual of a run against the observations (up to the run's end).
/// `weight_kg` is the patient's weight at the start.
pub fn residuals(traj: &Trajectory, obs: &Observations, weight_kg: f64) -> Vec<Residual> {
    let end = traj.samples.last().map_or(0.0, |s| s.time_h);
    let mut out = Vec::with_capacity(obs.count());
    let mut since = 0.0;
    for row in &obs.rows {
        if row.time_h > end + 1e-9 {
            break;
        }
        for &(lab, observed) in &row.values {
            let model = model_value(traj, lab, row.time_h, since, weight_kg);
            let sd = measurement_sd(lab, observed);
            out.push(Residual {
                line: row.line,
                time_h: row.time_h,
                lab: lab.column(),
                observed,
                model,
                sd,
                scaled: (model - observed) / sd,
            });
        }
        since = row.time_h;
    }
    out
}
