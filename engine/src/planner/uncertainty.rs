//! How sure is a dose? Rerun it over members drawn from what a clinician
//! cannot measure at the bedside, and count how often a limit is crossed
//! and the goal missed; then find the dose range that keeps the chance of
//! crossing a limit under a stated level.
//!
//! The default unknowns ([`default_unknowns`]) are centred on the
//! scenario's own patient, so the point answer sits in the middle of the
//! members:
//!
//! | unknown | distribution | why |
//! |---|---|---|
//! | `patient.water_fraction` | normal, mean the patient's own, SD 10 % of it, ±2 SD | predictions of total body water from weight, height, age and sex carry an error of about 10 % (from memory: Watson et al. 1980 report a standard error near 4 L in men) |
//! | `urea_generation_mmol_kg_day` | log-normal, median the patient's, σ 0.35 | protein intake, hence the urea to excrete, varies about 1.5-fold between people (from memory) |
//! | `na_intake_mmol_day` | uniform, 0.5 to 1.5 times the patient's | salt intake before admission is rarely known (common practice) |
//! | `v2_response_h` | log-normal, median the model's, σ 0.5 | how fast the collecting duct follows a fall of vasopressin, the speed of a water diuresis (a model time constant, uncertain: from memory) |
//! | `avp_floor_pmol_l` (only when the cause sets one) | uniform, 0.5 to 1.5 times | the strength of inappropriate secretion differs between patients (common practice) |
//!
//! A sweep spec (`--unknowns`) replaces the whole set: its parameters,
//! design and seed are used; its `scenario` and `outputs` are not.

use super::{Dose, Evaluator, Form, Goal, Outcome, PlanError, Request};
use crate::fluids::Fluid;
use crate::limits::Severity;
use crate::plan::Plan;
use crate::sweep::{Design, Distribution, SweepParameter, SweepSpec};
use serde::Serialize;
use std::sync::atomic::{AtomicUsize, Ordering};

/// The default unknowns for a plan, centred on its patient.
pub fn default_unknowns(plan: &Plan, members: usize) -> Result<SweepSpec, PlanError> {
    let sim = crate::simulate::Simulation::new(plan.clone()).map_err(|e| PlanError::Run {
        dose: "the scenario alone".into(),
        message: e.to_string(),
    })?;
    let fraction = sim.patient().total_water_l / sim.patient().weight_kg;
    let p = &sim.model().params;
    let value = |name: &str| p.get(name).expect("a parameter of the table");
    let normal = |name: &str, mean: f64, sd: f64| SweepParameter {
        name: name.into(),
        values: None,
        range: None,
        distribution: Some(Distribution::Normal {
            mean,
            sd,
            min: Some(mean - 2.0 * sd),
            max: Some(mean + 2.0 * sd),
        }),
    };
    let log_normal = |name: &str, sigma: f64| {
        let median = value(name);
        SweepParameter {
            name: name.into(),
            values: None,
            range: None,
            distribution: Some(Distribution::LogNormal {
                median,
                sigma,
                min: Some(median * (-2.0 * sigma).exp()),
                max: Some(median * (2.0 * sigma).exp()),
            }),
        }
    };
    let relative = |name: &str| {
        let v = value(name);
        SweepParameter {
            name: name.into(),
            values: None,
            range: Some([0.5 * v, 1.5 * v]),
            distribution: None,
        }
    };
    let mut parameters = vec![
        normal("patient.water_fraction", fraction, 0.1 * fraction),
        log_normal("urea_generation_mmol_kg_day", 0.35),
        relative("na_intake_mmol_day"),
        log_normal("v2_response_h", 0.5),
    ];
    if value("avp_floor_pmol_l") > 0.0 {
        parameters.push(relative("avp_floor_pmol_l"));
    }
    Ok(SweepSpec {
        scenario: String::new(),
        design: Design::LatinHypercube,
        members: Some(members),
        levels: None,
        seed: 20_261_203,
        parameters,
        outputs: Default::default(),
        check_balance_share: 0.0,
        rtol: Some(1e-4),
    })
}

/// One dose over the members.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Spread {
    /// The amount (rate in mL/h, or bolus volume in mL).
    pub amount: f64,
    /// Members that ran.
    pub members: usize,
    /// Members whose run failed.
    pub failed: usize,
    /// What the first failed member said.
    pub first_failure: Option<String>,
    /// Share crossing any limit (severity `limit`).
    pub p_any_limit: f64,
    /// Share crossing each rule (limits and cautions), by label.
    pub p_rule: Vec<(String, f64)>,
    /// Share whose change at the goal's time is below the goal.
    pub p_below_goal: f64,
    /// Share above it.
    pub p_above_goal: f64,
    /// 5th, 50th and 95th percentiles of the change at the goal's time,
    /// mmol/L.
    pub change_percentiles_mmol_l: [f64; 3],
}

