//! The metric vocabulary of the validation dossier: each metric reads one
//! number from a simulated course ([`Trajectory`]), the way a study reports
//! its result (a change at a time, an extreme within a window, a share of a
//! load excreted over a period).
//!
//! Times are hours from the start of the scenario (the intervention starts
//! at 0); "within_h" windows run from 0 to that time. Values between
//! samples are interpolated linearly. Loads (`load_ml`, `load_mmol`) are
//! given in the check, as the study reports them.
//!
//! The vocabulary, with its arguments and units, is listed by [`METRICS`]
//! and documented in `tests/validation/README.md`.

use crate::body::{Species, StateSlot};
use crate::trajectory::{interpolate, Trajectory};
use crate::units;
use std::collections::BTreeMap;
use std::fmt;

/// A metric the dossier may name: its name, its arguments and the unit of
/// its value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MetricInfo {
    /// Name as written in `checks.yaml`.
    pub name: &'static str,
    /// Required arguments, in the order documented.
    pub args: &'static [&'static str],
    /// Unit of the value.
    pub unit: &'static str,
    /// What it measures, in a line.
    pub meaning: &'static str,
}

macro_rules! vocabulary {
    ($( $variant:ident => $name:literal, [$($arg:literal),*], $unit:literal, $meaning:literal; )*) => {
        /// The metrics of the vocabulary.
        #[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
        pub enum MetricKind {
            $(
                #[doc = $meaning]
                $variant,
            )*
        }

        /// Every metric with its arguments, unit and meaning.
        pub const METRICS: &[(MetricKind, MetricInfo)] = &[
            $( (MetricKind::$variant, MetricInfo { name: $name, args: &[$($arg),*], unit: $unit, meaning: $meaning }), )*
        ];
    };
}

