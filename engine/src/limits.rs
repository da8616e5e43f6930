//! Guideline limits on the rate of sodium correction, as data
//! (`scenarios/limits.yaml`, compiled in), when each rule applies (the
//! starting disorder and the onset: [`Situation`]), and the check of a
//! sodium series against them. The minimum-correction goals beside the
//! limits are in [`crate::goals`].

use crate::error::InputError;
use crate::goals::Goal;
use crate::patient::{Onset, Symptoms};
use serde::{Deserialize, Serialize};

/// The bundled guideline sets.
pub const BUNDLED_YAML: &str = include_str!("../../scenarios/limits.yaml");

/// Whether a rule bounds a rise or a fall.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Direction {
    /// Rise of serum sodium (correcting hyponatremia).
    Rise,
    /// Fall of serum sodium (correcting hypernatremia).
    Fall,
}

/// How serious crossing a rule is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// Edge of a recommended range.
    Caution,
    /// A limit not to be exceeded.
    Limit,
}

/// The disorder at the start a rule or goal is meant for.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum StartDisorder {
    /// Serum sodium below 135 mmol/L at the start.
    Hyponatremia,
    /// Serum sodium above 145 mmol/L at the start.
    Hypernatremia,
    /// Whatever the start.
    #[default]
    Any,
}

/// Lowest normal serum sodium, mmol/L: below it the start is hyponatremic
/// (common practice; reference range 135-145 mmol/L).
pub const HYPONATREMIA_BELOW_MMOL_L: f64 = 135.0;
/// Highest normal serum sodium, mmol/L: above it the start is hypernatremic
/// (common practice).
pub const HYPERNATREMIA_ABOVE_MMOL_L: f64 = 145.0;

impl StartDisorder {
    /// Whether a start at `na` mmol/L is of this kind.
    pub fn holds(self, na: f64) -> bool {
        match self {
            StartDisorder::Hyponatremia => na < HYPONATREMIA_BELOW_MMOL_L,
            StartDisorder::Hypernatremia => na > HYPERNATREMIA_ABOVE_MMOL_L,
            StartDisorder::Any => true,
        }
    }
}

/// The onset a rule or goal is meant for.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum OnsetCondition {
    /// Chronic (48 h or more, or of unknown duration).
    Chronic,
    /// Acute (documented as less than 48 h).
    Acute,
    /// Either.
    #[default]
    Any,
}

impl OnsetCondition {
    /// Whether a patient of this onset is meant.
    pub fn holds(self, onset: Onset) -> bool {
        match self {
            OnsetCondition::Chronic => onset == Onset::Chronic,
            OnsetCondition::Acute => onset == Onset::Acute,
            OnsetCondition::Any => true,
        }
    }
}

/// What decides which rules and goals of a set apply to a run: the start
/// sodium, the onset and the symptoms. An unknown onset counts as chronic
/// (the patient field's default): both guidelines advise treating
/// hyponatremia of unknown duration as chronic, since the risk of osmotic
/// demyelination lies there (Spasovski et al. 2014; Verbalis et al. 2013;
/// from memory).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Situation {
    /// Serum sodium at the start, mmol/L.
    pub start_na_mmol_l: f64,
    /// Onset of the disorder.
    pub onset: Onset,
    /// Symptoms at the start.
    pub symptoms: Symptoms,
}

impl Situation {
    /// The situation of a resolved patient.
    pub fn of(patient: &crate::patient::ResolvedPatient) -> Self {
        Situation {
            start_na_mmol_l: patient.na,
            onset: patient.onset,
            symptoms: patient.symptoms,
        }
    }

    /// Whether the start is hyponatremic (serum sodium below 135 mmol/L).
    pub fn hyponatremic(&self) -> bool {
        StartDisorder::Hyponatremia.holds(self.start_na_mmol_l)
    }
}