/// The uncertainty of a plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Uncertainty {
    /// The dose proposed, over the members.
    pub at_dose: Spread,
    /// The largest chance of crossing a limit accepted.
    pub risk: f64,
    /// Amounts from which the chance of missing the goal's low end (a rise
    /// goal; the high end of a fall goal, which is the same side) is at
    /// most `risk`, if any amount searched reaches it.
    pub lowest_amount_for_goal: Option<f64>,
    /// Largest amount whose chance of crossing a limit is at most `risk`.
    pub highest_amount_within_risk: Option<f64>,
    /// Whether the highest amount is the top of the range searched (so
    /// larger amounts may also keep the risk).
    pub highest_is_search_cap: bool,
    /// The unknowns, by name.
    pub unknowns: Vec<String>,
    /// Member runs in all.
    pub runs: usize,
}

/// Makes one evaluator per worker thread.
pub type MakeEvaluator<'a> = dyn Fn() -> Result<Box<dyn Evaluator>, String> + Sync + 'a;

/// Run `dose` of `request` (and the range search up to the request's
/// largest rate or bolus) over the members of `spec`.
pub fn uncertainty(
    make: &MakeEvaluator,
    spec: &SweepSpec,
    request: &Request,
    dose: Dose,
    risk: f64,
    threads: usize,
) -> Result<Uncertainty, PlanError> {
    let (fluid, goal) = (&request.fluid, request.goal);
    let cap = match request.form {
        Form::Rate { max_rate_ml_h, .. } => max_rate_ml_h,
        Form::Bolus { max_bolus_ml, .. } => max_bolus_ml,
    };
    let n = spec.member_count();
    let members: Vec<Vec<(String, f64)>> = (0..n)
        .map(|i| {
            let m = spec.member(i);
            spec.parameters
                .iter()
                .map(|p| p.name.clone())
                .zip(m.values)
                .collect()
        })
        .collect();
    let mut runs = 0;
    let mut spread = |amount: f64| -> Result<Spread, PlanError> {
        runs += members.len();
        spread_at(
            make,
            &members,
            fluid,
            dose.with_amount(amount),
            goal,
            threads,
        )
    };
    let at_dose = spread(dose.amount())?;
    // Highest amount within the risk: the chance grows with the dose.
    const STEPS: usize = 5;
    let mut highest = None;
    let mut capped = false;
    if at_dose.p_any_limit <= risk {
        let top = (2.0 * dose.amount()).min(cap).max(dose.amount());
        let s = spread(top)?;
        if s.p_any_limit <= risk {
            highest = Some(top);
            capped = true;
        } else {
            highest = Some(bisect(&mut spread, dose.amount(), top, STEPS, |s| {
                s.p_any_limit <= risk
            })?);
        }
    } else {
        let zero = spread(0.0)?;
        if zero.p_any_limit <= risk {
            highest = Some(bisect(&mut spread, 0.0, dose.amount(), STEPS, |s| {
                s.p_any_limit <= risk
            })?);
        }
    }
    // Lowest amount that reaches the goal in all but `risk` of members.
    let short = |s: &Spread| {
        if goal.middle() >= 0.0 {
            s.p_below_goal
        } else {
            s.p_above_goal
        }
    };
    let lowest = if short(&at_dose) <= risk {
        Some(bisect_low(&mut spread, 0.0, dose.amount(), STEPS, |s| {
            short(s) <= risk
        })?)
    } else {
        let top = highest.unwrap_or(dose.amount()).max(dose.amount());
        if top > dose.amount() && short(&spread(top)?) <= risk {
            Some(bisect_low(&mut spread, dose.amount(), top, STEPS, |s| {
                short(s) <= risk
            })?)
        } else {
            None
        }
    };
    Ok(Uncertainty {
        at_dose,
        risk,
        lowest_amount_for_goal: lowest,
        highest_amount_within_risk: highest,
        highest_is_search_cap: capped,
        unknowns: spec.parameters.iter().map(|p| p.name.clone()).collect(),
        runs,
    })
}

/// The largest amount in `[ok, bad]` that keeps `good` (true at `ok`,
/// false at `bad`), to (bad − ok)/2^steps.
fn bisect(
    spread: &mut impl FnMut(f64) -> Result<Spread, PlanError>,
    mut ok: f64,
    mut bad: f64,
    steps: usize,
    good: impl Fn(&Spread) -> bool,
) -> Result<f64, PlanError> {
    for _ in 0..steps {
        let mid = 0.5 * (ok + bad);
        if good(&spread(mid)?) {
            ok = mid;
        } else {
            bad = mid;
        }
    }
    Ok(ok)
}