vocabulary! {
    NaChange => "na_change", ["at_h"], "mmol/L", "serum sodium at at_h minus its starting value";
    NaMinChange => "na_min_change", ["within_h"], "mmol/L", "lowest serum sodium within the window minus its starting value";
    NaMaxChange => "na_max_change", ["within_h"], "mmol/L", "highest serum sodium within the window minus its starting value";
    NaMeanChange => "na_mean_change", ["from_h", "to_h"], "mmol/L", "time-average of serum sodium over the window minus its starting value (a trial's change in the average daily area under the curve)";
    OsmolalityMinChange => "osmolality_min_change", ["within_h"], "mOsm/kg", "lowest calculated plasma osmolality within the window minus its starting value";
    UrineOsmMin => "urine_osm_min", ["within_h"], "mOsm/kg", "lowest urine osmolality within the window";
    UrineOsmMax => "urine_osm_max", ["within_h"], "mOsm/kg", "highest urine osmolality within the window";
    UrineOsmHalfEffectDuration => "urine_osm_half_effect_duration_h", ["within_h"], "h", "time from the start until urine osmolality, past its peak, falls below halfway between its starting value and its peak (the window's end if it never does)";
    UrineFlowPeak => "urine_flow_peak_ml_min", ["within_h"], "mL/min", "highest urine flow within the window";
    UrineFlowPeakTime => "urine_flow_peak_time_h", ["within_h"], "h", "time of the highest urine flow within the window";
    UrineVolume => "urine_volume_ml", ["from_h", "to_h"], "mL", "urine passed over the window";
    UrineVolumeFractionOfLoad => "urine_volume_fraction_of_load", ["over_h", "load_ml"], "1", "urine passed from 0 to over_h divided by the volume given";
    UrineVolumeExcessFractionOfLoad => "urine_volume_excess_fraction_of_load", ["over_h", "load_ml"], "1", "urine passed from 0 to over_h above the starting urine flow kept up over that time, divided by the volume given (a balance study's share of a load excreted)";
    UrineSodium => "urine_sodium_mmol", ["from_h", "to_h"], "mmol", "sodium excreted in urine over the window";
    UrineSodiumFractionOfLoad => "urine_sodium_fraction_of_load", ["over_h", "load_mmol"], "1", "sodium excreted in urine from 0 to over_h divided by the sodium given";
    UrineSodiumExcessFractionOfLoad => "urine_sodium_excess_fraction_of_load", ["over_h", "load_mmol"], "1", "sodium excreted in urine from 0 to over_h above the starting excretion rate kept up over that time, divided by the sodium given";
    UrineSodiumRatePeak => "urine_sodium_rate_peak_umol_min", ["within_h"], "umol/min", "highest urinary sodium excretion rate within the window";
    FreeWaterClearanceMeanChange => "free_water_clearance_mean_change_ml_min", ["from_h", "to_h"], "mL/min", "time-average of free-water clearance over the window minus its starting value";
    RetainedFractionOfLoad => "retained_fraction_of_load", ["at_h", "load_ml"], "1", "gain of total body water at at_h divided by the volume given";
    WeightChangeKg => "weight_change_kg", ["at_h"], "kg", "change of body weight at at_h, read as the change of total body water (1 L = 1 kg)";
    WeightChangePercent => "weight_change_percent", ["at_h"], "%", "weight_change_kg as a percentage of the starting weight";
    PlasmaVolumeChangeFraction => "plasma_volume_change_fraction", ["at_h"], "1", "relative change of plasma volume (blood volume x (1 - haematocrit)) at at_h";
    PlasmaVolumeChangeMaxFraction => "plasma_volume_change_max_fraction", ["within_h"], "1", "largest relative change of plasma volume within the window";
    PlasmaVolumeChangeFractionOfLoad => "plasma_volume_change_fraction_of_load", ["at_h", "load_ml"], "1", "gain of plasma volume at at_h divided by the volume given";
    PlasmaVolumeChangeMaxFractionOfLoad => "plasma_volume_change_max_fraction_of_load", ["within_h", "load_ml"], "1", "largest gain of plasma volume within the window divided by the volume given";
    BloodVolumeChangeFractionOfLoad => "blood_volume_change_fraction_of_load", ["at_h", "load_ml"], "1", "gain of blood volume at at_h divided by the volume given";
    PlasmaVolumeGainFractionOfLoad => "plasma_volume_gain_fraction_of_load", ["from_h", "at_h", "load_ml"], "1", "gain of plasma volume from from_h (just before the infusion) to at_h divided by the volume given (the volume effect when the infusion follows a loss)";
    CellWaterChangeFractionOfLoad => "cell_water_change_fraction_of_load", ["at_h", "load_ml"], "1", "gain of intracellular water (tissue cells, red cells, brain) at at_h divided by the volume given";
    HematocritMinChangeFraction => "hematocrit_min_change_fraction", ["within_h"], "1", "largest relative fall of haematocrit within the window (negative)";
    KChange => "k_change", ["at_h"], "mmol/L", "serum potassium at at_h minus its starting value";
    KMaxChange => "k_max_change", ["within_h"], "mmol/L", "highest serum potassium within the window minus its starting value";
    KLoadFractionLeftEcf => "k_load_fraction_left_ecf", ["at_h", "load_mmol"], "1", "share of a potassium dose no longer in the extracellular fluid at at_h (1 - extracellular gain / dose)";
    KFallPer100MmolDeficit => "k_fall_per_100_mmol_deficit", ["at_h"], "mmol/L per 100 mmol", "fall of serum potassium at at_h per 100 mmol of body potassium lost (by the ledger)";
    NaFallPer100MgDlGlucose => "na_fall_per_100_mg_dl_glucose", ["within_h"], "mmol/L per 100 mg/dL", "fall of serum sodium per 100 mg/dL rise of glucose, read at the glucose peak within the window";
    NaFallPer100MgDlGlucoseAbove => "na_fall_per_100_mg_dl_glucose_above", ["from_mg_dl", "within_h"], "mmol/L per 100 mg/dL", "the same factor for the rise from from_mg_dl to the glucose peak";
}

impl MetricKind {
    /// The metric's description.
    pub fn info(self) -> &'static MetricInfo {
        &METRICS
            .iter()
            .find(|(k, _)| *k == self)
            .expect("every metric is in the vocabulary")
            .1
    }

    /// The metric of a name.
    pub fn from_name(name: &str) -> Option<MetricKind> {
        METRICS
            .iter()
            .find(|(_, i)| i.name == name)
            .map(|(k, _)| *k)
    }
}

