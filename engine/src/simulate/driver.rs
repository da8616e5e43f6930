//! The integration loop: runs the solver segment by segment between hard
//! breaks (events, ends of streams), takes samples on the grid, consults
//! the controller at check times, restarts the solver when the inputs or
//! the model change, and stops on a negative pool.

use super::problem::{build_problem, host, refresh, scale_transit_pools, Eqn, Problem, LS, V};
use super::schedule::{Schedule, EPS_H};
use super::Simulation;
use crate::body::STATE_NAMES;
use crate::error::SimulationError;
use crate::model::{Inputs, Model};
use crate::plan::{Action, Controller, SampleDetail, Snapshot};
use crate::trajectory::{Sample, SolverStats, Trajectory};
use diffsol::{
    Bdf, OdeEquations, OdeSolverMethod, OdeSolverState, OdeSolverStopReason, Op, Vector,
};
use std::sync::Arc;

fn solver_error(t: f64, e: impl std::fmt::Display) -> SimulationError {
    SimulationError::Solver {
        time_h: t,
        message: e.to_string(),
    }
}

/// The sample times: every `every_h` from 0, and the end of the run if it
/// falls between two.
fn sample_grid(end: f64, every_h: f64) -> Vec<f64> {
    let n_grid = (end / every_h + 1e-9).floor() as usize;
    let mut grid: Vec<f64> = (0..=n_grid).map(|k| k as f64 * every_h).collect();
    if end - grid[grid.len() - 1] > EPS_H {
        grid.push(end);
    }
    grid
}

/// The scale of every state for [`check_negative`], from the state at the
/// start of the run.
fn negative_scales(y0: &[f64]) -> Vec<f64> {
    let mut scales: Vec<f64> = y0.iter().map(|v| v.abs().max(1.0)).collect();
    // A transit pool decaying to zero may dip below it by the solver's
    // error (a few times its absolute tolerance): not a negative amount.
    scale_transit_pools(y0, &mut scales, 10.0);
    scales
}

/// Record a sample of state `y` at `time` under `inputs`, holding `detail`.
fn take(
    samples: &mut Vec<Sample>,
    model: &Model,
    detail: SampleDetail,
    time: f64,
    y: Vec<f64>,
    inputs: &Inputs,
) {
    let obs = match detail {
        SampleDetail::Full => model.observe(&y, inputs),
        SampleDetail::StateOnly => model.observe_state(&y),
    };
    samples.push(Sample {
        time_h: time,
        obs,
        inputs: *inputs,
        y,
    });
}

/// Add the model evaluations of a problem's right-hand side to `stats`.
fn add_rhs_statistics(stats: &mut SolverStats, problem: &Problem) {
    let rs = problem.eqn.rhs().statistics();
    stats.rhs_calls += rs.number_of_calls;
    stats.jacobian_products += rs.number_of_jac_muls;
    stats.jacobian_evaluations += rs.number_of_matrix_evals;
}

