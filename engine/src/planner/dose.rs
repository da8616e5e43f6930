//! The dose search: bracket, Brent's method at the goal's middle, then the
//! largest dose that crosses no limit when the middle is out of reach.

use super::root::{brent, Tolerance};
use super::{Dose, Evaluator, Form, Goal, Outcome, PlanError, Request};
use crate::formulas;
use serde::Serialize;

/// What the planner concluded.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "verdict", rename_all = "snake_case")]
pub enum Verdict {
    /// The dose brings the change into the goal and crosses no limit.
    Met {
        /// Why the dose is not at the goal's middle, if it is not (a limit
        /// that bounds it, or the rounding to a dose that can be set).
        note: Option<String>,
    },
    /// No dose of this fluid meets the goal within the limits; the
    /// outcome is the nearest feasible dose.
    Infeasible {
        /// Why, in words.
        reason: String,
    },
}

/// The planner's answer.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Answer {
    /// The fluid's identifier.
    pub fluid: String,
    /// The goal.
    pub goal: Goal,
    /// Met, or why not.
    #[serde(flatten)]
    pub verdict: Verdict,
    /// The dose proposed (or the nearest feasible one) and its course.
    pub outcome: Outcome,
    /// The course without any of the fluid (the background alone).
    pub background: Outcome,
    /// The Adrogué–Madias change at the goal's time for the proposed dose
    /// (closed body, the patient's starting total body water), mmol/L.
    pub adrogue_madias_change_mmol_l: f64,
    /// Starting total body water used by the formula, L.
    pub total_body_water_l: f64,
    /// For a hypernatremic start (above 145 mmol/L): the free-water
    /// deficit `TBW·(Na/140 − 1)`, L (common practice), for comparison.
    pub free_water_deficit_l: Option<f64>,
    /// Free water of the dose relative to isotonic saline,
    /// `V·(1 − (Na+K)/154)`, L (common practice).
    pub dose_free_water_l: f64,
    /// How far inside its constraint (the limits, or a re-lowering's
    /// floor) the dose stays, mmol/L.
    pub constraint_margin_mmol_l: f64,
    /// Runs of the full model the answer took.
    pub evaluations: usize,
}

impl Answer {
    /// Whether the goal is met within the limits.
    pub fn met(&self) -> bool {
        matches!(self.verdict, Verdict::Met { .. })
    }
}

/// Hypernatremia: serum sodium above 145 mmol/L (common practice).
const HYPERNATREMIA_ABOVE: f64 = 145.0;
/// Sodium of isotonic (0.9 %) saline, mmol/L (common practice).
const ISOTONIC_SALINE_NA: f64 = 154.0;

/// Tolerance on the change at the goal's time, mmol/L: a tenth of the
/// laboratory's 1 mmol/L resolution (common practice).
const CHANGE_TOLERANCE: f64 = 0.1;
/// Most runs of one search.
const MAX_SEARCH_RUNS: usize = 40;

/// What a dose must respect besides the goal.
#[derive(Debug, Clone, PartialEq)]
pub enum Constraint {
    /// No rule of severity `limit` of the guideline set may be crossed.
    Limits,
    /// Sodium must not fall below `floor_mmol_l` from `from_h` on (a
    /// re-lowering, whose course has already crossed a limit).
    Floor {
        /// From, h.
        from_h: f64,
        /// Lowest sodium allowed, mmol/L.
        floor_mmol_l: f64,
    },
}

impl Constraint {
    /// How far inside the constraint a run stayed (negative: outside).
    fn margin(&self, o: &Outcome) -> f64 {
        match self {
            Constraint::Limits => o.limit_margin(),
            Constraint::Floor { floor_mmol_l, .. } => o.lowest_after_mmol_l - floor_mmol_l,
        }
    }

    /// The bound a dose ran into, in words.
    fn bound(&self, o: &Outcome) -> String {
        match self {
            Constraint::Limits => o
                .margins
                .iter()
                .filter(|x| x.severity == crate::limits::Severity::Limit)
                .min_by(|a, b| a.margin_mmol_l.total_cmp(&b.margin_mmol_l))
                .map(|x| format!("the limit \"{}\"", x.label))
                .unwrap_or_default(),
            Constraint::Floor { floor_mmol_l, .. } => {
                format!("the floor of {floor_mmol_l} mmol/L")
            }
        }
    }
}

pub(crate) struct Search<'e, E: Evaluator> {
    pub eval: &'e mut E,
    pub request: &'e Request,
    /// Streams every candidate carries (a desmopressin clamp).
    pub fixed: Vec<(f64, crate::plan::Stream)>,
    pub constraint: Constraint,
    pub runs: usize,
}

