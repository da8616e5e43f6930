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
//! **Caution.** A simulation for planning and teaching, not a medical
//! device. Defer to local protocols and licensed clinicians, and re-measure
//! serum sodium.

pub mod actions;
pub mod error;
pub mod expect;
pub mod rules;
pub mod units;
mod words;

pub use error::ScenarioError;
pub use expect::ExpectationResult;
pub use words::{usage, ActionValue, WORDS};

use crate::error::{InputError, SimulationError};
use crate::numeric::gcd;
use crate::simulate::{Plan, Simulation};
use crate::trajectory::Trajectory;
use actions::BuildContext;
use expect::Expectation;
use rhai::packages::{Package, StandardPackage};
use rhai::{Dynamic, Engine, EvalAltResult, Position, AST};
use std::cell::{Cell, RefCell};
use std::path::{Path, PathBuf};
use std::rc::Rc;
use std::time::{Duration as WallDuration, Instant};
use words::{RuleDef, Shared, State};

/// Largest number of script operations in one pass of the top level or one
/// call of a rule.
pub const MAX_OPERATIONS: u64 = 2_000_000;
/// Largest wall-clock time of one pass of the top level or one rule call.
pub const MAX_WALL_TIME: WallDuration = WallDuration::from_secs(5);
/// Deepest nesting of function calls.
pub const MAX_CALL_LEVELS: usize = 32;

/// A loaded scenario: the script, the plan it describes, its rules and
/// expectations.
pub struct Scenario {
    name: String,
    path: Option<PathBuf>,
    source: String,
    title: String,
    description: String,
    plan: Plan,
    build: BuildContext,
    rules: Vec<RuleDef>,
    expectations: Vec<Expectation>,
    /// The sandboxed engine, shared with the scenarios reloaded from this
    /// one (its words act on `state`, `log` and `clock`, which they share).
    engine: Rc<Engine>,
    ast: AST,
    state: Shared,
    load_log: Vec<String>,
    /// Planned starts: (time, script line).
    started: Vec<(f64, usize)>,
    log: Rc<RefCell<Vec<String>>>,
    clock: Rc<Cell<Option<Instant>>>,
    settings: Vec<(String, f64)>,
    base_dir: PathBuf,
    ran: Cell<bool>,
}

