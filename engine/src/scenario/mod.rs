//! # Scenario scripts
//!
//! A scenario is a small [Rhai](https://rhai.rs) script that describes a
//! patient, a plan of fluids, drugs and losses, ward rules that react to the
//! simulated labs, and expectations about the outcome. [`Scenario::load`]
//! reads and runs the script's top level into a [`Plan`] (plus its rules and
//! expectations); [`Scenario::run`] simulates the plan, calling the rules at
//! their check times through the engine's [`Controller`](crate::Controller)
//! trait, and returns a [`ScenarioRun`]: the [`Trajectory`], the outcome of
//! every expectation and the log.
//!
//! ```
//! use std::path::Path;
//! use tidewater::scenario::Scenario;
//!
//! let script = r#"
//!     title("Hypertonic boluses with a stop rule");
//!     patient(#{ sex: "female", age_years: 70, weight_kg: 60, na: 118, onset: "chronic", cause: "siad" });
//!     run_for(hours(24));
//!     at(hours(0), infuse("saline_3", ml(150), minutes(20)).labelled("bolus"));
//!     every(minutes(30), |labs| {
//!         if labs.na_change_since_start >= 6 { stop("bolus"); }
//!     });
//!     expect_above("na", hours(2), 119);
//!     expect_max_rise_24h(10);
//! "#;
//! let scenario = Scenario::from_source("example.rhai", script, Path::new("."))?;
//! let run = scenario.run()?;
//! assert!(run.all_expectations_hold(), "{:?}", run.expectations);
//! # Ok::<(), tidewater::scenario::ScenarioError>(())
//! ```
//!
//! Quantities carry units ([`units`]): `hours(2)` is a duration, `ml(500)` a
//! volume, and a volume where a duration belongs is an error naming the
//! line. The script runs in a sandbox: no file access except
//! `fluids_file(...)` (a YAML file in the script's folder), no imports,
//! bounded operations, call depth, sizes and wall-clock time, strict
//! variables, `print` to the run log. The language reference is
//! `scenarios/README.md`.
//!
//! Inside: `load` reads a script and runs its top level in the `sandbox`
//! (the engine with its limits) with the words of the language (`words/`,
//! one file per family); `assemble` turns what the top level said into a
//! checked plan; `rules` calls the rules during the run; `diagnose` turns
//! script errors into [`ScenarioError`]s naming file, line and column.
//!
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.

pub mod actions;
mod assemble;
mod captured;
mod diagnose;
pub mod error;
pub mod expect;
mod load;
pub mod log;
pub mod rules;
mod sandbox;
pub mod units;
mod words;

pub use error::ScenarioError;
pub use expect::ExpectationResult;
pub use sandbox::{MAX_CALL_LEVELS, MAX_OPERATIONS, MAX_WALL_TIME};
pub use words::{usage, ActionValue, WORDS};

use crate::error::SimulationError;
use crate::plan::Plan;
use crate::simulate::Simulation;
use crate::trajectory::Trajectory;
use assemble::Assembled;
pub use log::RunLog;
use rhai::{Engine, AST};
use std::cell::{Cell, RefCell};
use std::path::{Path, PathBuf};
use std::rc::Rc;
use std::time::Instant;
use words::Shared;

/// A loaded scenario: the script, the plan it describes, its rules and
/// expectations.
pub struct Scenario {
    name: String,
    path: Option<PathBuf>,
    source: String,
    /// What the top level said: plan, rules, expectations, title.
    script: Assembled,
    /// The sandboxed engine, shared with the scenarios reloaded from this
    /// one (its words act on `state`, `log` and `clock`, which they share).
    engine: Rc<Engine>,
    ast: AST,
    state: Shared,
    load_log: RunLog,
    log: Rc<RefCell<RunLog>>,
    clock: Rc<Cell<Option<Instant>>>,
    settings: Vec<(String, f64)>,
    base_dir: PathBuf,
    ran: Cell<bool>,
    /// What a run may change, as the load left it: the variables the rules
    /// capture (`None` when they cannot all be followed: each run after the
    /// first then loads the script afresh) and what the words act on.
    captured: Option<captured::Captured>,
    loaded: words::State,
}

