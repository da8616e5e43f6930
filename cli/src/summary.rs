//! The numbers a reader wants first, computed once from a [`RunInput`]:
//! sodium at start, extremes and end, the largest rises, guideline flags and
//! goals, the fall-below-start warning, mass balance and solver statistics.
//! Serialised as `summary.json`.

use crate::format::{fixed, round_sig, sig};
use crate::input::{Expectation, RunInput};
use serde::Serialize;
use tidewater::goals::GoalStatus;
use tidewater::limits::{Direction, Severity};
use tidewater::CAUTION;

/// A value and when it occurred.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AtTime {
    /// The value, mmol/L.
    pub mmol_l: f64,
    /// When, h.
    pub time_h: f64,
}

/// Serum sodium in brief.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SodiumSummary {
    /// At the start.
    pub start: AtTime,
    /// Lowest.
    pub min: AtTime,
    /// Highest.
    pub max: AtTime,
    /// At the end.
    pub end: AtTime,
    /// Largest rise within any 24 h window (value, end of the window).
    pub largest_rise_24h: AtTime,
    /// Largest rise within any 48 h window.
    pub largest_rise_48h: AtTime,
}

/// The brain-cell volume index (brain-cell water over its normal volume)
/// in brief: a model index, not a diagnosis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BrainSummary {
    /// Lowest index.
    pub min: f64,
    /// When it was lowest, h.
    pub min_time_h: f64,
    /// Highest index.
    pub max: f64,
    /// When it was highest, h.
    pub max_time_h: f64,
    /// At the end.
    pub end: f64,
}

/// A guideline rule crossed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FlagSummary {
    /// The rule's label.
    pub rule: String,
    /// "limit" or "caution".
    pub severity: String,
    /// "rise" or "fall".
    pub direction: String,
    /// Window of the rule, h.
    pub window_h: f64,
    /// Largest change the rule allows, mmol/L.
    pub max_mmol_l: f64,
    /// First time the rule was crossed, h.
    pub time_h: f64,
    /// Change at that time, mmol/L.
    pub change_mmol_l: f64,
    /// Largest change within any window of the rule, mmol/L.
    pub worst_change_mmol_l: f64,
    /// When the largest change was reached, h.
    pub worst_time_h: f64,
}

/// A guideline goal (minimum correction) judged on the run. A goal missed
/// is no limit crossing: `--strict` does not count it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GoalSummary {
    /// The goal's label.
    pub goal: String,
    /// Its published source.
    pub source: String,
    /// "rise" or "fall".
    pub direction: String,
    /// Smallest change since the start that meets it, mmol/L.
    pub min_mmol_l: f64,
    /// When the change is due, h.
    pub by_h: f64,
    /// "met", "missed" or "run_too_short" (the run ended before `by_h`).
    pub status: String,
    /// Change since the start at `time_h`, mmol/L.
    pub change_mmol_l: f64,
    /// When the change was read (`by_h`, or the end of a shorter run), h.
    pub time_h: f64,
    /// First time the change reached the minimum, h (null: never).
    pub reached_h: Option<f64>,
}

/// Sodium fell back below its start during a hyponatremia correction.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BelowStartSummary {
    /// Serum sodium at the start, mmol/L.
    pub start_mmol_l: f64,
    /// First time more than 0.5 mmol/L below the start, h.
    pub first_time_h: f64,
    /// Lowest serum sodium, mmol/L.
    pub lowest_mmol_l: f64,
    /// When it was lowest, h.
    pub lowest_time_h: f64,
}

/// Mass balance of one species.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BalanceSummary {
    /// Species.
    pub species: String,
    /// Unit of the amounts.
    pub unit: String,
    /// What `intake` holds: what was given, and what the body made (urea
    /// from protein, glucose by the liver, water by metabolism).
    pub intake_includes: String,
    /// Content at the start.
    pub start: f64,
    /// Content at the end.
    pub end: f64,
    /// Cumulative intake.
    pub intake: f64,
    /// Cumulative output.
    pub output: f64,
    /// Largest relative residual of `content − start − intake + output`.
    pub max_relative_residual: f64,
}

