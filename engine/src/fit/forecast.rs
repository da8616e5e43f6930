//! The forecast from a fit: the course under the scenario's plan for draws
//! from the Laplace posterior, as percentile bands, the chance of crossing
//! each limit, and the Adrogué–Madias forecast from the last measured
//! sodium for comparison.

use super::{Fit, FitModel};
use crate::body::StateSlot;
use crate::sweep::{normal_quantile, SplitMix64};
use crate::trajectory::{interpolate, Trajectory};
use serde::Serialize;

/// Solver tolerance of the forecast's draws: 1e-5 moves sodium by far
/// less than the bands' width (the sweeps' rtol 1e-4 moved no output by
/// more than 0.007 mmol/L; `cli/tests/sweep_tolerance.rs`).
const DRAW_RTOL: f64 = 1e-5;

/// The chance of crossing one rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitChance {
    /// The rule's label.
    pub label: String,
    /// Caution or limit.
    pub severity: crate::limits::Severity,
    /// Share of draws that cross it at any time of the run.
    pub p_any_time: f64,
    /// Share of draws that first cross it after the last observation
    /// (the forecast window).
    pub p_in_forecast: f64,
}

/// The forecast.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Forecast {
    /// Times, h.
    pub time_h: Vec<f64>,
    /// Sodium of the fitted patient (the posterior mode), mmol/L.
    pub na_fit: Vec<f64>,
    /// Percentiles 5, 25, 50, 75, 95 of sodium over the draws, mmol/L.
    pub na_percentiles: [Vec<f64>; 5],
    /// The Adrogué–Madias forecast from the last measured sodium (NaN
    /// before it), mmol/L.
    pub na_formula: Vec<f64>,
    /// Time of the last measured sodium, h.
    pub last_na_time_h: Option<f64>,
    /// Time of the last observation, h.
    pub last_observation_h: f64,
    /// Draws run, and how many failed.
    pub draws: usize,
    /// Draws whose run failed.
    pub failed: usize,
    /// Chance of crossing each rule in force.
    pub limits: Vec<LimitChance>,
}

/// Percentiles of the forecast.
pub const PERCENTILES: [f64; 5] = [0.05, 0.25, 0.5, 0.75, 0.95];

/// Forecast over the scenario's whole run with `draws` draws from the
/// fit's posterior (seeded: the same inputs give the same forecast).
pub fn forecast(model: &FitModel, fit: &Fit, draws: usize, seed: u64) -> Result<Forecast, String> {
    let map = model.run(&fit.values(), None, DRAW_RTOL)?;
    let times = map.times();
    let na_fit = map.sodium();
    let n = fit.z.len();
    let chol = lower_cholesky(&fit.covariance, n);
    let mut rng = SplitMix64::new(seed);
    let mut series: Vec<Vec<f64>> = Vec::with_capacity(draws);
    let mut trajs: Vec<Trajectory> = Vec::with_capacity(draws);
    let mut failed = 0;
    for _ in 0..draws {
        let e: Vec<f64> = (0..n)
            .map(|_| normal_quantile(rng.uniform().clamp(1e-12, 1.0 - 1e-12)))
            .collect();
        let z: Vec<f64> = (0..n)
            .map(|i| fit.z[i] + (0..=i).map(|k| chol[i * n + k] * e[k]).sum::<f64>())
            .collect();
        match model.run(&model.values(&z), None, DRAW_RTOL) {
            Ok(t) => {
                let tt = t.times();
                let na = t.sodium();
                series.push(times.iter().map(|&x| interpolate(&tt, &na, x)).collect());
                trajs.push(t);
            }
            Err(_) => failed += 1,
        }
    }
    if series.is_empty() {
        return Err(format!("every one of the {draws} forecast draws failed"));
    }
    let na_percentiles = PERCENTILES.map(|q| {
        (0..times.len())
            .map(|j| {
                let mut col: Vec<f64> = series.iter().map(|s| s[j]).collect();
                col.sort_by(f64::total_cmp);
                quantile_sorted(&col, q)
            })
            .collect()
    });
    let last_obs = model.observations.last_time_h();
    let last_na = model
        .observations
        .rows
        .iter()
        .rev()
        .find_map(|r| r.get(crate::observations::Lab::Na).map(|v| (r.time_h, v)));
    let na_formula = formula_from(&map, last_na);
    let rules = map.limits.applicable_rules(&map.situation);
    let ran = trajs.len() as f64;
    let limits = rules
        .iter()
        .map(|rule| {
            let crossed: Vec<f64> = trajs
                .iter()
                .filter_map(|t| t.flags.iter().find(|f| &f.rule == *rule).map(|f| f.time_h))
                .collect();
            LimitChance {
                label: rule.label.clone(),
                severity: rule.severity,
                p_any_time: crossed.len() as f64 / ran,
                p_in_forecast: crossed.iter().filter(|&&t| t > last_obs + 1e-9).count() as f64
                    / ran,
            }
        })
        .collect();
    Ok(Forecast {
        time_h: times,
        na_fit,
        na_percentiles,
        na_formula,
        last_na_time_h: last_na.map(|x| x.0),
        last_observation_h: last_obs,
        draws,
        failed,
        limits,
    })
}