/// The smallest amount in `[bad, ok]` that keeps `good` (false at `bad`
/// unless it holds there already, true at `ok`).
fn bisect_low(
    spread: &mut impl FnMut(f64) -> Result<Spread, PlanError>,
    bad: f64,
    ok: f64,
    steps: usize,
    good: impl Fn(&Spread) -> bool,
) -> Result<f64, PlanError> {
    if good(&spread(bad)?) {
        return Ok(bad);
    }
    // The same halving as `bisect`, with the ends' roles swapped: it keeps
    // the end where `good` holds.
    bisect(spread, ok, bad, steps, good)
}

/// Run one dose over every member on `threads` workers.
fn spread_at(
    make: &MakeEvaluator,
    members: &[Vec<(String, f64)>],
    fluid: &Fluid,
    dose: Dose,
    goal: Goal,
    threads: usize,
) -> Result<Spread, PlanError> {
    let streams = dose.streams(fluid)?;
    let next = AtomicUsize::new(0);
    type Runs = Result<Vec<Result<Outcome, String>>, String>;
    let results: Vec<Runs> = std::thread::scope(|scope| {
        let workers: Vec<_> = (0..threads.clamp(1, members.len().max(1)))
            .map(|_| {
                scope.spawn(|| -> Runs {
                    let mut eval = make()?;
                    let mut out = Vec::new();
                    loop {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        if i >= members.len() {
                            return Ok(out);
                        }
                        out.push(
                            eval.run(&streams, &members[i])
                                .map(|t| Outcome::from_run(dose, &t, goal.by_h, 0.0)),
                        );
                    }
                })
            })
            .collect();
        workers
            .into_iter()
            .map(|w| w.join().unwrap_or_else(|_| Err("a worker panicked".into())))
            .collect()
    });
    let mut outcomes = Vec::new();
    let mut failed = 0;
    let mut first_failure = None;
    for r in results {
        for o in r.map_err(|message| PlanError::Run {
            dose: super::dose::describe(&dose, &fluid.id),
            message,
        })? {
            match o {
                Ok(o) => outcomes.push(o),
                Err(e) => {
                    failed += 1;
                    first_failure.get_or_insert(e);
                }
            }
        }
    }
    let ran = outcomes.len();
    if ran == 0 {
        return Err(PlanError::Run {
            dose: super::dose::describe(&dose, &fluid.id),
            message: format!(
                "every member failed; the first: {}",
                first_failure.clone().unwrap_or_else(|| "no members".into())
            ),
        });
    }
    let share = |count: usize| {
        if ran == 0 {
            f64::NAN
        } else {
            count as f64 / ran as f64
        }
    };
    // By label, in the order the rules first appear (members share their
    // start, so they share their rules unless a spec varies the start).
    let mut labels: Vec<String> = Vec::new();
    for o in &outcomes {
        for m in &o.margins {
            if !labels.contains(&m.label) {
                labels.push(m.label.clone());
            }
        }
    }
    let p_rule = labels
        .into_iter()
        .map(|label| {
            let n = outcomes
                .iter()
                .filter(|o| o.margins.iter().any(|m| m.label == label && m.crossed()))
                .count();
            (label, share(n))
        })
        .collect();
    let any = outcomes
        .iter()
        .filter(|o| {
            o.margins
                .iter()
                .any(|m| m.severity == Severity::Limit && m.crossed())
        })
        .count();
    let mut changes: Vec<f64> = outcomes
        .iter()
        .map(|o| o.na_change_at_goal_mmol_l)
        .collect();
    changes.sort_by(f64::total_cmp);
    let pct = |q: f64| {
        if changes.is_empty() {
            f64::NAN
        } else {
            changes[((q * (changes.len() - 1) as f64).round() as usize).min(changes.len() - 1)]
        }
    };
    Ok(Spread {
        amount: dose.amount(),
        members: ran,
        failed,
        first_failure,
        p_any_limit: share(any),
        p_rule,
        p_below_goal: share(
            outcomes
                .iter()
                .filter(|o| o.na_change_at_goal_mmol_l < goal.low_mmol_l - super::GOAL_SLACK)
                .count(),
        ),
        p_above_goal: share(
            outcomes
                .iter()
                .filter(|o| o.na_change_at_goal_mmol_l > goal.high_mmol_l + super::GOAL_SLACK)
                .count(),
        ),
        change_percentiles_mmol_l: [pct(0.05), pct(0.5), pct(0.95)],
    })
}