impl std::fmt::Debug for Scenario {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Scenario")
            .field("name", &self.name)
            .field("title", &self.script.title)
            .field("rules", &self.script.rules.len())
            .field("expectations", &self.script.expectations.len())
            .finish()
    }
}

/// The outcome of [`Scenario::run`].
#[derive(Debug, Clone)]
pub struct ScenarioRun {
    /// The simulated course.
    pub trajectory: Trajectory,
    /// Every expectation of the script, checked against the run.
    pub expectations: Vec<ExpectationResult>,
    /// Printed lines and the actions rules took, in order.
    pub log: Vec<String>,
}

impl ScenarioRun {
    /// Whether every expectation held (true when there are none).
    pub fn all_expectations_hold(&self) -> bool {
        self.expectations.iter().all(|e| e.passed)
    }
}

impl Scenario {
    /// The names the script asked `setting(name, default)` for, in its
    /// last load or run.
    pub fn settings_read(&self) -> Vec<String> {
        self.state.borrow().settings_read.iter().cloned().collect()
    }

    /// The title (`title(...)`, or the file name).
    pub fn title(&self) -> &str {
        &self.script.title
    }

    /// The description (`description(...)`, or empty).
    pub fn description(&self) -> &str {
        &self.script.description
    }

    /// The plan the script describes (events, checks, sampling, limits).
    pub fn plan(&self) -> &Plan {
        &self.script.plan
    }

    /// The script text.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// The script file, when loaded from one.
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// The name used in messages.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// A fluid by id from the script's library (the bundled fluids plus
    /// any `fluids_file(...)` the script read).
    pub fn fluid(&self, id: &str) -> Result<crate::fluids::Fluid, crate::error::InputError> {
        self.state.borrow().fluids.get(id).cloned()
    }

    /// Whether a run after the first puts back the variables the rules
    /// capture, as the load left them, rather than loading the script
    /// afresh (false only when they cannot all be followed).
    pub fn reuses_its_load(&self) -> bool {
        self.captured.is_some()
    }

    /// Number of rules and of expectations.
    pub fn counts(&self) -> (usize, usize) {
        (self.script.rules.len(), self.script.expectations.len())
    }

    /// Simulate the plan, calling the rules at their check times, and
    /// check the expectations.
    pub fn run(&self) -> Result<ScenarioRun, ScenarioError> {
        self.run_with_plan(self.script.plan.clone())
    }

    /// Like [`Scenario::run`], with another plan in place of the script's
    /// (a sweep member: the script's plan with some patient fields or
    /// parameters changed). The script's rules and expectations still apply.
    pub fn run_with_plan(&self, plan: Plan) -> Result<ScenarioRun, ScenarioError> {
        let trajectory = self.trajectory_with_plan(plan)?;
        let log = self.log.borrow().to_lines();
        let expectations = self
            .script
            .expectations
            .iter()
            .map(|e| e.evaluate(&trajectory, &log))
            .collect();
        Ok(ScenarioRun {
            trajectory,
            expectations,
            log,
        })
    }