impl fmt::Display for MetricKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.info().name)
    }
}

/// A metric with its arguments, checked against the vocabulary.
#[derive(Debug, Clone, PartialEq)]
pub struct Metric {
    /// Which metric.
    pub kind: MetricKind,
    /// Its arguments by name.
    pub args: BTreeMap<String, f64>,
}

/// Why a metric could not be read from a course.
#[derive(Debug, Clone, PartialEq)]
pub struct MetricError(pub String);

impl fmt::Display for MetricError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for MetricError {}

/// What a metric needs to know about the run besides its course.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunFacts {
    /// Starting body weight, kg.
    pub weight_kg: f64,
}

/// A time series a published time course can be drawn against.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Series {
    /// Serum sodium minus its starting value, mmol/L.
    NaChange,
    /// Serum potassium minus its starting value, mmol/L.
    KChange,
    /// Relative change of plasma volume, %.
    PlasmaVolumeChangePercent,
    /// Urine osmolality, mOsm/kg.
    UrineOsm,
    /// Urine flow, mL/min.
    UrineFlowMlMin,
    /// Plasma glucose, mg/dL.
    GlucoseMgDl,
}

/// Every series by name, with its unit.
pub const SERIES: &[(Series, &str, &str)] = &[
    (Series::NaChange, "na_change", "mmol/L"),
    (Series::KChange, "k_change", "mmol/L"),
    (
        Series::PlasmaVolumeChangePercent,
        "plasma_volume_change_percent",
        "%",
    ),
    (Series::UrineOsm, "urine_osm", "mOsm/kg"),
    (Series::UrineFlowMlMin, "urine_flow_ml_min", "mL/min"),
    (Series::GlucoseMgDl, "glucose_mg_dl", "mg/dL"),
];

impl Series {
    /// The series of a name.
    pub fn from_name(name: &str) -> Option<Series> {
        SERIES
            .iter()
            .find(|(_, n, _)| *n == name)
            .map(|(s, _, _)| *s)
    }

    /// Name as written in `checks.yaml`.
    pub fn name(self) -> &'static str {
        SERIES
            .iter()
            .find(|(s, _, _)| *s == self)
            .expect("listed")
            .1
    }

    /// Unit of the values.
    pub fn unit(self) -> &'static str {
        SERIES
            .iter()
            .find(|(s, _, _)| *s == self)
            .expect("listed")
            .2
    }

    /// The series over the whole course: (time h, value) per sample.
    pub fn of(self, traj: &Trajectory) -> Vec<(f64, f64)> {
        let t = traj.times();
        let v: Vec<f64> = match self {
            Series::NaChange => traj.na_change_since_start.clone(),
            Series::KChange => relative_to_start(&column(traj, |s| s.obs.k_mmol_l)),
            Series::PlasmaVolumeChangePercent => fraction_of_start(&plasma_volume(traj))
                .into_iter()
                .map(|x| 100.0 * x)
                .collect(),
            Series::UrineOsm => column(traj, |s| s.obs.urine_osm_mosm_kg),
            Series::UrineFlowMlMin => column(traj, |s| s.obs.urine_ml_h / 60.0),
            Series::GlucoseMgDl => column(traj, |s| {
                units::glucose_mmol_l_to_mg_dl(s.obs.glucose_mmol_l)
            }),
        };
        t.into_iter().zip(v).collect()
    }
}

fn column(traj: &Trajectory, f: impl Fn(&crate::trajectory::Sample) -> f64) -> Vec<f64> {
    traj.samples.iter().map(f).collect()
}

fn relative_to_start(v: &[f64]) -> Vec<f64> {
    let v0 = v.first().copied().unwrap_or(f64::NAN);
    v.iter().map(|x| x - v0).collect()
}

fn fraction_of_start(v: &[f64]) -> Vec<f64> {
    let v0 = v.first().copied().unwrap_or(f64::NAN);
    v.iter().map(|x| x / v0 - 1.0).collect()
}

/// Plasma volume per sample, L: blood volume x (1 - haematocrit).
fn plasma_volume(traj: &Trajectory) -> Vec<f64> {
    column(traj, |s| s.obs.blood_volume_l * (1.0 - s.obs.hematocrit))
}