/// What one stream gave or took over the run (rates times the hours it
/// ran), in units a chart is written in.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StreamTotalSummary {
    /// The stream's label (the fluid's id unless the script named it;
    /// `habitual` is the ordinary drinking and eating).
    pub stream: String,
    /// Volume given by vein and by mouth, mL.
    pub volume_in_ml: f64,
    /// Of it, by mouth or into the gut, mL.
    pub volume_oral_ml: f64,
    /// Sodium given, mmol.
    pub na_in_mmol: f64,
    /// Potassium given, mmol.
    pub k_in_mmol: f64,
    /// Volume removed (losses of fixed composition and blood), mL.
    pub volume_out_ml: f64,
    /// Sodium removed in those losses, mmol.
    pub na_out_mmol: f64,
    /// Desmopressin given, ug.
    pub desmopressin_ug: f64,
    /// Loop diuretic given, mg.
    pub loop_diuretic_mg: f64,
    /// Oral V2 antagonist absorbed, mg.
    pub v2_antagonist_mg: f64,
}

impl StreamTotalSummary {
    fn of(t: &tidewater::StreamTotal) -> Self {
        let r = |x: f64| round_sig(x, DIGITS);
        StreamTotalSummary {
            stream: t.label.clone(),
            volume_in_ml: r((t.water_in_l + t.oral_water_l) * 1000.0),
            volume_oral_ml: r(t.oral_water_l * 1000.0),
            na_in_mmol: r(t.na_in_mmol),
            k_in_mmol: r(t.k_in_mmol),
            volume_out_ml: r((t.water_out_l + t.blood_loss_l) * 1000.0),
            na_out_mmol: r(t.na_out_mmol),
            desmopressin_ug: r(t.desmopressin_ug),
            loop_diuretic_mg: r(t.loop_diuretic_mg),
            v2_antagonist_mg: r(t.v2_antagonist_mg),
        }
    }
}

/// The guideline set in force.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GuidelineSummary {
    /// Identifier.
    pub id: String,
    /// Published source.
    pub source: String,
    /// Whether the high-risk rules apply.
    pub high_risk: bool,
    /// What decided which rules and goals apply, in words
    /// (`hyponatremia, chronic, severe symptoms`).
    pub applies_to: String,
    /// The rules that apply to this run, in words.
    pub rules: Vec<String>,
    /// The goals that apply to this run, in words.
    pub goals: Vec<String>,
}

/// Everything in `summary.json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Scenario title.
    pub title: String,
    /// Scenario description.
    pub description: String,
    /// Where the scenario came from.
    pub source: String,
    /// The caution every report carries.
    pub caution: String,
    /// Length of the run, h.
    pub duration_h: f64,
    /// Number of samples.
    pub samples: usize,
    /// How the start was made steady.
    pub start: crate::input::StartSummary,
    /// Serum sodium in brief.
    pub sodium: SodiumSummary,
    /// Brain-cell volume index in brief.
    pub brain_volume_index: BrainSummary,
    /// Guideline set.
    pub guideline: GuidelineSummary,
    /// Rules crossed.
    pub flags: Vec<FlagSummary>,
    /// Goals judged (met or missed; not flags).
    pub goals: Vec<GoalSummary>,
    /// Warning: sodium fell back below its start (hyponatremic start only).
    pub below_start: Option<BelowStartSummary>,
    /// Warning: serum sodium left the range the model was built for, so
    /// what follows is extrapolation.
    pub outside_model_range: Option<tidewater::OutsideRange>,
    /// Mass balance per species.
    pub mass_balance: Vec<BalanceSummary>,
    /// What each stream gave or took over the run, in the order the
    /// streams first ran.
    pub given: Vec<StreamTotalSummary>,
    /// The Adrogué–Madias prediction for the same infusions and the
    /// attribution of the difference (none for an empty run).
    pub bedside_formula: Option<crate::bedside_summary::FormulaSummary>,
    /// Solver statistics.
    pub solver: tidewater::SolverStats,
    /// Expectation results.
    pub expectations: Vec<Expectation>,
    /// Whether every expectation held.
    pub all_expectations_hold: bool,
    /// Messages logged by the run.
    pub log: Vec<String>,
}

const DIGITS: usize = 6;

fn at(mmol_l: f64, time_h: f64) -> AtTime {
    AtTime {
        mmol_l: round_sig(mmol_l, DIGITS),
        time_h: round_sig(time_h, DIGITS),
    }
}

