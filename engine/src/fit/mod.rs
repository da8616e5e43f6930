//! # Learning the patient from measured labs, and the forecast
//!
//! A scenario gives the patient, the cause and what was given so far (and,
//! after the last observation, the plan proposed); [`Observations`] give
//! the labs measured. The fit estimates the [`Unknown`]s (body water, the
//! strength of an inappropriate secretion, when the cause resolves, urea
//! generation, or those of a `--vary` spec) by maximising the posterior:
//! each unknown is searched in a standard coordinate whose prior is the
//! standard normal ([`unknowns`]), so the negative log posterior is half
//! the sum of squares of the scaled residuals ([`residuals`]: each lab's
//! misfit over its measurement error) and of the coordinates themselves.
//! That sum is minimised with MINPACK's Levenberg–Marquardt (the
//! `levenberg-marquardt` crate) on a Jacobian by forward differences of
//! full simulations.
//!
//! The uncertainty is the Laplace approximation around the optimum: a
//! normal posterior in the standard coordinates with covariance
//! `(JᵀJ)⁻¹`, the Gauss–Newton Hessian of the sum of squares. It is
//! chosen over a sampler because it costs one Jacobian (a handful of runs)
//! where a chain costs thousands, and because the coordinates make the
//! priors normal; its limits (a posterior far from normal, as when the
//! resolution time is not yet seen in the data) are what the synthetic
//! recovery check measures (`docs/fit.md`).
//!
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.

pub mod forecast;
pub mod residuals;
pub mod unknowns;

pub use forecast::{forecast, Forecast};
pub use residuals::{measurement_sd, Residual};
pub use unknowns::{default_unknowns, Unknown, CAUSE_RESOLVES_H};

use crate::observations::Observations;
use crate::plan::{Action, Plan};
use crate::scenario::Scenario;
use crate::trajectory::Trajectory;
use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use lm_algebra::{storage::Owned, DMatrix, DVector, Dyn};
use serde::Serialize;
use std::cell::Cell;

/// Residual given to a run that fails (a start the model refuses, a
/// solver failure): large, so the search turns away from it.
const FAILED_RUN_RESIDUAL: f64 = 1e3;
/// Step of the forward differences, in standard coordinates (a tenth of
/// a prior standard deviation is far above the solver's noise at rtol
/// 1e-7 and small against the curvature of the posterior).
const DIFFERENCE_STEP: f64 = 0.02;
/// Solver tolerance of the fit's runs (tighter than the default, so the
/// differences are clean).
const FIT_RTOL: f64 = 1e-7;

/// The model of the measurements: a scenario, the unknowns and the
/// observations.
pub struct FitModel<'a> {
    /// The scenario.
    pub scenario: &'a Scenario,
    /// The unknowns.
    pub unknowns: &'a [Unknown],
    /// The measurements.
    pub observations: &'a Observations,
    runs: Cell<usize>,
}

impl<'a> FitModel<'a> {
    /// A model of `observations` by `scenario` with `unknowns`.
    pub fn new(
        scenario: &'a Scenario,
        unknowns: &'a [Unknown],
        observations: &'a Observations,
    ) -> Self {
        FitModel {
            scenario,
            unknowns,
            observations,
            runs: Cell::new(0),
        }
    }

    /// Runs made so far.
    pub fn runs(&self) -> usize {
        self.runs.get()
    }

    /// The unknowns' values at standard coordinates `z`.
    pub fn values(&self, z: &[f64]) -> Vec<(String, f64)> {
        self.unknowns
            .iter()
            .zip(z)
            .map(|(u, &z)| (u.name.clone(), u.value(z)))
            .collect()
    }

    /// The scenario's plan with the unknowns at `values`, run until
    /// `until_h` (none: the scenario's end).
    pub fn plan(&self, values: &[(String, f64)], until_h: Option<f64>) -> Result<Plan, String> {
        let mut plan = self.scenario.plan().clone();
        let overrides: Vec<(String, f64)> = values
            .iter()
            .filter(|(n, _)| n != CAUSE_RESOLVES_H)
            .cloned()
            .collect();
        crate::sweep::apply_overrides(&mut plan, &overrides)?;
        if let Some((_, t)) = values.iter().find(|(n, _)| n == CAUSE_RESOLVES_H) {
            if *t < plan.duration_h {
                plan = plan.at(*t, Action::ResolveCause);
            }
        }
        if let Some(until) = until_h {
            if until < plan.duration_h {
                plan.duration_h = until;
                plan.events.retain(|e| e.time_h <= until);
            }
        }
        Ok(plan)
    }