impl std::fmt::Debug for Scenario {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Scenario")
            .field("name", &self.name)
            .field("title", &self.title)
            .field("rules", &self.rules.len())
            .field("expectations", &self.expectations.len())
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

struct NoImports;

impl rhai::ModuleResolver for NoImports {
    fn resolve(
        &self,
        _engine: &Engine,
        _source: Option<&str>,
        path: &str,
        pos: Position,
    ) -> Result<rhai::Shared<rhai::Module>, Box<EvalAltResult>> {
        Err(Box::new(EvalAltResult::ErrorRuntime(
            format!("import \"{path}\": scenario scripts cannot import other files or modules")
                .into(),
            pos,
        )))
    }
}

fn sandboxed_engine(
    state: &Shared,
    source: Rc<str>,
    log: Rc<RefCell<Vec<String>>>,
    clock: Rc<Cell<Option<Instant>>>,
) -> Engine {
    let mut engine = Engine::new_raw();
    thread_local! {
        // Building the standard package registers hundreds of functions:
        // once per thread, shared by every engine of the thread.
        static STANDARD: rhai::Shared<rhai::Module> = StandardPackage::new().as_shared_module();
    }
    engine.register_global_module(STANDARD.with(|m| m.clone()));
    engine
        .set_max_operations(MAX_OPERATIONS)
        .set_max_call_levels(MAX_CALL_LEVELS)
        .set_max_expr_depths(64, 32)
        .set_max_string_size(10_000)
        .set_max_array_size(10_000)
        .set_max_map_size(1_000)
        .set_max_variables(1_000)
        .set_max_functions(500)
        .set_strict_variables(true)
        .set_module_resolver(NoImports);
    engine.disable_symbol("eval");
    engine.on_progress(move |ops| {
        if ops % 1024 == 0 {
            if let Some(start) = clock.get() {
                if start.elapsed() > MAX_WALL_TIME {
                    return Some(Dynamic::from("wall clock"));
                }
            }
        }
        None
    });
    let st = state.clone();
    let print_log = log.clone();
    engine.on_print(move |text| {
        let prefix = match st.try_borrow().map(|s| s.phase) {
            Ok(words::Phase::InRule { time_h }) => format!("t = {time_h:.2} h: "),
            _ => String::new(),
        };
        print_log.borrow_mut().push(format!("{prefix}{text}"));
    });
    let debug_log = log;
    engine.on_debug(move |text, _source, pos| {
        debug_log
            .borrow_mut()
            .push(format!("debug (line {}): {text}", pos.line().unwrap_or(0)));
    });
    units::register(&mut engine);
    words::register(&mut engine, state, source);
    engine
}

/// Line, column and message of a script error (innermost position first).
pub(crate) fn describe_error(err: &EvalAltResult, source: &str) -> (usize, usize, String) {
    let mut e = err;
    let mut callers: Vec<(String, Position)> = Vec::new();
    loop {
        match e {
            EvalAltResult::ErrorInFunctionCall(name, _, inner, pos) => {
                callers.push((name.clone(), *pos));
                e = inner;
            }
            EvalAltResult::ErrorInModule(name, inner, pos) => {
                callers.push((name.clone(), *pos));
                e = inner;
            }
            _ => break,
        }
    }
    let mut pos = e.position();
    if pos.is_none() {
        pos = callers.last().map_or(Position::NONE, |c| c.1);
    }
    let message = match e {
        EvalAltResult::ErrorRuntime(d, _) => d.to_string(),
        EvalAltResult::ErrorFunctionNotFound(sig, _) => function_not_found(sig),
        EvalAltResult::ErrorVariableNotFound(name, _) => unknown_variable(name),
        EvalAltResult::ErrorPropertyNotFound(name, _) | EvalAltResult::ErrorDotExpr(name, _) => {
            property_not_found(name)
        }
        EvalAltResult::ErrorTooManyOperations(_) => format!(
            "the script was stopped after {MAX_OPERATIONS} operations: is there a loop that never ends?"
        ),
        EvalAltResult::ErrorTerminated(_, _) => format!(
            "the script was stopped after running for {} s of wall-clock time: is there a loop that never ends?",
            MAX_WALL_TIME.as_secs()
        ),
        EvalAltResult::ErrorStackOverflow(_) => format!(
            "functions call each other more than {MAX_CALL_LEVELS} levels deep: is there a recursion without an end?"
        ),
        EvalAltResult::ErrorDataTooLarge(what, _) => {
            format!("{what} grew beyond the limits of scenario scripts")
        }
        other => {
            let text = other.to_string();
            match text.rfind(" (line ") {
                Some(i) => text[..i].to_string(),
                None => text,
            }
        }
    };
    let message = match callers.first() {
        Some((name, p)) if !name.is_empty() && !name.starts_with("anon$") => format!(
            "{message} (in function `{name}` called on line {})",
            p.line().unwrap_or(0)
        ),
        _ => message,
    };
    let _ = source;
    (
        pos.line().unwrap_or(0),
        pos.position().unwrap_or(0),
        message,
    )
}

fn unknown_variable(name: &str) -> String {
    let lib = crate::FluidLibrary::bundled();
    if lib.get(name).is_ok() {
        format!("unknown variable `{name}`: a fluid is named in quotes, \"{name}\"")
    } else {
        let hint = crate::suggest::closest(name, WORDS.iter().map(|(w, _)| *w))
            .map(|s| format!(" (did you mean `{s}(...)`?)"))
            .unwrap_or_default();
        format!("unknown variable `{name}`{hint}; declare it with `let {name} = ...;` first")
    }
}

fn function_not_found(sig: &str) -> String {
    let name = sig.split([' ', '(']).next().unwrap_or(sig).trim();
    let args = sig[name.len()..]
        .trim()
        .replace("&str | ImmutableString | String", "text")
        .replace("i64", "number")
        .replace("f64", "number");
    if let Some(prop) = name.strip_prefix("get$") {
        return property_not_found(prop);
    }
    if let Some(u) = usage(name) {
        return format!("`{name}` does not take these arguments {args}: write {u}");
    }
    let hint = crate::suggest::closest(name, WORDS.iter().map(|(w, _)| *w))
        .map(|s| format!(" (did you mean `{s}`?)"))
        .unwrap_or_default();
    format!("unknown word `{name}`{hint}; scenarios/README.md lists every word")
}

fn property_not_found(text: &str) -> String {
    // Rhai words it "Unknown property 'x' - a getter is not registered ...".
    let name = match text.split('\'').nth(1) {
        Some(n) if text.starts_with("Unknown property") => n,
        _ => text,
    };
    let name = name.trim_start_matches("get$");
    let hint = crate::suggest::closest(name, rules::lab_names())
        .map(|s| format!(" (did you mean `{s}`?)"))
        .unwrap_or_default();
    format!("no lab or property called `{name}`{hint}")
}

fn script_error(
    file: &str,
    source: &str,
    line: usize,
    column: usize,
    message: String,
) -> ScenarioError {
    ScenarioError::Script {
        file: file.to_string(),
        line,
        column,
        message,
        snippet: error::source_line(source, line),
    }
}

impl Scenario {
    /// Read and load a script file (fluid files it names are resolved
    /// against its folder).
    pub fn load(path: &Path) -> Result<Scenario, ScenarioError> {
        let name = path.display().to_string();
        let source = std::fs::read_to_string(path).map_err(|e| ScenarioError::Read {
            file: name.clone(),
            message: e.to_string(),
        })?;
        let base = path.parent().unwrap_or(Path::new("."));
        let base = if base.as_os_str().is_empty() {
            Path::new(".")
        } else {
            base
        };
        let mut s = Self::from_source(&name, &source, base)?;
        s.path = Some(path.to_path_buf());
        Ok(s)
    }