fn severity_name(s: Severity) -> &'static str {
    match s {
        Severity::Caution => "caution",
        Severity::Limit => "limit",
    }
}

fn direction_name(d: Direction) -> &'static str {
    match d {
        Direction::Rise => "rise",
        Direction::Fall => "fall",
    }
}

/// Words for a rule: `rise at most 10 mmol/L per 24 h (first 24 h), limit`.
pub fn describe_rule(rule: &tidewater::limits::Rule) -> String {
    format!(
        "{} at most {} mmol/L per {} h ({}), {}",
        direction_name(rule.direction),
        rule.max_mmol_l,
        rule.window_h,
        rule.label,
        severity_name(rule.severity)
    )
}

/// Words for a goal: `rise at least 4 mmol/L by 24 h (minimum ...)`.
pub fn describe_goal(goal: &tidewater::goals::Goal) -> String {
    format!(
        "{} at least {} mmol/L by {} h ({})",
        direction_name(goal.direction),
        goal.min_mmol_l,
        goal.by_h,
        goal.label
    )
}

fn status_name(s: GoalStatus) -> &'static str {
    match s {
        GoalStatus::Met => "met",
        GoalStatus::Missed => "missed",
        GoalStatus::RunTooShort => "run_too_short",
    }
}

/// Words for the situation that picks the rules: start, onset, symptoms.
fn describe_situation(s: &tidewater::limits::Situation) -> String {
    let start = if s.start_na_mmol_l < tidewater::limits::HYPONATREMIA_BELOW_MMOL_L {
        "hyponatremia"
    } else if s.start_na_mmol_l > tidewater::limits::HYPERNATREMIA_ABOVE_MMOL_L {
        "hypernatremia"
    } else {
        "normal sodium"
    };
    let symptoms = match s.symptoms {
        tidewater::Symptoms::None => "no symptoms given",
        tidewater::Symptoms::Moderate => "moderately severe symptoms",
        tidewater::Symptoms::Severe => "severe symptoms",
    };
    let onset = match s.onset {
        tidewater::Onset::Acute => "acute",
        tidewater::Onset::Chronic => "chronic",
    };
    format!("{start}, {onset}, {symptoms}")
}