impl<E: Evaluator> Search<'_, E> {
    pub fn outcome(&mut self, dose: Dose) -> Result<Outcome, PlanError> {
        let mut streams = self.fixed.clone();
        streams.extend(dose.streams(&self.request.fluid)?);
        self.runs += 1;
        let traj = self
            .eval
            .run(&streams, &[])
            .map_err(|message| PlanError::Run {
                dose: describe(&dose, &self.request.fluid.id),
                message,
            })?;
        let from_h = match self.constraint {
            Constraint::Floor { from_h, .. } => from_h,
            Constraint::Limits => 0.0,
        };
        Ok(Outcome::from_run(
            dose,
            &traj,
            self.request.goal.by_h,
            from_h,
        ))
    }

    fn margin(&self, o: &Outcome) -> f64 {
        self.constraint.margin(o)
    }
}

/// Words for a dose, as the answer prints it.
pub fn describe(dose: &Dose, fluid: &str) -> String {
    match *dose {
        Dose::Rate {
            rate_ml_h,
            from_h,
            for_h,
        } => format!(
            "{fluid} at {} mL/h from {} h for {} h",
            round_for_text(rate_ml_h),
            round_for_text(from_h),
            round_for_text(for_h)
        ),
        Dose::Bolus {
            volume_ml,
            count,
            from_h,
            bolus_h,
            every_h,
        } => format!(
            "{count} x {} mL of {fluid} over {} min, every {} min from {} h",
            round_for_text(volume_ml),
            round_for_text(bolus_h * 60.0),
            round_for_text(every_h * 60.0),
            round_for_text(from_h)
        ),
    }
}

fn round_for_text(x: f64) -> String {
    let r = (x * 10.0).round() / 10.0;
    if r.fract() == 0.0 {
        format!("{r:.0}")
    } else {
        format!("{r:.1}")
    }
}

/// Round a dose to what a pump or syringe sets: 1 mL/h (0.1 below 10
/// mL/h), 1 mL for a bolus (common practice for infusion pumps).
fn settable(amount: f64) -> f64 {
    if amount < 10.0 {
        (amount * 10.0).round() / 10.0
    } else {
        amount.round()
    }
}

/// Find the dose for `request` (see the [module](super) docs).
pub fn find_dose<E: Evaluator>(eval: &mut E, request: &Request) -> Result<Answer, PlanError> {
    super::check::check_request(eval, request)?;
    let search = Search {
        eval,
        request,
        fixed: Vec::new(),
        constraint: Constraint::Limits,
        runs: 0,
    };
    solve(search)
}

/// The search itself, for any constraint and fixed streams.
pub(crate) fn solve<E: Evaluator>(mut search: Search<E>) -> Result<Answer, PlanError> {
    let request = search.request;
    let goal = request.goal;
    let template = match request.form {
        Form::Rate { from_h, for_h, .. } => Dose::Rate {
            rate_ml_h: 0.0,
            from_h,
            for_h,
        },
        Form::Bolus {
            from_h,
            bolus_h,
            every_h,
            ..
        } => Dose::Bolus {
            volume_ml: 0.0,
            count: 1,
            from_h,
            bolus_h,
            every_h,
        },
    };
    let background = search.outcome(template)?;
    let tbw = background.total_body_water_start_l;
    let answer = |search: &Search<E>, outcome: Outcome, verdict: Verdict| {
        let constraint_margin_mmol_l = search.margin(&outcome);
        let dose_free_water_l = outcome.volume_ml / 1000.0
            * (1.0 - (request.fluid.na + request.fluid.k) / ISOTONIC_SALINE_NA);
        let am = adrogue_madias_for(&outcome.dose, &request.fluid, &background, tbw, goal.by_h);
        Answer {
            fluid: request.fluid.id.clone(),
            goal,
            verdict,
            outcome,
            background: background.clone(),
            adrogue_madias_change_mmol_l: am,
            total_body_water_l: tbw,
            constraint_margin_mmol_l,
            free_water_deficit_l: (background.na_start_mmol_l > HYPERNATREMIA_ABOVE)
                .then(|| formulas::free_water_deficit_l(tbw, background.na_start_mmol_l)),
            dose_free_water_l,
            evaluations: search.runs,
        }
    };
    let direction = (goal.middle() - background.na_change_at_goal_mmol_l).signum();
    if goal.holds(background.na_change_at_goal_mmol_l) && search.margin(&background) >= 0.0 {
        let note = Some(format!(
            "the background alone changes sodium by {:+.1} mmol/L by {} h, inside the goal: no {} is needed",
            background.na_change_at_goal_mmol_l, goal.by_h, request.fluid.id
        ));
        return Ok(answer(&search, background.clone(), Verdict::Met { note }));
    }
    if search.constraint == Constraint::Limits && !background.limits_crossed().is_empty() {
        let reason = format!(
            "without any {} the course already crosses {}; no added dose can undo that",
            request.fluid.id,
            crossed_words(&background)
        );
        return Ok(answer(
            &search,
            background.clone(),
            Verdict::Infeasible { reason },
        ));
    }
    // Does this fluid move sodium toward the goal? Compare the closed-body
    // direction of the fluid with the direction needed.
    let pushes = (request.fluid.na + request.fluid.k - background.na_start_mmol_l).signum();
    if pushes != direction {
        let reason = format!(
            "the background changes sodium by {:+.1} mmol/L by {} h and {} ({:.0} mmol/L of sodium and potassium) moves it {}, away from the goal {:+.1}..{:+.1}",
            background.na_change_at_goal_mmol_l,
            goal.by_h,
            request.fluid.id,
            request.fluid.na + request.fluid.k,
            if pushes > 0.0 { "up" } else { "down" },
            goal.low_mmol_l,
            goal.high_mmol_l
        );
        return Ok(answer(
            &search,
            background.clone(),
            Verdict::Infeasible { reason },
        ));
    }
    let (counts, max_amount) = match request.form {
        Form::Rate { max_rate_ml_h, .. } => (vec![1], max_rate_ml_h),
        Form::Bolus {
            max_count,
            max_bolus_ml,
            ..
        } => ((1..=max_count).collect(), max_bolus_ml),
    };
    let mut last = None;
    for count in counts {
        let dose = match template {
            Dose::Bolus { .. } => {
                let mut d = template;
                if let Dose::Bolus { count: c, .. } = &mut d {
                    *c = count;
                }
                d
            }
            d => d,
        };
        let guess = first_guess(&dose, request, &background, tbw);
        let found = search_amount(&mut search, dose, direction, guess, max_amount)?;
        match found {
            Found::Goal(outcome, note) => {
                return Ok(answer(&search, outcome, Verdict::Met { note }));
            }
            Found::Short(outcome, reason) => last = Some((outcome, reason)),
        }
    }
    let (outcome, reason) = last.expect("at least one count is searched");
    Ok(answer(&search, outcome, Verdict::Infeasible { reason }))
}

