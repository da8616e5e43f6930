//! Rules: script closures called with the labs at check times, turned into
//! engine actions through the [`Controller`] trait.

use super::actions::BuildContext;
use super::error::ScenarioError;
use super::words::{Phase, RuleDef, Shared};
use crate::model::Observation;
use crate::plan::{Action, Controller, Snapshot};
use crate::units::{glucose_mmol_l_to_mg_dl, urea_mmol_l_to_bun_mg_dl};
use rhai::{Dynamic, Engine, AST};
use std::cell::RefCell;
use std::rc::Rc;

/// A lab (or flow) a rule or an expectation can read, with its unit.
pub struct LabDef {
    /// Name in scripts.
    pub name: &'static str,
    /// Unit.
    pub unit: &'static str,
    /// Value from an observation.
    pub get: fn(&Observation) -> f64,
}

/// Labs read from an [`Observation`].
pub const OBS_LABS: &[LabDef] = &[
    LabDef {
        name: "na",
        unit: "mmol/L",
        get: |o| o.na_mmol_l,
    },
    LabDef {
        name: "k",
        unit: "mmol/L",
        get: |o| o.k_mmol_l,
    },
    LabDef {
        name: "glucose_mmol_l",
        unit: "mmol/L",
        get: |o| o.glucose_mmol_l,
    },
    LabDef {
        name: "glucose_mg_dl",
        unit: "mg/dL",
        get: |o| glucose_mmol_l_to_mg_dl(o.glucose_mmol_l),
    },
    LabDef {
        name: "urea_mmol_l",
        unit: "mmol/L",
        get: |o| o.urea_mmol_l,
    },
    LabDef {
        name: "bun_mg_dl",
        unit: "mg/dL",
        get: |o| urea_mmol_l_to_bun_mg_dl(o.urea_mmol_l),
    },
    LabDef {
        name: "albumin_g_l",
        unit: "g/L",
        get: |o| o.albumin_g_l,
    },
    LabDef {
        name: "osmolality",
        unit: "mOsm/kg",
        get: |o| o.osmolality_mosm_kg,
    },
    LabDef {
        name: "tonicity",
        unit: "mOsm/kg",
        get: |o| o.tonicity_mosm_kg,
    },
    LabDef {
        name: "cells_l",
        unit: "L",
        get: |o| o.cells_l,
    },
    LabDef {
        name: "red_cells_l",
        unit: "L",
        get: |o| o.red_cells_l,
    },
    LabDef {
        name: "brain_l",
        unit: "L",
        get: |o| o.brain_l,
    },
    LabDef {
        name: "interstitium_l",
        unit: "L",
        get: |o| o.interstitium_l,
    },
    LabDef {
        name: "plasma_l",
        unit: "L",
        get: |o| o.plasma_l,
    },
    LabDef {
        name: "total_water_l",
        unit: "L",
        get: |o| o.total_water_l,
    },
    LabDef {
        name: "gut_ml",
        unit: "mL",
        get: |o| o.gut_ml,
    },
    LabDef {
        name: "brain_volume_index",
        unit: "1",
        get: |o| o.brain_volume_index,
    },
    LabDef {
        name: "hematocrit",
        unit: "fraction",
        get: |o| o.hematocrit,
    },
    LabDef {
        name: "blood_volume_l",
        unit: "L",
        get: |o| o.blood_volume_l,
    },
    LabDef {
        name: "capillary_mmhg",
        unit: "mmHg",
        get: |o| o.capillary_mmhg,
    },
    LabDef {
        name: "interstitial_mmhg",
        unit: "mmHg",
        get: |o| o.interstitial_mmhg,
    },
    LabDef {
        name: "plasma_colloid_mmhg",
        unit: "mmHg",
        get: |o| o.plasma_colloid_mmhg,
    },
    LabDef {
        name: "interstitial_colloid_mmhg",
        unit: "mmHg",
        get: |o| o.interstitial_colloid_mmhg,
    },
    LabDef {
        name: "filtration_ml_h",
        unit: "mL/h",
        get: |o| o.filtration_ml_h,
    },
    LabDef {
        name: "lymph_ml_h",
        unit: "mL/h",
        get: |o| o.lymph_ml_h,
    },
    LabDef {
        name: "vasopressin_pmol_l",
        unit: "pmol/L",
        get: |o| o.vasopressin_pmol_l,
    },
    LabDef {
        name: "urine_ml_h",
        unit: "mL/h",
        get: |o| o.urine_ml_h,
    },
    LabDef {
        name: "urine_osm",
        unit: "mOsm/kg",
        get: |o| o.urine_osm_mosm_kg,
    },
    LabDef {
        name: "urine_na",
        unit: "mmol/L",
        get: |o| o.urine_na_mmol_l,
    },
    LabDef {
        name: "urine_k",
        unit: "mmol/L",
        get: |o| o.urine_k_mmol_l,
    },
    LabDef {
        name: "efwc_ml_h",
        unit: "mL/h",
        get: |o| o.efwc_ml_h,
    },
    LabDef {
        name: "osmolar_clearance_ml_h",
        unit: "mL/h",
        get: |o| o.osmolar_clearance_ml_h,
    },
    LabDef {
        name: "free_water_clearance_ml_h",
        unit: "mL/h",
        get: |o| o.free_water_clearance_ml_h,
    },
];

