//! The result of a run: samples on a fixed grid with derived labs, sodium
//! changes over trailing windows, guideline flags, goals and the
//! fall-below-start warning, and the mass-balance ledger.

use crate::body::{Species, N_STATES};
use crate::goals::{self, BelowStart, GoalResult};
use crate::limits::{self, Flag, LimitChoice, Situation};
use crate::model::{Inputs, Observation};
use serde::Serialize;

/// One sample of the run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sample {
    /// Simulated time, h.
    pub time_h: f64,
    /// Derived labs and flows.
    pub obs: Observation,
    /// Inputs in force.
    pub inputs: Inputs,
    /// The full state vector (see [`crate::body::StateSlot`]).
    #[serde(skip)]
    pub y: Vec<f64>,
}

/// Solver statistics of a run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct SolverStats {
    /// Accepted steps.
    pub steps: usize,
    /// Rejected steps (error test).
    pub error_test_failures: usize,
    /// Nonlinear solver failures.
    pub nonlinear_failures: usize,
    /// Right-hand-side evaluations by the solver (Jacobian products excluded).
    pub rhs_calls: usize,
    /// Jacobian-vector products.
    pub jacobian_products: usize,
    /// Jacobian evaluations.
    pub jacobian_evaluations: usize,
    /// Solver restarts after an input change.
    pub restarts: usize,
}

/// Mass balance of one species over the run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Balance {
    /// Species name.
    pub species: &'static str,
    /// Unit of the amounts.
    pub unit: &'static str,
    /// What `intake` holds ([`Species::inflow`]).
    pub intake_includes: &'static str,
    /// Content at the start.
    pub start: f64,
    /// Content at the end.
    pub end: f64,
    /// Cumulative intake (given, and what the body makes: see
    /// `intake_includes`).
    pub intake: f64,
    /// Cumulative output.
    pub output: f64,
    /// Largest relative residual over all samples.
    pub max_relative_residual: f64,
}

/// What one stream (named by its label: the fluid's id unless the script
/// named it) put into or took out of the body over the whole run: its rates
/// times the hours it ran, so a stream stopped early or changed by a rule
/// counts what it really gave.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct StreamTotal {
    /// The stream's label.
    pub label: String,
    /// Water infused, L.
    pub water_in_l: f64,
    /// Water drunk or given into the gut, L.
    pub oral_water_l: f64,
    /// Sodium given by any route, mmol.
    pub na_in_mmol: f64,
    /// Potassium given by any route, mmol.
    pub k_in_mmol: f64,
    /// Water removed in losses of fixed composition, L.
    pub water_out_l: f64,
    /// Sodium removed in those losses, mmol.
    pub na_out_mmol: f64,
    /// Whole blood removed, L.
    pub blood_loss_l: f64,
    /// Desmopressin given, ug.
    pub desmopressin_ug: f64,
    /// Loop diuretic given, mg.
    pub loop_diuretic_mg: f64,
    /// Oral V2 antagonist absorbed, mg.
    pub v2_antagonist_mg: f64,
}

impl StreamTotal {
    /// Add `hours` of the rates `r`.
    pub fn add(&mut self, r: &crate::model::Inputs, hours: f64) {
        self.water_in_l += r.water_in_l_h * hours;
        self.oral_water_l += r.oral_water_l_h * hours;
        self.na_in_mmol += (r.na_in_mmol_h + r.oral_na_mmol_h) * hours;
        self.k_in_mmol += (r.k_in_mmol_h + r.oral_k_mmol_h) * hours;
        self.water_out_l += r.water_out_l_h * hours;
        self.na_out_mmol += r.na_out_mmol_h * hours;
        self.blood_loss_l += r.blood_loss_l_h * hours;
        self.desmopressin_ug += (r.desmopressin_ug_h + r.desmopressin_depot_ug_h) * hours;
        self.loop_diuretic_mg += (r.loop_diuretic_mg_h + r.loop_diuretic_depot_mg_h) * hours;
        self.v2_antagonist_mg += r.v2_antagonist_mg_h * hours;
    }
}

/// The output of a [`crate::Simulation`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Trajectory {
    /// Samples on the grid (and at the end).
    pub samples: Vec<Sample>,
    /// Serum sodium change since the start, per sample, mmol/L.
    pub na_change_since_start: Vec<f64>,
    /// Serum sodium change over the trailing 24 h (`Na(t) − Na(max(0, t − 24))`), per sample.
    pub na_change_24h: Vec<f64>,
    /// Serum sodium change over the trailing 48 h, per sample.
    pub na_change_48h: Vec<f64>,
    /// Guideline rules crossed.
    pub flags: Vec<Flag>,
    /// Guideline set used.
    pub limits: LimitChoice,
    /// What decided which rules and goals apply (start, onset, symptoms).
    pub situation: Situation,
    /// Goals of the guideline set that apply, judged (not flags).
    pub goals: Vec<GoalResult>,
    /// Sodium fell back below its start during a hyponatremia correction.
    pub below_start: Option<BelowStart>,
    /// Serum sodium left the range the model was built for.
    pub outside_range: Option<crate::model_range::OutsideRange>,
    /// Mass balance per species (empty when the run was asked not to work
    /// it out, [`crate::Plan::mass_balance`]).
    pub balance: Vec<Balance>,
    /// What each stream gave or took, in the order the streams first ran.
    pub stream_totals: Vec<StreamTotal>,
    /// Solver statistics.
    pub stats: SolverStats,
}