/// Intracellular water per sample, L.
fn cell_water(traj: &Trajectory) -> Vec<f64> {
    column(traj, |s| s.obs.cells_l + s.obs.red_cells_l + s.obs.brain_l)
}

/// Value of a series at `t` (linear between samples).
pub fn value_at(times: &[f64], values: &[f64], t: f64) -> f64 {
    interpolate(times, values, t)
}

/// Smallest and largest value of a series over `[from, to]`, with the
/// times they occur (the ends interpolated). Returns `((min, t), (max, t))`.
pub fn extremes(times: &[f64], values: &[f64], from: f64, to: f64) -> ((f64, f64), (f64, f64)) {
    let mut min = (value_at(times, values, from), from);
    let mut max = min;
    let mut consider = |v: f64, t: f64| {
        if v < min.0 {
            min = (v, t);
        }
        if v > max.0 {
            max = (v, t);
        }
    };
    for (&t, &v) in times.iter().zip(values) {
        if t > from && t < to {
            consider(v, t);
        }
    }
    consider(value_at(times, values, to), to);
    (min, max)
}

/// Integral of a series over `[from, to]` by the trapezoid rule on the
/// samples (the ends interpolated). Units: value x h.
pub fn integral(times: &[f64], values: &[f64], from: f64, to: f64) -> f64 {
    let mut pts: Vec<(f64, f64)> = vec![(from, value_at(times, values, from))];
    for (&t, &v) in times.iter().zip(values) {
        if t > from && t < to {
            pts.push((t, v));
        }
    }
    pts.push((to, value_at(times, values, to)));
    pts.windows(2)
        .map(|w| 0.5 * (w[0].1 + w[1].1) * (w[1].0 - w[0].0))
        .sum()
}

/// Time after the peak of a series (within `[0, to]`) at which it first
/// falls below halfway between its starting value and the peak, linear
/// between samples; `to` if it never does.
pub fn half_effect_end(times: &[f64], values: &[f64], to: f64) -> f64 {
    let (_, (peak, t_peak)) = extremes(times, values, times[0], to);
    let half = 0.5 * (values[0] + peak);
    let mut prev: Option<(f64, f64)> = None;
    for (&t, &v) in times.iter().zip(values) {
        if t < t_peak || t > to {
            prev = Some((t, v));
            continue;
        }
        if v < half {
            return match prev {
                Some((t0, v0)) if v0 > v && t0 >= t_peak => t0 + (v0 - half) / (v0 - v) * (t - t0),
                _ => t,
            };
        }
        prev = Some((t, v));
    }
    to
}

/// First time at which a rising series reaches `level` (linear between
/// samples), if it does within `[0, to]`.
pub fn first_reach(times: &[f64], values: &[f64], level: f64, to: f64) -> Option<f64> {
    for j in 0..times.len() {
        if times[j] > to {
            break;
        }
        if values[j] >= level {
            if j == 0 {
                return Some(times[0]);
            }
            let (t0, v0, t1, v1) = (times[j - 1], values[j - 1], times[j], values[j]);
            return Some(if v1 > v0 {
                t0 + (level - v0) / (v1 - v0) * (t1 - t0)
            } else {
                t1
            });
        }
    }
    None
}

impl Metric {
    /// An argument that the vocabulary guarantees was given.
    fn arg(&self, name: &str) -> f64 {
        self.args[name]
    }