/// Labs derived from the sodium history rather than one observation.
pub const HISTORY_LABS: &[(&str, &str)] = &[
    ("time_h", "h"),
    ("na_start", "mmol/L"),
    ("na_change_since_start", "mmol/L"),
    ("na_change_24h", "mmol/L"),
    ("na_change_48h", "mmol/L"),
];

/// Every name a rule's `labs` offers (and expectations accept).
pub fn lab_names() -> impl Iterator<Item = &'static str> + Clone {
    HISTORY_LABS
        .iter()
        .map(|(n, _)| *n)
        .chain(OBS_LABS.iter().map(|l| l.name))
}

/// The snapshot a rule sees, as `labs`: the engine's [`Snapshot`].
pub type Labs = Snapshot;

pub(crate) fn register_labs(engine: &mut Engine) {
    engine.register_type_with_name::<Labs>("labs");
    for def in OBS_LABS {
        let get = def.get;
        engine.register_get(def.name, move |l: &mut Labs| get(&l.obs));
    }
    engine.register_get("time_h", |l: &mut Labs| l.time_h);
    engine.register_get("na_start", |l: &mut Labs| l.na_start);
    engine.register_get("na_change_since_start", |l: &mut Labs| {
        l.na_change_since_start
    });
    engine.register_get("na_change_24h", |l: &mut Labs| l.na_change_24h);
    engine.register_get("na_change_48h", |l: &mut Labs| l.na_change_48h);
    engine.register_fn("running", |l: &mut Labs, label: &str| {
        l.running.iter().any(|r| r == label)
    });
    engine.register_fn("to_string", |l: &mut Labs| {
        format!(
            "labs at {:.2} h: Na {:.1} mmol/L",
            l.time_h, l.obs.na_mmol_l
        )
    });
}

/// Runs the script's rules at the engine's check times.
pub(crate) struct ScriptController<'a> {
    pub engine: &'a Engine,
    pub ast: &'a AST,
    pub rules: &'a [RuleDef],
    pub state: &'a Shared,
    pub build: BuildContext,
    pub file: &'a str,
    pub source: &'a str,
    pub log: Rc<RefCell<super::RunLog>>,
    pub clock: Rc<std::cell::Cell<Option<std::time::Instant>>>,
    pub failure: Option<ScenarioError>,
    /// Starts so far: (time, script line), planned and by rules.
    pub started: Vec<(f64, usize)>,
}

/// Whether a rule of interval `every_h` is due at `t`.
fn due(t: f64, every_h: f64) -> bool {
    let k = (t / every_h).round();
    (k * every_h - t).abs() < 1e-6
}