    /// Run the scenario with the unknowns at `values`.
    pub fn run(
        &self,
        values: &[(String, f64)],
        until_h: Option<f64>,
        rtol: f64,
    ) -> Result<Trajectory, String> {
        let mut plan = self.plan(values, until_h)?;
        plan.tolerances.rtol = rtol;
        self.runs.set(self.runs.get() + 1);
        self.scenario
            .run_with_plan(plan)
            .map(|r| r.trajectory)
            .map_err(|e| e.to_string())
    }

    /// The scaled residuals at `z`: every observation, then every
    /// coordinate (the prior).
    pub fn residual_vector(&self, z: &[f64]) -> Vec<f64> {
        let values = self.values(z);
        let until = self.observations.last_time_h() + 1e-6;
        let weight = self.scenario.plan().patient.weight_kg;
        let mut out: Vec<f64> = match self.run(&values, Some(until), FIT_RTOL) {
            Ok(t) => residuals::residuals(&t, self.observations, weight)
                .into_iter()
                .map(|r| r.scaled)
                .collect(),
            Err(_) => vec![FAILED_RUN_RESIDUAL; self.observations.count()],
        };
        out.extend_from_slice(z);
        out
    }

    /// The Jacobian of [`FitModel::residual_vector`] at `z` by forward
    /// differences, with the residuals at `z`.
    pub fn jacobian(&self, z: &[f64], at: &[f64]) -> DMatrix<f64> {
        let m = at.len();
        let n = z.len();
        let mut j = DMatrix::zeros(m, n);
        for k in 0..n {
            let mut zk = z.to_vec();
            zk[k] += DIFFERENCE_STEP;
            let r = self.residual_vector(&zk);
            for i in 0..m {
                j[(i, k)] = (r[i] - at[i]) / DIFFERENCE_STEP;
            }
        }
        j
    }
}

struct Problem<'m, 'a> {
    model: &'m FitModel<'a>,
    z: DVector<f64>,
    r: Vec<f64>,
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_, '_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        self.z.copy_from(x);
        self.r = self.model.residual_vector(self.z.as_slice());
    }

    fn params(&self) -> DVector<f64> {
        self.z.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        Some(DVector::from_vec(self.r.clone()))
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        Some(self.model.jacobian(self.z.as_slice(), &self.r))
    }
}

/// One estimate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Estimate {
    /// The unknown.
    pub name: String,
    /// Its prior median.
    pub prior_median: f64,
    /// The posterior mode (the fit).
    pub value: f64,
    /// 5th percentile of the Laplace posterior.
    pub p5: f64,
    /// 95th percentile.
    pub p95: f64,
    /// Standard coordinate of the mode.
    pub z: f64,
    /// Posterior standard deviation in the standard coordinate (1: the
    /// data taught nothing; much less: well determined).
    pub z_sd: f64,
    /// Why this prior.
    pub why: String,
}

/// How the optimisation ended.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Convergence {
    /// The solver's termination, in words.
    pub termination: String,
    /// Whether it counts as converged.
    pub converged: bool,
    /// Evaluations of the residuals by the solver.
    pub evaluations: usize,
    /// Runs of the full model, Jacobians included.
    pub runs: usize,
    /// Half the sum of squares at the prior medians.
    pub objective_start: f64,
    /// Half the sum of squares at the optimum.
    pub objective_end: f64,
}

/// The fitted patient.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fit {
    /// Every estimate.
    pub estimates: Vec<Estimate>,
    /// Every residual at the optimum.
    pub residuals: Vec<Residual>,
    /// Root mean square of the scaled data residuals.
    pub rms_scaled_residual: f64,
    /// The optimisation.
    pub convergence: Convergence,
    /// Standard coordinates of the mode.
    #[serde(skip)]
    pub z: Vec<f64>,
    /// Their covariance (Laplace), row-major.
    #[serde(skip)]
    pub covariance: Vec<f64>,
}

impl Fit {
    /// The fitted values by name (the posterior mode).
    pub fn values(&self) -> Vec<(String, f64)> {
        self.estimates
            .iter()
            .map(|e| (e.name.clone(), e.value))
            .collect()
    }
}