    /// Load a script from text. `name` is used in messages; `base_dir` is
    /// the folder fluid files are looked up in.
    pub fn from_source(
        name: &str,
        source: &str,
        base_dir: &Path,
    ) -> Result<Scenario, ScenarioError> {
        Self::from_source_with_settings(name, source, base_dir, &[])
    }

    /// Read and load a script file with values for its `setting(name,
    /// default)` words (a sweep member varying a script setting).
    pub fn load_with_settings(
        path: &Path,
        settings: &[(String, f64)],
    ) -> Result<Scenario, ScenarioError> {
        let name = path.display().to_string();
        let source = std::fs::read_to_string(path).map_err(|e| ScenarioError::Read {
            file: name.clone(),
            message: e.to_string(),
        })?;
        let base = match path.parent() {
            Some(b) if !b.as_os_str().is_empty() => b,
            _ => Path::new("."),
        };
        let mut s = Self::from_source_with_settings(&name, &source, base, settings)?;
        s.path = Some(path.to_path_buf());
        Ok(s)
    }

    /// [`Scenario::from_source`] with values for `setting(name, default)`.
    pub fn from_source_with_settings(
        name: &str,
        source: &str,
        base_dir: &Path,
        settings: &[(String, f64)],
    ) -> Result<Scenario, ScenarioError> {
        Self::build(name, source, base_dir, settings, None)
    }