    /// Like [`Scenario::run_with_plan`], the simulated course alone: the
    /// expectations are not checked (a sweep member keeps only outputs of
    /// its trajectory). The run log is still kept.
    pub fn trajectory_with_plan(&self, plan: Plan) -> Result<Trajectory, ScenarioError> {
        // Rules may keep state in variables they capture (`let stopped =
        // false;`): every run starts from them as the load left them, and
        // from the words' state as the load left it (a reload of this
        // scenario shares it), so that every run is independent of the ones
        // before it. When the captured variables cannot be put back, a
        // second run starts from a freshly loaded script instead.
        let again = self.ran.replace(true);
        let restored = self.captured.as_ref().is_some_and(|c| c.restore());
        if again && !restored {
            let fresh = self.reloaded(&self.settings)?;
            return fresh.trajectory_with_plan(plan);
        }
        self.state.borrow_mut().clone_from(&self.loaded);
        let sim = Simulation::new(plan).map_err(|e| ScenarioError::Simulation {
            file: self.name.clone(),
            line: 0,
            source: e,
        })?;
        *self.log.borrow_mut() = self.load_log.clone();
        let mut controller = rules::ScriptController {
            engine: &self.engine,
            ast: &self.ast,
            rules: &self.script.rules,
            state: &self.state,
            build: self.script.build.clone(),
            file: &self.name,
            source: &self.source,
            log: self.log.clone(),
            clock: self.clock.clone(),
            failure: None,
            started: self.script.started.clone(),
        };
        let result = sim.run_with(&mut controller);
        if let Some(f) = controller.failure.take() {
            return Err(f);
        }
        let trajectory = result.map_err(|e| {
            let t = match &e {
                SimulationError::Negative { time_h, .. }
                | SimulationError::Solver { time_h, .. }
                | SimulationError::Controller { time_h, .. } => *time_h,
                SimulationError::Input(_) => 0.0,
            };
            let line = controller
                .started
                .iter()
                .filter(|(ts, _)| *ts <= t + 1e-9)
                .max_by(|a, b| a.0.total_cmp(&b.0))
                .map_or(0, |x| x.1);
            ScenarioError::Simulation {
                file: self.name.clone(),
                line,
                source: e,
            }
        })?;
        Ok(trajectory)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const PATIENT: &str =
        "patient(#{ sex: \"male\", age_years: 50, weight_kg: 80, na: 125, onset: \"chronic\", cause: \"inappropriate_antidiuresis\" });\n";

    fn load(body: &str) -> Result<Scenario, ScenarioError> {
        Scenario::from_source("t.rhai", &format!("{PATIENT}{body}"), Path::new("."))
    }

    #[test]
    fn integer_and_float_units_agree() {
        let a =
            load("run_for(hours(6));\nat(hours(1), infuse(\"saline_0_9\", litres(1), hours(2)));")
                .unwrap();
        let b = load(
            "run_for(hours(6.0));\nat(minutes(60.0), infuse(\"saline_0_9\", ml(1000.0), minutes(120)));",
        )
        .unwrap();
        assert_eq!(a.plan().events, b.plan().events);
        assert_eq!(a.plan().duration_h, 6.0);
    }

    #[test]
    fn per_kg_volumes_use_the_patients_weight() {
        // 20 mL/kg for 80 kg is 1.6 L: over 4 h that is 0.4 L/h of water.
        let s = load("at(hours(0), infuse(\"saline_0_9\", ml_per_kg(20), hours(4)));").unwrap();
        let ev = &s.plan().events[0];
        match &ev.action {
            crate::Action::Start(stream) => {
                assert!((stream.rates.water_in_l_h - 0.4).abs() < 1e-12);
                // 0.9 % saline carries 154 mmol/L (REFERENCES.md fluid table).
                assert!((stream.rates.na_in_mmol_h - 0.4 * 154.0).abs() < 1e-9);
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn a_rule_that_prints_without_end_leaves_a_bounded_log() {
        // 3 rule calls of 6,000 lines each: 18,000 lines, cut at the bound.
        let s = load(
            "run_for(hours(1));\nevery(minutes(30), |labs| { for i in 0..6000 { print(`line ${i}`); } });",
        )
        .unwrap();
        let run = s.run().unwrap();
        assert_eq!(run.log.len(), log::MAX_LOG_LINES + 1);
        let note = run.log.last().unwrap();
        assert!(note.starts_with("... 8000 more lines dropped"), "{note}");
        // The next run starts a fresh log.
        assert_eq!(s.run().unwrap().log, run.log);
    }

    #[test]
    fn print_goes_to_the_log_and_rules_fire_on_their_own_interval() {
        let s = load(
            "run_for(hours(3));\nprint(\"loaded\");\nevery(minutes(30), |labs| { print(`half ${labs.time_h}`); });\nevery(hours(1), |labs| { print(`hour ${labs.time_h}`); });",
        )
        .unwrap();
        assert_eq!(s.plan().check_every_h, Some(0.5));
        let run = s.run().unwrap();
        let halves = run.log.iter().filter(|l| l.contains("half")).count();
        let hours = run.log.iter().filter(|l| l.contains("hour")).count();
        assert_eq!(run.log[0], "loaded");
        assert_eq!((halves, hours), (7, 4), "{:?}", run.log);
        // Running twice gives the same log (state is reset per run).
        assert_eq!(s.run().unwrap().log, run.log);
    }

    #[test]
    fn a_rule_acts_at_its_check_time() {
        let s = load(
            "run_for(hours(4));\nat(hours(0), infuse_at_rate(\"saline_3\", ml_per_h(100)));\nevery(hours(1), |labs| { if labs.time_h >= 2 { stop(\"saline_3\"); } });",
        )
        .unwrap();
        let run = s.run().unwrap();
        let t = &run.trajectory;
        assert!(t.at(1.9).inputs.na_in_mmol_h > 0.0);
        assert_eq!(
            t.at(2.1).inputs.na_in_mmol_h - t.at(3.0).inputs.na_in_mmol_h,
            0.0
        );
        assert!(t.at(2.1).inputs.na_in_mmol_h < t.at(1.9).inputs.na_in_mmol_h);
        assert!(run
            .log
            .iter()
            .any(|l| l.contains("t = 2.00 h") && l.contains("stop saline_3")));
    }

    #[test]
    fn expectations_report_failures_with_their_line() {
        let s = load("run_for(hours(2));\nexpect_above(\"na\", hours(1), 200);\nexpect_below(\"na\", hours(1), 200);").unwrap();
        let run = s.run().unwrap();
        assert!(!run.all_expectations_hold());
        assert_eq!(run.expectations[0].line, 3);
        assert!(!run.expectations[0].passed);
        assert!(run.expectations[1].passed);
    }
}

#[cfg(test)]
mod rerun_tests {
    use super::*;

    #[test]
    fn running_twice_gives_the_same_result() {
        // A rule that keeps state in a captured variable must not leak it
        // into the next run.
        let script = r#"
            patient(#{ sex: "female", age_years: 60, weight_kg: 60, na: 120, onset: "chronic" });
            closed_system();
            run_for(hours(6));
            at(hours(0), infuse_at_rate("saline_3", ml_per_h(100)).labelled("drip"));
            let stopped = false;
            every(minutes(30), |labs| {
                if !stopped && labs.na_change_since_start >= 3 { stop("drip"); stopped = true; }
            });
        "#;
        let s = Scenario::from_source("twice.rhai", script, Path::new(".")).unwrap();
        let a = s.run().unwrap();
        let b = s.run().unwrap();
        assert_eq!(a.trajectory.sodium(), b.trajectory.sodium());
        // Reloads share the engine with the scenario they came from: runs
        // of either, in any order, stay independent, logs included.
        let r1 = s.reloaded(&[]).unwrap();
        let r2 = r1.reloaded(&[]).unwrap();
        let c = r2.run().unwrap();
        let d = s.run().unwrap();
        let e = r1.run().unwrap();
        for run in [&c, &d, &e] {
            assert_eq!(a.trajectory.sodium(), run.trajectory.sodium());
            assert_eq!(a.log, run.log);
        }
        assert!(a.log.iter().any(|l| l.contains("stop drip")), "{:?}", a.log);
    }
}