enum Found {
    Goal(Outcome, Option<String>),
    Short(Outcome, String),
}

/// Search the amount of one dose shape: returns the dose at the goal's
/// middle, or bounded by a limit, or the nearest feasible one.
fn search_amount<E: Evaluator>(
    search: &mut Search<E>,
    dose: Dose,
    direction: f64,
    guess: f64,
    max_amount: f64,
) -> Result<Found, PlanError> {
    let goal = search.request.goal;
    let mid = goal.middle();
    // g(amount) > 0 once the change passes the middle, whatever the
    // direction of the goal.
    let g = |o: &Outcome| direction * (o.na_change_at_goal_mmol_l - mid);
    // Bracket: the zero dose is below the middle (checked by the caller);
    // grow from the guess until the middle is passed or the cap is hit.
    let mut lo = (0.0, search.outcome(dose.with_amount(0.0))?);
    let mut trial = guess.clamp(max_amount * 1e-3, max_amount);
    let hi = loop {
        let o = search.outcome(dose.with_amount(trial))?;
        if g(&o) >= 0.0 {
            break Some((trial, o));
        }
        lo = (trial, o);
        if trial >= max_amount {
            break None;
        }
        trial = (trial * 2.0).min(max_amount);
    };
    let Some(hi) = hi else {
        // Even the largest dose falls short of the middle.
        let (amount, o) = lo;
        return Ok(
            if goal.holds(o.na_change_at_goal_mmol_l) && search.margin(&o) >= 0.0 {
                Found::Goal(
                o,
                Some(format!(
                    "the goal's middle is out of reach at the largest dose allowed ({}); this dose is inside the goal",
                    describe(&dose.with_amount(amount), &search.request.fluid.id)
                )),
            )
            } else {
                let change = o.na_change_at_goal_mmol_l;
                Found::Short(
                o,
                format!(
                    "even the largest dose allowed ({}) changes sodium by {change:+.1} mmol/L by {} h, short of the goal {:+.1}..{:+.1}",
                    describe(&dose.with_amount(amount), &search.request.fluid.id),
                    goal.by_h,
                    goal.low_mmol_l,
                    goal.high_mmol_l
                ),
            )
            },
        );
    };
    let tol = Tolerance {
        x: (hi.0 * 1e-3).max(0.05),
        f: CHANGE_TOLERANCE,
        max_evaluations: MAX_SEARCH_RUNS,
    };
    let (g_lo, g_hi) = (g(&lo.1), g(&hi.1));
    let root = brent(
        |a| search.outcome(dose.with_amount(a)).map(|o| g(&o)),
        lo.0,
        g_lo,
        hi.0,
        g_hi,
        tol,
    )?;
    let at_middle = search.outcome(dose.with_amount(settable(root.x)))?;
    if search.margin(&at_middle) >= 0.0 && goal.holds(at_middle.na_change_at_goal_mmol_l) {
        return Ok(Found::Goal(at_middle, None));
    }
    // The middle crosses a limit: the largest dose with a non-negative
    // margin to every limit, found on the margin itself.
    let constraint = search.constraint.clone();
    let m = |o: &Outcome| constraint.margin(o);
    let zero = search.outcome(dose.with_amount(0.0))?;
    let (mut safe, mut unsafe_) = ((0.0, zero), (settable(root.x), at_middle));
    if m(&unsafe_.1) >= 0.0 {
        // Inside the limits but outside the goal after rounding.
        let change = unsafe_.1.na_change_at_goal_mmol_l;
        return Ok(Found::Short(
            unsafe_.1,
            format!("the settable dose nearest the goal's middle gives {change:+.1} mmol/L"),
        ));
    }
    if m(&safe.1) < 0.0 {
        let bound = constraint.bound(&safe.1);
        return Ok(Found::Short(
            safe.1,
            format!("without any of the fluid the course already passes {bound}"),
        ));
    }
    let root = brent(
        |a| search.outcome(dose.with_amount(a)).map(|o| m(&o)),
        safe.0,
        m(&safe.1),
        unsafe_.0,
        m(&unsafe_.1),
        Tolerance {
            x: (unsafe_.0 * 1e-3).max(0.05),
            f: 0.02,
            max_evaluations: MAX_SEARCH_RUNS,
        },
    )?;
    // Step down to a settable dose on the safe side of the limit.
    let mut amount = settable(root.x);
    for _ in 0..20 {
        let o = search.outcome(dose.with_amount(amount))?;
        if m(&o) >= 0.0 {
            safe = (amount, o);
            break;
        }
        unsafe_ = (amount, o);
        amount = settable(amount * 0.98).min(amount - if amount < 10.0 { 0.1 } else { 1.0 });
        if amount <= 0.0 {
            break;
        }
    }
    let o = safe.1;
    let bound = constraint.bound(&unsafe_.1);
    let change = o.na_change_at_goal_mmol_l;
    Ok(if goal.holds(change) {
        Found::Goal(
            o,
            Some(format!(
                "the goal's middle would pass {bound}; this is the largest dose inside it"
            )),
        )
    } else {
        Found::Short(
            o,
            format!(
                "{bound} is reached before the goal: the largest dose inside it changes sodium by only {change:+.1} mmol/L by {} h (goal {:+.1}..{:+.1})",
                goal.by_h, goal.low_mmol_l, goal.high_mmol_l
            ),
        )
    })
}