    /// Read the metric from a course.
    pub fn evaluate(&self, traj: &Trajectory, facts: RunFacts) -> Result<f64, MetricError> {
        let t = traj.times();
        if t.len() < 2 {
            return Err(MetricError("the run has fewer than two samples".into()));
        }
        let end = t[t.len() - 1];
        for name in self.kind.info().args {
            if name.ends_with("_h") {
                let v = self.arg(name);
                if v > end + 1e-9 {
                    return Err(MetricError(format!(
                        "{name} = {v} h is beyond the end of the scenario's run ({end} h)"
                    )));
                }
            }
        }
        let na = traj.sodium();
        let at = |v: &[f64], h: f64| value_at(&t, v, h);
        let window = |v: &[f64], h: f64| extremes(&t, v, t[0], h);
        let per_load = |gain_l: f64, load_ml: f64| units::l_to_ml(gain_l) / load_ml;
        let ledger =
            |s: StateSlot| -> Vec<f64> { traj.samples.iter().map(|x| x.y[s as usize]).collect() };
        let urine_na_rate = column(traj, |s| s.obs.urine_ml_h / 1000.0 * s.obs.urine_na_mmol_l); // mmol/h
        use MetricKind as M;
        let value = match self.kind {
            M::NaChange => at(&na, self.arg("at_h")) - na[0],
            M::NaMinChange => window(&na, self.arg("within_h")).0 .0 - na[0],
            M::NaMaxChange => window(&na, self.arg("within_h")).1 .0 - na[0],
            M::NaMeanChange => {
                let (a, b) = (self.arg("from_h"), self.arg("to_h"));
                integral(&t, &na, a, b) / (b - a) - na[0]
            }
            M::OsmolalityMinChange => {
                let osm = column(traj, |s| s.obs.osmolality_mosm_kg);
                window(&osm, self.arg("within_h")).0 .0 - osm[0]
            }
            M::UrineOsmMin | M::UrineOsmMax => {
                let u = column(traj, |s| s.obs.urine_osm_mosm_kg);
                let (min, max) = window(&u, self.arg("within_h"));
                if self.kind == M::UrineOsmMin {
                    min.0
                } else {
                    max.0
                }
            }
            M::UrineOsmHalfEffectDuration => {
                let u = column(traj, |s| s.obs.urine_osm_mosm_kg);
                half_effect_end(&t, &u, self.arg("within_h")) - t[0]
            }
            M::UrineFlowPeak | M::UrineFlowPeakTime => {
                let flow = column(traj, |s| s.obs.urine_ml_h / 60.0);
                let (_, (peak, when)) = window(&flow, self.arg("within_h"));
                if self.kind == M::UrineFlowPeak {
                    peak
                } else {
                    when - t[0]
                }
            }
            M::UrineVolume => {
                let u = ledger(StateSlot::UrineL);
                units::l_to_ml(at(&u, self.arg("to_h")) - at(&u, self.arg("from_h")))
            }
            M::UrineVolumeFractionOfLoad => {
                let u = ledger(StateSlot::UrineL);
                per_load(at(&u, self.arg("over_h")) - u[0], self.arg("load_ml"))
            }
            M::UrineVolumeExcessFractionOfLoad => {
                let u = ledger(StateSlot::UrineL);
                let h = self.arg("over_h");
                let baseline = traj.samples[0].obs.urine_ml_h / 1000.0 * (h - t[0]);
                per_load(at(&u, h) - u[0] - baseline, self.arg("load_ml"))
            }
            M::UrineSodiumExcessFractionOfLoad => {
                let h = self.arg("over_h");
                let baseline = urine_na_rate[0] * (h - t[0]);
                (integral(&t, &urine_na_rate, t[0], h) - baseline) / self.arg("load_mmol")
            }
            M::UrineSodium => integral(&t, &urine_na_rate, self.arg("from_h"), self.arg("to_h")),
            M::UrineSodiumFractionOfLoad => {
                integral(&t, &urine_na_rate, t[0], self.arg("over_h")) / self.arg("load_mmol")
            }
            M::UrineSodiumRatePeak => {
                let (_, (peak, _)) = window(&urine_na_rate, self.arg("within_h"));
                peak * 1000.0 / 60.0
            }
            M::FreeWaterClearanceMeanChange => {
                let c = column(traj, |s| s.obs.free_water_clearance_ml_h / 60.0);
                let (a, b) = (self.arg("from_h"), self.arg("to_h"));
                integral(&t, &c, a, b) / (b - a) - c[0]
            }
            M::RetainedFractionOfLoad => {
                let w = column(traj, |s| s.obs.total_water_l);
                per_load(at(&w, self.arg("at_h")) - w[0], self.arg("load_ml"))
            }
            M::WeightChangeKg | M::WeightChangePercent => {
                let w = column(traj, |s| s.obs.total_water_l);
                let kg = at(&w, self.arg("at_h")) - w[0];
                if self.kind == M::WeightChangeKg {
                    kg
                } else {
                    100.0 * kg / facts.weight_kg
                }
            }
            M::PlasmaVolumeChangeFraction => {
                let pv = plasma_volume(traj);
                at(&pv, self.arg("at_h")) / pv[0] - 1.0
            }
            M::PlasmaVolumeChangeMaxFraction => {
                let pv = plasma_volume(traj);
                window(&pv, self.arg("within_h")).1 .0 / pv[0] - 1.0
            }
            M::PlasmaVolumeChangeFractionOfLoad => {
                let pv = plasma_volume(traj);
                per_load(at(&pv, self.arg("at_h")) - pv[0], self.arg("load_ml"))
            }
            M::PlasmaVolumeChangeMaxFractionOfLoad => {
                let pv = plasma_volume(traj);
                let max = window(&pv, self.arg("within_h")).1 .0;
                per_load(max - pv[0], self.arg("load_ml"))
            }
            M::PlasmaVolumeGainFractionOfLoad => {
                let pv = plasma_volume(traj);
                per_load(
                    at(&pv, self.arg("at_h")) - at(&pv, self.arg("from_h")),
                    self.arg("load_ml"),
                )
            }
            M::BloodVolumeChangeFractionOfLoad => {
                let bv = column(traj, |s| s.obs.blood_volume_l);
                per_load(at(&bv, self.arg("at_h")) - bv[0], self.arg("load_ml"))
            }
            M::CellWaterChangeFractionOfLoad => {
                let c = cell_water(traj);
                per_load(at(&c, self.arg("at_h")) - c[0], self.arg("load_ml"))
            }
            M::HematocritMinChangeFraction => {
                let h = column(traj, |s| s.obs.hematocrit);
                window(&h, self.arg("within_h")).0 .0 / h[0] - 1.0
            }
            M::KChange | M::KMaxChange => {
                let k = column(traj, |s| s.obs.k_mmol_l);
                if self.kind == M::KChange {
                    at(&k, self.arg("at_h")) - k[0]
                } else {
                    window(&k, self.arg("within_h")).1 .0 - k[0]
                }
            }
            M::KLoadFractionLeftEcf => {
                let ecf = column(traj, |s| {
                    s.y[StateSlot::KPlasma as usize] + s.y[StateSlot::KInterstitium as usize]
                });
                1.0 - (at(&ecf, self.arg("at_h")) - ecf[0]) / self.arg("load_mmol")
            }
            M::KFallPer100MmolDeficit => {
                let body = column(traj, |s| Species::Potassium.content(&s.y));
                let k = column(traj, |s| s.obs.k_mmol_l);
                let h = self.arg("at_h");
                let deficit = body[0] - at(&body, h);
                if deficit < 5.0 {
                    return Err(MetricError(format!(
                        "the body lost only {deficit:.1} mmol of potassium by {h} h; a deficit of at least 5 mmol is needed"
                    )));
                }
                (k[0] - at(&k, h)) / (deficit / 100.0)
            }
            M::NaFallPer100MgDlGlucose | M::NaFallPer100MgDlGlucoseAbove => {
                let g = column(traj, |s| {
                    units::glucose_mmol_l_to_mg_dl(s.obs.glucose_mmol_l)
                });
                let (_, (g_peak, t_peak)) = window(&g, self.arg("within_h"));
                let t_from = if self.kind == M::NaFallPer100MgDlGlucose {
                    t[0]
                } else {
                    let level = self.arg("from_mg_dl");
                    first_reach(&t, &g, level, t_peak).ok_or_else(|| {
                        MetricError(format!(
                            "glucose never reached {level} mg/dL (peak {g_peak:.0} mg/dL)"
                        ))
                    })?
                };
                let rise = g_peak - at(&g, t_from);
                if rise < 10.0 {
                    return Err(MetricError(format!(
                        "glucose rose only {rise:.1} mg/dL; at least 10 mg/dL is needed for a factor"
                    )));
                }
                -(at(&na, t_peak) - at(&na, t_from)) / (rise / 100.0)
            }
        };
        if value.is_finite() {
            Ok(value)
        } else {
            Err(MetricError(format!("{} is not a finite number", self.kind)))
        }
    }
}

#[cfg(test)]
#[path = "metrics_tests.rs"]
mod tests;
