//! Guideline limits on the rate of sodium correction, as data
//! (`scenarios/limits.yaml`, compiled in), and the check of a sodium
//! series against them.

use crate::error::InputError;
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
    /// Rules for patients at high risk of osmotic demyelination.
    pub high_risk_rules: Vec<Rule>,
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
    /// Rules in force.
    pub fn rules(&self) -> &[Rule] {
        if self.high_risk {
            &self.guideline.high_risk_rules
        } else {
            &self.guideline.rules
        }
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

/// Pick a bundled guideline by id.
pub fn choose(id: &str, high_risk: bool) -> Result<LimitChoice, InputError> {
    let all = bundled();
    match all.iter().find(|g| g.id == id) {
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

/// Check a sodium series against the rules; one flag per crossed rule.
pub fn check(times: &[f64], na: &[f64], choice: &LimitChoice) -> Vec<Flag> {
    let mut flags = Vec::new();
    for rule in choice.rules() {
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
mod tests {
    use super::*;

    fn series(rate_per_h: f64, hours: usize) -> (Vec<f64>, Vec<f64>) {
        let t: Vec<f64> = (0..=hours).map(|h| h as f64).collect();
        let na = t.iter().map(|t| 120.0 + rate_per_h * t).collect();
        (t, na)
    }

    #[test]
    fn european_first_day_limit_is_ten() {
        // Spasovski et al. 2014: at most 10 mmol/L in the first 24 h.
        let eu = choose("europe-2014", false).unwrap();
        let (t, na) = series(9.5 / 24.0, 24);
        assert!(check(&t, &na, &eu).is_empty());
        let (t, na) = series(10.5 / 24.0, 24);
        let flags = check(&t, &na, &eu);
        assert_eq!(flags.len(), 1);
        assert!((flags[0].time_h - 23.0).abs() < 1e-9, "{:?}", flags[0]);
    }

    #[test]
    fn us_high_risk_limit_is_eight() {
        // Verbalis et al. 2013: 8 mmol/L per 24 h in high-risk patients.
        let us = choose("us-2013", true).unwrap();
        let (t, na) = series(9.0 / 24.0, 48);
        let flags = check(&t, &na, &us);
        assert!(flags.iter().any(|f| f.rule.max_mmol_l == 8.0));
        let us = choose("us-2013", false).unwrap();
        let flags = check(&t, &na, &us);
        // 9 per day: under 12/24 h but 18/48 h is reached only at 48 h (not exceeded).
        assert!(flags
            .iter()
            .all(|f| f.rule.severity == Severity::Caution || f.rule.window_h == 48.0));
    }

    #[test]
    fn window_changes_match_a_direct_scan() {
        let t: Vec<f64> = (0..200).map(|i| i as f64 * 0.5).collect();
        let na: Vec<f64> = t
            .iter()
            .map(|x| 120.0 + 3.0 * (x / 7.0).sin() + 0.05 * x)
            .collect();
        for direction in [Direction::Rise, Direction::Fall] {
            let rule = Rule {
                direction,
                window_h: 24.0,
                max_mmol_l: 0.0,
                from_h: 10.0,
                to_h: None,
                severity: Severity::Limit,
                label: String::new(),
            };
            let fast = window_changes(&t, &na, &rule);
            for j in 0..t.len() {
                let start = rule.from_h.max(t[j] - rule.window_h);
                let window: Vec<f64> = (0..=j)
                    .filter(|&i| t[i] >= start - 1e-9 || i == j)
                    .map(|i| na[i])
                    .collect();
                let slow = match direction {
                    Direction::Rise => na[j] - window.iter().cloned().fold(f64::INFINITY, f64::min),
                    Direction::Fall => {
                        window.iter().cloned().fold(f64::NEG_INFINITY, f64::max) - na[j]
                    }
                };
                assert!((fast[j] - slow).abs() < 1e-12, "{j}");
            }
        }
    }

    #[test]
    fn unknown_guideline_is_an_error() {
        assert!(choose("mars-2099", false).is_err());
    }
}