impl Summary {
    /// Compute the summary of a run.
    pub fn of(input: &RunInput) -> Summary {
        let traj = &input.trajectory;
        let first = &traj.samples[0];
        let last = traj.last();
        // The first sample holding the lowest and the highest sodium, and
        // the same for the brain-cell volume index, in one pass.
        let (mut min, mut max) = (first, first);
        let (mut lowest, mut highest) = (first, first);
        for s in &traj.samples {
            if s.obs.na_mmol_l < min.obs.na_mmol_l {
                min = s;
            }
            if s.obs.na_mmol_l > max.obs.na_mmol_l {
                max = s;
            }
            if s.obs.brain_volume_index < lowest.obs.brain_volume_index {
                lowest = s;
            }
            if s.obs.brain_volume_index > highest.obs.brain_volume_index {
                highest = s;
            }
        }
        let (r24, t24) = traj.largest_rise(24.0);
        let (r48, t48) = traj.largest_rise(48.0);
        Summary {
            title: input.title.clone(),
            description: input.description.clone(),
            source: input.source.clone(),
            start: input.start.clone(),
            caution: CAUTION.to_string(),
            duration_h: round_sig(last.time_h - first.time_h, DIGITS),
            samples: traj.samples.len(),
            sodium: SodiumSummary {
                start: at(first.obs.na_mmol_l, first.time_h),
                min: at(min.obs.na_mmol_l, min.time_h),
                max: at(max.obs.na_mmol_l, max.time_h),
                end: at(last.obs.na_mmol_l, last.time_h),
                largest_rise_24h: at(r24, t24),
                largest_rise_48h: at(r48, t48),
            },
            brain_volume_index: BrainSummary {
                min: round_sig(lowest.obs.brain_volume_index, DIGITS),
                min_time_h: round_sig(lowest.time_h, DIGITS),
                max: round_sig(highest.obs.brain_volume_index, DIGITS),
                max_time_h: round_sig(highest.time_h, DIGITS),
                end: round_sig(last.obs.brain_volume_index, DIGITS),
            },
            guideline: GuidelineSummary {
                id: traj.limits.guideline.id.clone(),
                source: traj.limits.guideline.source.clone(),
                high_risk: traj.limits.high_risk,
                applies_to: describe_situation(&traj.situation),
                rules: traj
                    .limits
                    .applicable_rules(&traj.situation)
                    .into_iter()
                    .map(describe_rule)
                    .collect(),
                goals: traj
                    .limits
                    .applicable_goals(&traj.situation)
                    .into_iter()
                    .map(describe_goal)
                    .collect(),
            },
            flags: traj
                .flags
                .iter()
                .map(|f| FlagSummary {
                    rule: f.rule.label.clone(),
                    severity: severity_name(f.rule.severity).into(),
                    direction: direction_name(f.rule.direction).into(),
                    window_h: f.rule.window_h,
                    max_mmol_l: f.rule.max_mmol_l,
                    time_h: round_sig(f.time_h, DIGITS),
                    change_mmol_l: round_sig(f.change_mmol_l, DIGITS),
                    worst_change_mmol_l: round_sig(f.worst_change_mmol_l, DIGITS),
                    worst_time_h: round_sig(f.worst_time_h, DIGITS),
                })
                .collect(),
            goals: traj
                .goals
                .iter()
                .map(|g| GoalSummary {
                    goal: g.goal.label.clone(),
                    source: g.goal.source.clone(),
                    direction: direction_name(g.goal.direction).into(),
                    min_mmol_l: g.goal.min_mmol_l,
                    by_h: g.goal.by_h,
                    status: status_name(g.status).into(),
                    change_mmol_l: round_sig(g.change_mmol_l, DIGITS),
                    time_h: round_sig(g.time_h, DIGITS),
                    reached_h: g.reached_h.map(|t| round_sig(t, DIGITS)),
                })
                .collect(),
            below_start: traj.below_start.map(|b| BelowStartSummary {
                start_mmol_l: round_sig(b.start_mmol_l, DIGITS),
                first_time_h: round_sig(b.first_time_h, DIGITS),
                lowest_mmol_l: round_sig(b.lowest_mmol_l, DIGITS),
                lowest_time_h: round_sig(b.lowest_time_h, DIGITS),
            }),
            outside_model_range: traj.outside_range.map(|w| tidewater::OutsideRange {
                first_time_h: round_sig(w.first_time_h, DIGITS),
                first_mmol_l: round_sig(w.first_mmol_l, DIGITS),
                extreme_mmol_l: round_sig(w.extreme_mmol_l, DIGITS),
                extreme_time_h: round_sig(w.extreme_time_h, DIGITS),
                ..w
            }),
            given: traj
                .stream_totals
                .iter()
                .map(StreamTotalSummary::of)
                .collect(),
            mass_balance: traj
                .balance
                .iter()
                .map(|b| BalanceSummary {
                    species: b.species.into(),
                    unit: b.unit.into(),
                    intake_includes: b.intake_includes.into(),
                    start: round_sig(b.start, DIGITS),
                    end: round_sig(b.end, DIGITS),
                    intake: round_sig(b.intake, DIGITS),
                    output: round_sig(b.output, DIGITS),
                    max_relative_residual: round_sig(b.max_relative_residual, 3),
                })
                .collect(),
            bedside_formula: crate::bedside_summary::FormulaSummary::of(traj),
            solver: traj.stats,
            expectations: input.expectations.clone(),
            all_expectations_hold: input.all_expectations_hold(),
            log: input.log.clone(),
        }
    }

    /// Whether any rule of severity "limit" was crossed (goals missed and
    /// the fall-below-start warning do not count: they are no limits).
    pub fn limit_crossed(&self) -> bool {
        self.flags.iter().any(|f| f.severity == "limit")
    }
}
/// The warning that serum sodium left the range the model was built for,
/// as the terminal and the report say it (after "warning: ").
pub fn outside_range_text(w: &tidewater::OutsideRange) -> String {
    format!(
        "serum sodium left the range the model was built for ({}-{} mmol/L) at {} h ({} mmol/L; farthest {} mmol/L at {} h): what follows is extrapolation, not a prediction",
        fixed(w.low_mmol_l, 0),
        fixed(w.high_mmol_l, 0),
        sig(w.first_time_h, 4),
        fixed(w.first_mmol_l, 1),
        fixed(w.extreme_mmol_l, 1),
        sig(w.extreme_time_h, 4)
    )
}