/// The Adrogué–Madias forecast from a measured sodium `na_m` at `t_m`:
/// `na_m + (ΔNa_iv + ΔK_iv − na_m·ΔV_iv)/(TBW(t_m) + 1)` for what is given
/// by vein after `t_m` (Adrogué & Madias, NEJM 2000), with the fitted
/// body's water at `t_m`. NaN before `t_m`.
pub fn formula_from(traj: &Trajectory, last: Option<(f64, f64)>) -> Vec<f64> {
    let times = traj.times();
    let Some((t_m, na_m)) = last else {
        return vec![f64::NAN; times.len()];
    };
    let state =
        |s: StateSlot| -> Vec<f64> { traj.samples.iter().map(|x| x.y[s as usize]).collect() };
    let (v, na, k) = (
        state(StateSlot::InfusedWaterL),
        state(StateSlot::InfusedNa),
        state(StateSlot::InfusedK),
    );
    let tbw: Vec<f64> = traj.samples.iter().map(|x| x.obs.total_water_l).collect();
    let at = |series: &[f64], t: f64| interpolate(&times, series, t);
    let (v0, na0, k0, tbw_m) = (at(&v, t_m), at(&na, t_m), at(&k, t_m), at(&tbw, t_m));
    times
        .iter()
        .enumerate()
        .map(|(j, &t)| {
            if t < t_m - 1e-9 {
                f64::NAN
            } else {
                na_m + (na[j] - na0 + k[j] - k0 - na_m * (v[j] - v0)) / (tbw_m + 1.0)
            }
        })
        .collect()
}

/// Quantile of sorted values by linear interpolation (the "linear" method
/// of NumPy's `quantile`, common practice).
fn quantile_sorted(sorted: &[f64], q: f64) -> f64 {
    let pos = q * (sorted.len() - 1) as f64;
    let lo = pos.floor() as usize;
    let hi = pos.ceil() as usize;
    sorted[lo] + (pos - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Lower Cholesky factor of a row-major symmetric matrix (a tiny
/// regularisation keeps a nearly singular covariance usable).
fn lower_cholesky(a: &[f64], n: usize) -> Vec<f64> {
    let mut l = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..=i {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= l[i * n + k] * l[j * n + k];
            }
            if i == j {
                l[i * n + i] = s.max(1e-12).sqrt();
            } else {
                l[i * n + j] = s / l[j * n + j];
            }
        }
    }
    l
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_match_numpy_linear() {
        // numpy.quantile([1, 2, 3, 4], 0.25) = 1.75 (the linear method).
        assert!((quantile_sorted(&[1.0, 2.0, 3.0, 4.0], 0.25) - 1.75).abs() < 1e-12);
    }

    #[test]
    fn cholesky_reproduces_the_matrix() {
        let a = [4.0, 2.0, 0.6, 2.0, 2.0, 0.5, 0.6, 0.5, 3.0];
        let l = lower_cholesky(&a, 3);
        for i in 0..3 {
            for j in 0..3 {
                let s: f64 = (0..3).map(|k| l[i * 3 + k] * l[j * 3 + k]).sum();
                assert!((s - a[i * 3 + j]).abs() < 1e-12);
            }
        }
    }
}