/// One rule: at most `max_mmol_l` of change within a trailing window.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Rule {
    /// Rise or fall.
    pub direction: Direction,
    /// Window length, h.
    pub window_h: f64,
    /// Largest change allowed, mmol/L.
    pub max_mmol_l: f64,
    /// Windows start no earlier than this, h.
    #[serde(default)]
    pub from_h: f64,
    /// Rule checked up to this time, h (none: to the end).
    #[serde(default)]
    pub to_h: Option<f64>,
    /// Caution or limit.
    pub severity: Severity,
    /// Short description.
    pub label: String,
    /// Published source of this rule ("from memory" where recalled).
    pub source: String,
    /// The starting disorder the rule is meant for.
    #[serde(default)]
    pub start: StartDisorder,
    /// The onset the rule is meant for.
    #[serde(default)]
    pub onset: OnsetCondition,
}

impl Rule {
    /// Whether the rule applies in `situation`.
    pub fn applies(&self, situation: &Situation) -> bool {
        self.start.holds(situation.start_na_mmol_l) && self.onset.holds(situation.onset)
    }
}

/// The rules and goals of one risk variant of a guideline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Variant {
    /// Limits on the rate of change.
    pub rules: Vec<Rule>,
    /// Minimum corrections.
    #[serde(default)]
    pub goals: Vec<Goal>,
}

/// A named set of rules from one guideline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Guideline {
    /// Identifier (`europe-2014`).
    pub id: String,
    /// Published source.
    pub source: String,
    /// Rules for ordinary risk.
    pub rules: Vec<Rule>,
    /// Goals (minimum corrections) for ordinary risk.
    #[serde(default)]
    pub goals: Vec<Goal>,
    /// Rules and goals for patients at high risk of osmotic demyelination,
    /// where the guideline gives them apart (none: one set for all).
    #[serde(default)]
    pub high_risk: Option<Variant>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct GuidelineFile {
    guidelines: Vec<Guideline>,
}

/// The guideline set chosen for a run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitChoice {
    /// The guideline.
    pub guideline: Guideline,
    /// Whether the high-risk rules apply.
    pub high_risk: bool,
}

impl LimitChoice {
    /// Rules in force (of the chosen risk variant, whatever the situation).
    pub fn rules(&self) -> &[Rule] {
        match (&self.guideline.high_risk, self.high_risk) {
            (Some(v), true) => &v.rules,
            _ => &self.guideline.rules,
        }
    }

    /// Goals in force (of the chosen risk variant, whatever the situation).
    pub fn goals(&self) -> &[Goal] {
        match (&self.guideline.high_risk, self.high_risk) {
            (Some(v), true) => &v.goals,
            _ => &self.guideline.goals,
        }
    }

    /// The rules that apply in `situation` (start sodium, onset).
    pub fn applicable_rules(&self, situation: &Situation) -> Vec<&Rule> {
        self.rules()
            .iter()
            .filter(|r| r.applies(situation))
            .collect()
    }

    /// The goals that apply in `situation` (start sodium, onset, symptoms).
    pub fn applicable_goals(&self, situation: &Situation) -> Vec<&Goal> {
        self.goals()
            .iter()
            .filter(|g| g.applies(situation))
            .collect()
    }
}

/// All bundled guidelines (parsed once per process).
pub fn bundled() -> Vec<Guideline> {
    static PARSED: std::sync::OnceLock<Vec<Guideline>> = std::sync::OnceLock::new();
    PARSED
        .get_or_init(|| {
            let f: GuidelineFile =
                serde_yaml::from_str(BUNDLED_YAML).expect("bundled limits are valid");
            f.guidelines
        })
        .clone()
}