/// Why a fit could not be made.
#[derive(Debug, thiserror::Error)]
pub enum FitError {
    /// Bad input (names the file or the field).
    #[error("{0}")]
    Input(#[from] crate::error::InputError),
    /// The observations cannot teach anything.
    #[error("{0}")]
    Nothing(String),
}

/// Half the sum of squares.
fn objective(r: &[f64]) -> f64 {
    0.5 * r.iter().map(|x| x * x).sum::<f64>()
}

/// Where the search starts: the prior medians, or, when the time the
/// cause resolves is unknown, the best of a few times spread over the
/// observations and beyond them. Before it resolves the time has no
/// effect on the labs, so from a time after the last observation the
/// derivative is zero and a local search could never find an end seen in
/// the data.
fn starting_point(model: &FitModel) -> (Vec<f64>, Vec<f64>, f64) {
    let n = model.unknowns.len();
    let z0 = vec![0.0; n];
    let r0 = model.residual_vector(&z0);
    let mut best = (objective(&r0), z0, r0);
    let start = best.0;
    if let Some(k) = model
        .unknowns
        .iter()
        .position(|u| u.name == CAUSE_RESOLVES_H)
    {
        let u = &model.unknowns[k];
        let last = model.observations.last_time_h();
        for share in [0.125, 0.25, 0.375, 0.5, 0.625, 0.75, 0.875] {
            let t = share * last;
            // The standard coordinate of time t: invert the prior by
            // bisection (the value grows with z).
            let (mut lo, mut hi) = (-8.0, 8.0);
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if u.value(mid) < t {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            let mut z = vec![0.0; n];
            z[k] = 0.5 * (lo + hi);
            let r = model.residual_vector(&z);
            let f = objective(&r);
            if f < best.0 {
                best = (f, z, r);
            }
        }
    }
    (best.1, best.2, start)
}

/// Fit the unknowns to the observations.
pub fn fit(model: &FitModel) -> Result<Fit, FitError> {
    let n = model.unknowns.len();
    if n == 0 {
        return Err(FitError::Nothing("no unknowns to estimate".into()));
    }
    if model.observations.count() == 0 {
        return Err(FitError::Nothing(format!(
            "{}: no measured value to fit",
            model.observations.file
        )));
    }
    let duration = model.scenario.plan().duration_h;
    if model.observations.last_time_h() > duration + 1e-9 {
        return Err(FitError::Input(crate::error::InputError::OutOfRange {
            field: format!("{}: time_h", model.observations.file),
            value: model.observations.last_time_h(),
            min: 0.0,
            max: duration,
            unit: "h (the scenario's run_for)".into(),
        }));
    }
    let (z0, r0, objective_start) = starting_point(model);
    let problem = Problem {
        model,
        z: DVector::from_vec(z0),
        r: r0,
    };
    let (problem, report) = LevenbergMarquardt::new()
        .with_patience(30)
        .minimize(problem);
    let z: Vec<f64> = problem.z.as_slice().to_vec();
    let r = problem.r.clone();
    let objective_end = objective(&r);
    // Laplace: covariance (JᵀJ)⁻¹ at the mode.
    let j = model.jacobian(&z, &r);
    let h = j.transpose() * &j;
    let cov = h
        .clone()
        .cholesky()
        .map(|c| c.inverse())
        .or_else(|| h.pseudo_inverse(1e-12).ok())
        .unwrap_or_else(|| DMatrix::identity(n, n));
    let values = model.values(&z);
    let estimates = model
        .unknowns
        .iter()
        .enumerate()
        .map(|(k, u)| {
            let sd = cov[(k, k)].max(0.0).sqrt();
            Estimate {
                name: u.name.clone(),
                prior_median: u.median(),
                value: values[k].1,
                p5: u.value(z[k] - 1.644_853_6 * sd),
                p95: u.value(z[k] + 1.644_853_6 * sd),
                z: z[k],
                z_sd: sd,
                why: u.why.clone(),
            }
        })
        .collect();
    let until = model.observations.last_time_h() + 1e-6;
    let weight = model.scenario.plan().patient.weight_kg;
    let residuals = model
        .run(&values, Some(until), FIT_RTOL)
        .map(|t| residuals::residuals(&t, model.observations, weight))
        .unwrap_or_default();
    let rms = if residuals.is_empty() {
        f64::NAN
    } else {
        (residuals.iter().map(|r| r.scaled * r.scaled).sum::<f64>() / residuals.len() as f64).sqrt()
    };
    let termination = format!("{:?}", report.termination);
    Ok(Fit {
        estimates,
        residuals,
        rms_scaled_residual: rms,
        convergence: Convergence {
            converged: report.termination.was_successful(),
            termination,
            evaluations: report.number_of_evaluations,
            runs: model.runs(),
            objective_start,
            objective_end,
        },
        z,
        covariance: (0..n * n).map(|i| cov[(i / n, i % n)]).collect(),
    })
}

#[cfg(test)]
mod tests;