/// Value of a piecewise-linear series at time `t` (clamped at the ends).
pub fn interpolate(times: &[f64], values: &[f64], t: f64) -> f64 {
    interpolate_by(times.len(), |i| times[i], |i| values[i], t)
}

/// [`interpolate`] over `n` points whose times (ascending) and values are
/// read by index: the one place the series of a run are read between
/// their samples.
fn interpolate_by(
    n: usize,
    time: impl Fn(usize) -> f64,
    value: impl Fn(usize) -> f64,
    t: f64,
) -> f64 {
    if n == 0 {
        return f64::NAN;
    }
    if t <= time(0) {
        return value(0);
    }
    // The first point at or after `t` (as `partition_point` finds it).
    let (mut lo, mut hi) = (0, n);
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if time(mid) < t {
            lo = mid + 1;
        } else {
            hi = mid;
        }
    }
    let j = lo;
    if j >= n {
        return value(n - 1);
    }
    let (t0, t1) = (time(j - 1), time(j));
    if t1 - t0 <= 0.0 {
        return value(j);
    }
    let (v0, v1) = (value(j - 1), value(j));
    v0 + (v1 - v0) * (t - t0) / (t1 - t0)
}

/// Change over a trailing window: `v(t) − v(max(t₀, t − window))` (the
/// definition [`trailing_changes`] is tested against).
#[cfg(test)]
fn trailing_change(times: &[f64], values: &[f64], j: usize, window_h: f64) -> f64 {
    let t = times[j];
    let from = (t - window_h).max(times[0]);
    values[j] - interpolate(&times[..=j], &values[..=j], from)
}

/// The change over a trailing window at every sample, in one pass: the window's start
/// only moves forward, so its place among the samples is found by walking
/// rather than by a search per sample. Same values, bit for bit.
pub fn trailing_changes(times: &[f64], values: &[f64], window_h: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(times.len());
    // First sample at or after the window's start.
    let mut k = 0usize;
    for j in 0..times.len() {
        let from = (times[j] - window_h).max(times[0]);
        if from <= times[0] {
            out.push(values[j] - values[0]);
            continue;
        }
        while k <= j && times[k] < from {
            k += 1;
        }
        let back = if k > j {
            values[j]
        } else {
            let (t0, t1) = (times[k - 1], times[k]);
            if t1 - t0 <= 0.0 {
                values[k]
            } else {
                values[k - 1] + (values[k] - values[k - 1]) * (from - t0) / (t1 - t0)
            }
        };
        out.push(values[j] - back);
    }
    out
}

impl Trajectory {
    /// Assemble the derived series from samples; `situation` decides
    /// which rules and goals of `limits` apply.
    pub fn from_samples(
        samples: Vec<Sample>,
        limits: LimitChoice,
        situation: Situation,
        stats: SolverStats,
    ) -> Self {
        Self::from_samples_with(samples, limits, situation, stats, true)
    }

    /// [`Trajectory::from_samples`], working out the mass balance (every
    /// species at every sample) only when `balance` is true; otherwise
    /// [`Trajectory::balance`] is left empty.
    pub fn from_samples_with(
        samples: Vec<Sample>,
        limits: LimitChoice,
        situation: Situation,
        stats: SolverStats,
        balance: bool,
    ) -> Self {
        let times: Vec<f64> = samples.iter().map(|s| s.time_h).collect();
        let na: Vec<f64> = samples.iter().map(|s| s.obs.na_mmol_l).collect();
        let na0 = na.first().copied().unwrap_or(f64::NAN);
        let since: Vec<f64> = na.iter().map(|x| x - na0).collect();
        let c24 = trailing_changes(&times, &na, 24.0);
        let c48 = trailing_changes(&times, &na, 48.0);
        let flags = limits::check(&times, &na, &limits, &situation);
        let goal_results = goals::check(&times, &na, &limits, &situation);
        let below_start = goals::below_start(&times, &na, &situation);
        let outside_range = crate::model_range::sodium_outside(&times, &na);
        let balance = match (samples.first(), samples.last()) {
            (Some(first), Some(last)) if balance && first.y.len() == N_STATES => Species::ALL
                .iter()
                .map(|&sp| Balance {
                    species: sp.name(),
                    unit: sp.unit(),
                    intake_includes: sp.inflow(),
                    start: sp.content(&first.y),
                    end: sp.content(&last.y),
                    intake: sp.cumulative_in(&last.y),
                    output: sp.cumulative_out(&last.y),
                    max_relative_residual: {
                        let c0 = sp.content(&first.y);
                        samples
                            .iter()
                            .map(|s| sp.residual_from(c0, &s.y).abs())
                            .fold(0.0, f64::max)
                    },
                })
                .collect(),
            _ => Vec::new(),
        };
        Trajectory {
            samples,
            na_change_since_start: since,
            na_change_24h: c24,
            na_change_48h: c48,
            flags,
            limits,
            situation,
            goals: goal_results,
            below_start,
            outside_range,
            balance,
            stream_totals: Vec::new(),
            stats,
        }
    }