/// Pick a bundled guideline by id. Asking for the high-risk rules of a
/// guideline that gives one set for all patients is refused (rather than
/// silently answered with the ordinary rules), naming the sets that have a
/// high-risk variant.
pub fn choose(id: &str, high_risk: bool) -> Result<LimitChoice, InputError> {
    let all = bundled();
    match all.iter().find(|g| g.id == id) {
        Some(g) if high_risk && g.high_risk.is_none() => Err(InputError::Conflict {
            field: "high_risk".into(),
            other: format!("limits \"{id}\""),
            why: format!(
                "{} gives one set of limits for all patients, with no high-risk variant; \
                 sets with one: {}",
                g.source,
                all.iter()
                    .filter(|g| g.high_risk.is_some())
                    .map(|g| g.id.clone())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        }),
        Some(g) => Ok(LimitChoice {
            guideline: g.clone(),
            high_risk,
        }),
        None => Err(InputError::BadChoice {
            field: "limits".into(),
            value: id.into(),
            expected: all
                .iter()
                .map(|g| g.id.clone())
                .collect::<Vec<_>>()
                .join(", "),
        }),
    }
}

impl Default for LimitChoice {
    fn default() -> Self {
        choose("europe-2014", false).expect("bundled guideline")
    }
}

/// A rule crossed during a run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Flag {
    /// First sample time at which the rule was crossed, h.
    pub time_h: f64,
    /// Change within the window at that time, mmol/L.
    pub change_mmol_l: f64,
    /// Largest change within any window of this rule, mmol/L.
    pub worst_change_mmol_l: f64,
    /// Time of the largest change, h.
    pub worst_time_h: f64,
    /// The rule.
    pub rule: Rule,
}

/// Change within the trailing window of `rule` ending at each sample: the
/// rise `Na(t) − min` (or the fall `max − Na(t)`) over
/// `[max(from_h, t − window_h), t]`. Linear time (a monotonic queue).
pub fn window_changes(times: &[f64], na: &[f64], rule: &Rule) -> Vec<f64> {
    let mut out = Vec::with_capacity(times.len());
    let mut queue: std::collections::VecDeque<usize> = std::collections::VecDeque::new();
    let better = |a: f64, b: f64| match rule.direction {
        Direction::Rise => a <= b,
        Direction::Fall => a >= b,
    };
    for j in 0..times.len() {
        while let Some(&back) = queue.back() {
            if better(na[j], na[back]) {
                queue.pop_back();
            } else {
                break;
            }
        }
        queue.push_back(j);
        let start = rule.from_h.max(times[j] - rule.window_h);
        while let Some(&front) = queue.front() {
            if times[front] < start - 1e-9 && front != j {
                queue.pop_front();
            } else {
                break;
            }
        }
        let extreme = na[*queue.front().expect("queue holds j")];
        out.push(match rule.direction {
            Direction::Rise => na[j] - extreme,
            Direction::Fall => extreme - na[j],
        });
    }
    out
}

/// Check a sodium series against the rules that apply in `situation`; one
/// flag per crossed rule.
pub fn check(times: &[f64], na: &[f64], choice: &LimitChoice, situation: &Situation) -> Vec<Flag> {
    let mut flags = Vec::new();
    for rule in choice.applicable_rules(situation) {
        let changes = window_changes(times, na, rule);
        let mut flag: Option<Flag> = None;
        for (j, &change) in changes.iter().enumerate() {
            let t = times[j];
            if t <= rule.from_h + 1e-9 || rule.to_h.is_some_and(|end| t > end + 1e-9) {
                continue;
            }
            if change > rule.max_mmol_l + 1e-9 {
                match &mut flag {
                    None => {
                        flag = Some(Flag {
                            time_h: t,
                            change_mmol_l: change,
                            worst_change_mmol_l: change,
                            worst_time_h: t,
                            rule: rule.clone(),
                        })
                    }
                    Some(f) if change > f.worst_change_mmol_l => {
                        f.worst_change_mmol_l = change;
                        f.worst_time_h = t;
                    }
                    Some(_) => {}
                }
            }
        }
        flags.extend(flag);
    }
    flags
}

#[cfg(test)]
#[path = "limits_tests.rs"]
mod tests;