impl ScriptController<'_> {
    fn rule_error(
        &self,
        rule: &RuleDef,
        t: f64,
        line: usize,
        column: usize,
        message: String,
    ) -> ScenarioError {
        // Errors raised outside any statement (limits hit while calling the
        // closure) point at the rule itself.
        let (line, column) = if line == 0 {
            (rule.line, 0)
        } else {
            (line, column)
        };
        ScenarioError::Rule {
            file: self.file.to_string(),
            rule_line: rule.line,
            time_h: t,
            line,
            column,
            message,
            snippet: super::error::source_line(self.source, line),
        }
    }

    fn run_rule(&mut self, rule: &RuleDef, labs: &Labs) -> Result<Vec<Action>, ScenarioError> {
        let t = labs.time_h;
        {
            let mut s = self.state.borrow_mut();
            s.phase = Phase::InRule { time_h: t };
            s.pending.clear();
            s.dangling.clear();
        }
        self.clock.set(Some(std::time::Instant::now()));
        // No borrow of the state is held here: the closure calls our words.
        let result = rule
            .func
            .call::<Dynamic>(self.engine, self.ast, (labs.clone(),));
        self.clock.set(None);
        let (pending, dangling) = {
            let mut s = self.state.borrow_mut();
            s.phase = Phase::Building;
            (
                std::mem::take(&mut s.pending),
                std::mem::take(&mut s.dangling),
            )
        };
        if let Err(e) = result {
            let d = super::diagnose::describe_error(&e);
            return Err(self.rule_error(rule, t, d.line, d.column, d.message));
        }
        if let Some(d) = dangling.first() {
            return Err(self.rule_error(
                rule,
                t,
                d.line,
                0,
                format!(
                    "\"{}\" was made inside the rule but never started: pass it to start(...) to act now",
                    d.spec
                ),
            ));
        }
        let mut out = Vec::new();
        for (action, line) in pending {
            let built = action
                .spec
                .build(action.label.as_deref(), &self.build)
                .map_err(|e| self.rule_error(rule, t, line, 0, e.to_string()))?;
            let label = action
                .label
                .clone()
                .unwrap_or_else(|| action.spec.default_label());
            let shown = if action.spec.starts_something() {
                format!("{} [{label}]", action.spec)
            } else {
                action.spec.to_string()
            };
            self.log.borrow_mut().push(format!(
                "t = {t:.2} h: rule of line {}: {shown} (Na {:.1} mmol/L)",
                rule.line, labs.obs.na_mmol_l
            ));
            if action.spec.starts_something() {
                self.started.push((t, line));
            }
            out.extend(built);
        }
        Ok(out)
    }
}

impl Controller for ScriptController<'_> {
    fn check(&mut self, snapshot: &Snapshot) -> Result<Vec<Action>, String> {
        if self.failure.is_some() {
            return Err("an earlier rule failed".into());
        }
        let labs = snapshot.clone();
        let mut actions = Vec::new();
        for rule in self.rules {
            if !due(snapshot.time_h, rule.interval_h) {
                continue;
            }
            match self.run_rule(rule, &labs) {
                Ok(a) => actions.extend(a),
                Err(e) => {
                    let message = e.to_string();
                    self.failure = Some(e);
                    return Err(message);
                }
            }
        }
        Ok(actions)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rules_fall_due_on_their_own_interval() {
        assert!(due(0.0, 0.25));
        assert!(due(0.75, 0.25));
        assert!(!due(0.5, 1.0 / 3.0));
        assert!(due(2.0 / 3.0, 1.0 / 3.0));
        // Accumulated rounding of a 10 min check grid.
        let t = (0..30).fold(0.0, |acc, _| acc + 1.0 / 6.0);
        assert!(due(t, 0.5));
    }

    #[test]
    fn lab_names_are_unique() {
        let mut names: Vec<_> = lab_names().collect();
        let n = names.len();
        names.sort_unstable();
        names.dedup();
        assert_eq!(n, names.len());
    }
}