    /// Sample times, h.
    pub fn times(&self) -> Vec<f64> {
        self.samples.iter().map(|s| s.time_h).collect()
    }

    /// Serum sodium per sample.
    pub fn sodium(&self) -> Vec<f64> {
        self.samples.iter().map(|s| s.obs.na_mmol_l).collect()
    }

    /// The sample nearest to time `t`.
    pub fn at(&self, t_h: f64) -> &Sample {
        let j = self.samples.partition_point(|s| s.time_h < t_h);
        let j = j.min(self.samples.len() - 1);
        if j > 0 && (self.samples[j - 1].time_h - t_h).abs() < (self.samples[j].time_h - t_h).abs()
        {
            &self.samples[j - 1]
        } else {
            &self.samples[j]
        }
    }

    /// The value `f` reads off the samples at time `t`, linear between the
    /// two samples around it and clamped at the ends: [`interpolate`] over
    /// the series `f` gives, without building the series (same bits).
    pub fn value_at(&self, t: f64, f: impl Fn(&Sample) -> f64) -> f64 {
        let samples = &self.samples;
        interpolate_by(samples.len(), |i| samples[i].time_h, |i| f(&samples[i]), t)
    }

    /// The last sample.
    pub fn last(&self) -> &Sample {
        &self.samples[self.samples.len() - 1]
    }

    /// Largest relative mass-balance residual of any species at any sample.
    pub fn max_balance_residual(&self) -> f64 {
        self.balance
            .iter()
            .map(|b| b.max_relative_residual)
            .fold(0.0, f64::max)
    }

    /// Largest rise of serum sodium within any window of `window_h` hours
    /// (`Na(t) − min Na` over the window), and the time it was reached.
    pub fn largest_rise(&self, window_h: f64) -> (f64, f64) {
        let times = self.times();
        let na = self.sodium();
        let rule = limits::Rule {
            direction: limits::Direction::Rise,
            window_h,
            max_mmol_l: 0.0,
            from_h: times.first().copied().unwrap_or(0.0),
            to_h: None,
            severity: limits::Severity::Caution,
            label: String::new(),
            source: String::new(),
            start: limits::StartDisorder::Any,
            onset: limits::OnsetCondition::Any,
        };
        limits::window_changes(&times, &na, &rule)
            .into_iter()
            .zip(times.iter().copied())
            .fold((0.0, 0.0), |a, b| if b.0 > a.0 { b } else { a })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trailing_changes_in_one_pass_equal_the_searched_ones() {
        // Uneven times with a repeated one (a sample at a restart).
        let mut t: Vec<f64> = vec![0.0];
        for i in 1..400 {
            let dt = [0.25, 0.5, 1.0 / 12.0, 0.0][i % 4];
            t.push(t[i - 1] + dt);
        }
        let v: Vec<f64> = t
            .iter()
            .map(|x: &f64| 120.0 + (x * 0.7).sin() + 0.1 * x)
            .collect();
        for w in [0.3, 6.0, 24.0, 48.0, 1e3] {
            let fast = trailing_changes(&t, &v, w);
            for (j, f) in fast.iter().enumerate() {
                assert_eq!(*f, trailing_change(&t, &v, j, w), "window {w}, sample {j}");
            }
        }
    }

    #[test]
    fn value_at_reads_the_samples_as_interpolate_reads_the_series() {
        let plan = crate::Plan::new(crate::Patient::healthy(crate::Sex::Female, 50.0, 60.0))
            .run_for(3.0)
            .start(
                0.5,
                crate::Stream::drink(
                    crate::FluidLibrary::bundled().get("water").unwrap(),
                    0.5,
                    0.25,
                )
                .unwrap(),
            );
        let traj = crate::Simulation::new(plan).unwrap().run().unwrap();
        let times = traj.times();
        let na: Vec<f64> = traj.samples.iter().map(|s| s.obs.na_mmol_l).collect();
        for t in [-1.0, 0.0, 0.01, 0.5, 0.61, 1.234, 2.999, 3.0, 7.0] {
            let read = traj.value_at(t, |s| s.obs.na_mmol_l);
            assert_eq!(
                read.to_bits(),
                interpolate(&times, &na, t).to_bits(),
                "t {t}"
            );
        }
    }

    #[test]
    fn interpolation_and_trailing_change() {
        let t = [0.0, 12.0, 24.0, 36.0];
        let v = [120.0, 124.0, 130.0, 133.0];
        assert_eq!(interpolate(&t, &v, 6.0), 122.0);
        assert_eq!(interpolate(&t, &v, -1.0), 120.0);
        assert_eq!(interpolate(&t, &v, 99.0), 133.0);
        assert_eq!(trailing_change(&t, &v, 3, 24.0), 9.0);
        assert_eq!(trailing_change(&t, &v, 1, 24.0), 4.0);
    }
}