    /// Load a script; a reload passes what it takes over from the scenario
    /// it reloads (`reuse`: the engine, what its words act on, the
    /// compiled script).
    fn build(
        name: &str,
        source: &str,
        base_dir: &Path,
        settings: &[(String, f64)],
        reuse: Option<Reuse>,
    ) -> Result<Scenario, ScenarioError> {
        let (engine, state, log, clock, compiled) = match reuse {
            // Registering the words is a good part of a load: a reload keeps
            // the engine and empties what its words act on.
            Some(r) => {
                *r.state.borrow_mut() = State::new(base_dir);
                r.log.borrow_mut().clear();
                r.clock.set(None);
                (r.engine, r.state, r.log, r.clock, Some(r.ast))
            }
            None => {
                let state: Shared = Rc::new(RefCell::new(State::new(base_dir)));
                let log = Rc::new(RefCell::new(Vec::new()));
                let clock = Rc::new(Cell::new(None));
                let engine = Rc::new(sandboxed_engine(
                    &state,
                    Rc::from(source),
                    log.clone(),
                    clock.clone(),
                ));
                (engine, state, log, clock, None)
            }
        };
        state.borrow_mut().settings = settings.iter().cloned().collect();
        let ast = match compiled {
            Some(ast) => ast,
            None => engine.compile(source).map_err(|e| {
                let pos = e.position();
                script_error(
                    name,
                    source,
                    pos.line().unwrap_or(0),
                    pos.position().unwrap_or(0),
                    match e.err_type() {
                        rhai::ParseErrorType::VariableUndefined(n) => unknown_variable(n),
                        other => format!("syntax error: {other}"),
                    },
                )
            })?,
        };
        clock.set(Some(Instant::now()));
        let result = engine.run_ast(&ast);
        clock.set(None);
        if let Err(e) = result {
            let (line, column, message) = describe_error(&e, source);
            if let Some((data_file, location, message)) = words::decode_data_error(&message) {
                return Err(ScenarioError::Data {
                    file: name.to_string(),
                    line,
                    data_file,
                    location,
                    message,
                });
            }
            return Err(script_error(name, source, line, column, message));
        }
        let (plan, build, rules, expectations, title, description) = finish(&state, name, source)?;
        let started = state
            .borrow()
            .events
            .iter()
            .filter(|p| p.action.spec.starts_something())
            .map(|p| {
                (
                    p.time_h,
                    if p.action.line > 0 {
                        p.action.line
                    } else {
                        p.line
                    },
                )
            })
            .collect();
        let load_log = log.borrow().clone();
        Ok(Scenario {
            name: name.to_string(),
            path: None,
            source: source.to_string(),
            title,
            description,
            plan,
            build,
            rules,
            expectations,
            engine,
            ast,
            state,
            load_log,
            started,
            log,
            clock,
            settings: settings.to_vec(),
            base_dir: base_dir.to_path_buf(),
            ran: Cell::new(false),
        })
    }

    /// The title (`title(...)`, or the file name).
    pub fn title(&self) -> &str {
        &self.title
    }

    /// The description (`description(...)`, or empty).
    pub fn description(&self) -> &str {
        &self.description
    }