impl Simulation {
    /// Run the plan, consulting `controller` at every check time.
    pub fn run_with(&self, controller: &mut dyn Controller) -> Result<Trajectory, SimulationError> {
        let plan = &self.plan;
        let end = plan.duration_h;
        // The model in force: a change (a parameter set at a time or by a
        // rule, a cause that resolves) replaces it, and the solver restarts
        // on a problem built for the new one.
        let mut model = self.model.clone();
        let mut schedule = self.initial_schedule();
        let mut samples: Vec<Sample> = Vec::new();
        let grid = sample_grid(end, plan.sample_every_h);
        let mut next_sample = 0usize;
        let mut stats = SolverStats::default();
        let scales = negative_scales(&self.initial.y);

        // Events and the first check at t = 0.
        let mut t = 0.0;
        let mut y = self.initial.y.clone();
        // Working buffers for states read between steps.
        let mut ybuf = y.clone();
        let mut inputs = self.process(0.0, &y, &mut schedule, &samples, controller, &mut model)?;
        let mut problem = build_problem(model.clone(), &self.initial.y, &y, &plan.tolerances)?;
        let mut problem_model = model.clone();
        let ctx = *problem.context();
        let mut vbuf = V::from_vec(y.clone(), ctx);
        let mut state = problem
            .bdf_state::<LS>()
            .map_err(|e| solver_error(0.0, e))?;
        problem
            .eqn_mut()
            .set_params(&V::from_vec(inputs.to_vec(), ctx));
        refresh(&problem, &mut state);

        let detail = plan.sample_detail;
        take(&mut samples, &model, detail, 0.0, y.clone(), &inputs);
        next_sample += 1;

        loop {
            let mut solver: Bdf<'_, Eqn, LS> = problem
                .bdf_solver::<LS>(state)
                .map_err(|e| solver_error(t, e))?;
            // Checks do not stop the solver: it steps past them and the
            // controller sees the interpolated state. Only when a check (or
            // an event) changes the inputs is the solver restarted, from the
            // state at that moment (`rewind`).
            let mut rewind: Option<(f64, Vec<f64>)> = None;
            let changed = loop {
                if t >= end - EPS_H {
                    break false;
                }
                let stop = schedule.next_hard_break(t, end);
                if stop > t + EPS_H {
                    solver.set_stop_time(stop).map_err(|e| solver_error(t, e))?;
                    'steps: loop {
                        let reason = solver
                            .step()
                            .map_err(|e| solver_error(solver.state().t, e))?;
                        let now = solver.state().t;
                        check_negative(host(solver.state().y), now, &scales)?;
                        // Samples and checks up to `now`, in time order.
                        loop {
                            let ts = grid
                                .get(next_sample)
                                .copied()
                                .filter(|&ts| ts <= now + EPS_H);
                            let tc = Some(schedule.next_check_h).filter(|&tc| {
                                tc <= now + EPS_H && tc < stop - EPS_H && tc > t + EPS_H
                            });
                            // The state at `tt` into `ybuf`: the step's end, the
                            // sample just taken at that time, or interpolated.
                            let mut at = |tt: f64, samples: &[Sample]| {
                                if (tt - now).abs() <= EPS_H {
                                    ybuf.copy_from_slice(host(solver.state().y));
                                    return Ok(());
                                }
                                if let Some(last) =
                                    samples.last().filter(|s| (s.time_h - tt).abs() <= EPS_H)
                                {
                                    ybuf.copy_from_slice(&last.y);
                                    return Ok(());
                                }
                                solver
                                    .interpolate_inplace(tt, &mut vbuf)
                                    .map_err(|e| solver_error(tt, e))?;
                                ybuf.copy_from_slice(host(&vbuf));
                                Ok::<(), SimulationError>(())
                            };
                            match (ts, tc) {
                                (Some(ts), tc) if tc.is_none_or(|tc| ts <= tc + EPS_H) => {
                                    at(ts, &samples)?;
                                    check_negative(&ybuf, ts, &scales)?;
                                    take(&mut samples, &model, detail, ts, ybuf.clone(), &inputs);
                                    next_sample += 1;
                                }
                                (_, Some(tc)) => {
                                    at(tc, &samples)?;
                                    let new_inputs = self.process(
                                        tc,
                                        &ybuf,
                                        &mut schedule,
                                        &samples,
                                        controller,
                                        &mut model,
                                    )?;
                                    if new_inputs != inputs || !Arc::ptr_eq(&model, &problem_model)
                                    {
                                        inputs = new_inputs;
                                        rewind = Some((tc, ybuf.clone()));
                                        break 'steps;
                                    }
                                }
                                _ => break,
                            }
                        }
                        if let OdeSolverStopReason::TstopReached = reason {
                            break;
                        }
                    }
                }
                if let Some((tc, _)) = &rewind {
                    t = *tc;
                    break true;
                }
                t = stop;
                y.copy_from_slice(host(solver.state().y));
                let new_inputs =
                    self.process(t, &y, &mut schedule, &samples, controller, &mut model)?;
                if new_inputs != inputs || !Arc::ptr_eq(&model, &problem_model) {
                    inputs = new_inputs;
                    break true;
                }
            };
            let st = solver.get_statistics();
            stats.steps += st.number_of_steps;
            stats.error_test_failures += st.number_of_error_test_failures;
            stats.nonlinear_failures += st.number_of_nonlinear_solver_fails;
            state = solver.into_state();
            if let Some((tc, yc)) = rewind.take() {
                // Restart from the interpolated state at the check.
                let st = state.as_mut();
                st.y.copy_from(&V::from_vec(yc, ctx));
                *st.t = tc;
            }
            if !changed {
                break;
            }
            if !Arc::ptr_eq(&model, &problem_model) {
                // A new model: a new problem, started from the state now.
                let (t_now, y_now) = {
                    let st = state.as_ref();
                    (st.t, host(st.y).to_vec())
                };
                add_rhs_statistics(&mut stats, &problem);
                problem = build_problem(model.clone(), &self.initial.y, &y_now, &plan.tolerances)?;
                problem_model = model.clone();
                state = problem
                    .bdf_state::<LS>()
                    .map_err(|e| solver_error(t_now, e))?;
                *state.as_mut().t = t_now;
            }
            stats.restarts += 1;
            problem
                .eqn_mut()
                .set_params(&V::from_vec(inputs.to_vec(), ctx));
            refresh(&problem, &mut state);
        }
        add_rhs_statistics(&mut stats, &problem);
        let mut trajectory = Trajectory::from_samples_with(
            samples,
            plan.limits.clone(),
            crate::limits::Situation::of(&self.patient),
            stats,
            plan.mass_balance,
        );
        trajectory.stream_totals = schedule.totals_to(end);
        Ok(trajectory)
    }

    /// Apply what is due at `t` (events, ends of streams, a check, changes
    /// to the model) and return the inputs in force from `t` on; `model`
    /// is replaced when a change asks for it.
    fn process(
        &self,
        t: f64,
        y: &[f64],
        schedule: &mut Schedule,
        samples: &[Sample],
        controller: &mut dyn Controller,
        model: &mut Arc<Model>,
    ) -> Result<Inputs, SimulationError> {
        let inputs = self.process_schedule(t, y, schedule, samples, controller, model)?;
        if schedule.model_changes.is_empty() {
            return Ok(inputs);
        }
        for change in std::mem::take(&mut schedule.model_changes) {
            let made = match &change {
                Action::SetParam { name, value } => model.with_param(name, *value, &self.patient),
                _ => model.with_cause_resolved(&self.patient),
            };
            let (new_model, effects) = made.map_err(|e| SimulationError::Controller {
                time_h: t,
                message: e.to_string(),
            })?;
            *model = Arc::new(new_model);
            for label in effects.stop {
                schedule.apply(t, Action::Stop(label));
            }
            if let Some(rates) = effects.habitual {
                schedule.set_rates("habitual", rates);
            }
        }
        Ok(schedule.inputs())
    }

    fn process_schedule(
        &self,
        t: f64,
        y: &[f64],
        schedule: &mut Schedule,
        samples: &[Sample],
        controller: &mut dyn Controller,
        model: &Model,
    ) -> Result<Inputs, SimulationError> {
        if schedule.advance_to(t) {
            let inputs = schedule.inputs();
            // A sample taken at this moment under these inputs has the
            // observation already, when it holds every observation.
            let obs = match samples.last() {
                Some(last)
                    if (t - last.time_h).abs() <= EPS_H
                        && last.inputs == inputs
                        && self.plan.sample_detail == SampleDetail::Full =>
                {
                    last.obs
                }
                _ => model.observe(y, &inputs),
            };
            // Sodium now, at the start and back in time, read off the samples
            // taken so far (no copies: checks can be frequent).
            let na_now = match samples.last() {
                Some(last) if (t - last.time_h).abs() <= EPS_H => last.obs.na_mmol_l,
                _ => obs.na_mmol_l,
            };
            let na_first = samples.first().map_or(na_now, |s| s.obs.na_mmol_l);
            let na_back = |window_h: f64| -> f64 {
                let Some(first) = samples.first() else {
                    return na_now;
                };
                let tq = (t - window_h).max(first.time_h);
                let j = samples.partition_point(|s| s.time_h < tq);
                if j == 0 {
                    return first.obs.na_mmol_l;
                }
                let (a, b_time, b_na) = match samples.get(j) {
                    Some(b) => (&samples[j - 1], b.time_h, b.obs.na_mmol_l),
                    None => (&samples[j - 1], t, na_now),
                };
                if b_time - a.time_h <= EPS_H {
                    return b_na;
                }
                a.obs.na_mmol_l + (b_na - a.obs.na_mmol_l) * (tq - a.time_h) / (b_time - a.time_h)
            };
            let snapshot = Snapshot {
                time_h: t,
                obs,
                na_start: na_first,
                na_change_since_start: na_now - na_first,
                na_change_24h: na_now - na_back(24.0),
                na_change_48h: na_now - na_back(48.0),
                running: schedule.labels(),
            };
            let actions = controller
                .check(&snapshot)
                .map_err(|message| SimulationError::Controller { time_h: t, message })?;
            for a in actions {
                schedule.apply(t, a);
            }
        }
        if schedule.running_count() > super::schedule::MAX_RUNNING_STREAMS {
            return Err(SimulationError::Controller {
                time_h: t,
                message: format!(
                    "{} streams (infusions, drinks, losses) would run at once; at most {} may (a rule that starts streams on every check without stopping them?)",
                    schedule.running_count(),
                    super::schedule::MAX_RUNNING_STREAMS
                ),
            });
        }
        Ok(schedule.inputs())
    }
}

/// Error if a body pool has become negative (beyond rounding).
fn check_negative(y: &[f64], t: f64, scales: &[f64]) -> Result<(), SimulationError> {
    for i in 0..crate::body::StateSlot::InWater as usize {
        if y[i] < -1e-7 * scales[i] || !y[i].is_finite() {
            return Err(SimulationError::Negative {
                time_h: t,
                quantity: STATE_NAMES[i].to_string(),
                value: y[i],
            });
        }
    }
    Ok(())
}