fn crossed_words(o: &Outcome) -> String {
    o.limits_crossed()
        .iter()
        .map(|m| {
            format!(
                "\"{}\" ({:.1} > {} mmol/L)",
                m.label, m.worst_mmol_l, m.max_mmol_l
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The Adrogué–Madias change at `by_h` for the volume of `dose` given by
/// then (Adrogué & Madias, NEJM 2000: per litre, `(infusate Na + K −
/// serum Na)/(TBW + 1)`).
fn adrogue_madias_for(
    dose: &Dose,
    fluid: &crate::fluids::Fluid,
    bg: &Outcome,
    tbw: f64,
    by_h: f64,
) -> f64 {
    let litres = given_by(dose, by_h) / 1000.0;
    litres * formulas::adrogue_madias_change(fluid.na + fluid.k, bg.na_start_mmol_l, tbw)
}

/// Volume of a dose given by time `t`, mL.
pub(crate) fn given_by(dose: &Dose, t: f64) -> f64 {
    match *dose {
        Dose::Rate {
            rate_ml_h,
            from_h,
            for_h,
        } => rate_ml_h * (t - from_h).clamp(0.0, for_h),
        Dose::Bolus {
            volume_ml,
            count,
            from_h,
            bolus_h,
            every_h,
        } => (0..count)
            .map(|k| {
                let start = from_h + every_h * k as f64;
                volume_ml * ((t - start) / bolus_h).clamp(0.0, 1.0)
            })
            .sum(),
    }
}

/// The first trial amount: the closed-body amount that would cover the
/// gap between the background and the goal's middle.
fn first_guess(dose: &Dose, request: &Request, bg: &Outcome, tbw: f64) -> f64 {
    let fluid = &request.fluid;
    let per_litre = formulas::adrogue_madias_change(fluid.na + fluid.k, bg.na_start_mmol_l, tbw);
    let needed = request.goal.middle() - bg.na_change_at_goal_mmol_l;
    let unit = given_by(&dose.with_amount(1.0), request.goal.by_h) / 1000.0;
    let guess = needed / per_litre / unit;
    if guess.is_finite() && guess > 0.0 {
        guess
    } else {
        1.0
    }
}