    /// The plan the script describes (events, checks, sampling, limits).
    pub fn plan(&self) -> &Plan {
        &self.plan
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

    /// Number of rules and of expectations.
    pub fn counts(&self) -> (usize, usize) {
        (self.rules.len(), self.expectations.len())
    }

    /// The same script loaded afresh (new variables, new plan) with values
    /// for its `setting(name, default)` words; the compiled script is
    /// reused, so this costs less than [`Scenario::load_with_settings`].
    pub fn reloaded(&self, settings: &[(String, f64)]) -> Result<Scenario, ScenarioError> {
        let mut s = Self::build(
            &self.name,
            &self.source,
            &self.base_dir,
            settings,
            Some(Reuse {
                engine: self.engine.clone(),
                state: self.state.clone(),
                log: self.log.clone(),
                clock: self.clock.clone(),
                ast: self.ast.clone(),
            }),
        )?;
        s.path.clone_from(&self.path);
        Ok(s)
    }

    /// Simulate the plan, calling the rules at their check times, and
    /// check the expectations.
    pub fn run(&self) -> Result<ScenarioRun, ScenarioError> {
        self.run_with_plan(self.plan.clone())
    }

    /// Like [`Scenario::run`], with another plan in place of the script's
    /// (a sweep member: the script's plan with some patient fields or
    /// parameters changed). The script's rules and expectations still apply.
    pub fn run_with_plan(&self, plan: Plan) -> Result<ScenarioRun, ScenarioError> {
        // Rules may keep state in variables they capture (`let stopped =
        // false;`): a second run starts from a freshly loaded script so that
        // every run is independent of the ones before it.
        if self.ran.replace(true) {
            let fresh = self.reloaded(&self.settings)?;
            return fresh.run_with_plan(plan);
        }
        let sim = Simulation::new(plan).map_err(|e| ScenarioError::Simulation {
            file: self.name.clone(),
            line: 0,
            source: e,
        })?;
        *self.log.borrow_mut() = self.load_log.clone();
        let mut controller = rules::ScriptController {
            engine: &self.engine,
            ast: &self.ast,
            rules: &self.rules,
            state: &self.state,
            build: self.build.clone(),
            file: &self.name,
            source: &self.source,
            log: self.log.clone(),
            clock: self.clock.clone(),
            failure: None,
            started: self.started.clone(),
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
        let log = self.log.borrow().clone();
        let expectations = self
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
}

/// What a reload takes over from the scenario it reloads: the engine with
/// its words, what the words act on, and the compiled script.
struct Reuse {
    engine: Rc<Engine>,
    state: Shared,
    log: Rc<RefCell<Vec<String>>>,
    clock: Rc<Cell<Option<Instant>>>,
    ast: AST,
}

type Finished = (
    Plan,
    BuildContext,
    Vec<RuleDef>,
    Vec<Expectation>,
    String,
    String,
);

/// Turn what the script said into a checked plan.
fn finish(state: &Shared, file: &str, source: &str) -> Result<Finished, ScenarioError> {
    let s = state.borrow();
    let err = |line: usize, message: String| script_error(file, source, line, 0, message);
    let Some((patient, patient_line)) = s.patient.clone() else {
        return Err(err(
            0,
            "the script describes no patient: add patient(#{ sex: \"female\", age_years: 60, weight_kg: 65, na: 120 })".into(),
        ));
    };
    let mut plan = Plan::new(patient);
    if s.closed.is_some() {
        plan = plan.closed_system();
    }
    if let Some((h, _)) = s.run_for {
        plan = plan.run_for(h);
    }
    if let Some((h, line)) = s.sample_every {
        if h > plan.duration_h {
            return Err(err(
                line,
                format!(
                    "sample_every: the interval is longer than the run ({} h)",
                    plan.duration_h
                ),
            ));
        }
        plan = plan.sample_every(h);
    }
    if let Some((choice, _)) = &s.limits {
        plan.limits = choice.clone();
    }
    for (name, value, line) in &s.overrides {
        plan = plan
            .set_param(name, *value)
            .map_err(|e| err(*line, format!("set_param: {e}")))?;
    }
    if !s.rules.is_empty() {
        let mut g = 0u64;
        for r in &s.rules {
            if r.interval_h > plan.duration_h + 1e-9 {
                return Err(err(
                    r.line,
                    format!(
                        "every: the interval ({} h) is longer than the run ({} h)",
                        r.interval_h, plan.duration_h
                    ),
                ));
            }
            g = gcd(g, (r.interval_h * 60.0).round() as u64);
        }
        plan = plan.check_every(g as f64 / 60.0);
    }
    let line_of_field = |field: &str| -> usize {
        match field {
            "run_for" => s.run_for.map_or(0, |r| r.1),
            "sample_every" => s.sample_every.map_or(0, |r| r.1),
            "check_every" => s.rules.first().map_or(0, |r| r.line),
            "limits" => s.limits.as_ref().map_or(0, |r| r.1),
            f => s
                .overrides
                .iter()
                .find(|o| o.0 == f)
                .map_or(patient_line, |o| o.2),
        }
    };
    let input_err = |e: SimulationError| match e {
        SimulationError::Input(ie) => {
            let line = line_of_field(ie.field());
            err(line, ie.to_string())
        }
        other => ScenarioError::Simulation {
            file: file.to_string(),
            line: 0,
            source: other,
        },
    };
    let sim = Simulation::new(plan.clone()).map_err(input_err)?;
    let build = BuildContext {
        params: sim.model().params.clone(),
        weight_kg: sim.patient().weight_kg,
        habitual: sim.model().habitual_inputs(),
    };
    for p in &s.events {
        if p.time_h > plan.duration_h + 1e-9 {
            return Err(err(
                p.line,
                format!(
                    "at({}): this is after the end of the run ({}); lengthen it with run_for(...)",
                    units::Duration { hours: p.time_h },
                    units::Duration {
                        hours: plan.duration_h
                    }
                ),
            ));
        }
        let actions = p
            .action
            .spec
            .build(p.action.label.as_deref(), &build)
            .map_err(|e: InputError| {
                let line = if p.action.line > 0 {
                    p.action.line
                } else {
                    p.line
                };
                err(line, format!("{}: {e}", p.action.spec))
            })?;
        for a in actions {
            plan = plan.at(p.time_h, a);
        }
    }
    Simulation::new(plan.clone()).map_err(input_err)?;
    let title = s.title.clone().unwrap_or_else(|| {
        Path::new(file)
            .file_stem()
            .map_or(file.to_string(), |x| x.to_string_lossy().into_owned())
    });
    Ok((
        plan,
        build,
        s.rules.clone(),
        s.expectations.clone(),
        title,
        s.description.clone().unwrap_or_default(),
    ))
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
