//! Loading a scenario: reading the script file, building the sandboxed
//! engine (or taking it over from the scenario a reload comes from),
//! compiling, running the top level and assembling the plan.

use super::assemble::assemble;
use super::diagnose::{compile_error, load_error};
use super::sandbox::sandboxed_engine;
use super::words::{Shared, State};
use super::{Scenario, ScenarioError};
use rhai::{Engine, AST};
use std::cell::{Cell, RefCell};
use std::path::Path;
use std::rc::Rc;
use std::time::Instant;

/// What a reload takes over from the scenario it reloads: the engine with
/// its words, what the words act on, and the compiled script.
struct Reuse {
    engine: Rc<Engine>,
    state: Shared,
    log: Rc<RefCell<super::RunLog>>,
    clock: Rc<Cell<Option<Instant>>>,
    ast: AST,
}

/// A script file's name in messages, its text, and the folder its data
/// files are looked up in.
fn read_script(path: &Path) -> Result<(String, String, &Path), ScenarioError> {
    let name = path.display().to_string();
    let source = crate::textfile::read_text(path).map_err(|e| ScenarioError::Read {
        file: name.clone(),
        message: e.to_string(),
    })?;
    let base = match path.parent() {
        Some(b) if !b.as_os_str().is_empty() => b,
        _ => Path::new("."),
    };
    Ok((name, source, base))
}

impl Scenario {
    /// Read and load a script file (fluid files it names are resolved
    /// against its folder).
    pub fn load(path: &Path) -> Result<Scenario, ScenarioError> {
        Self::load_with_settings(path, &[])
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
        let (name, source, base) = read_script(path)?;
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
                let log = Rc::new(RefCell::new(super::RunLog::default()));
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
            None => engine
                .compile(source)
                .map_err(|e| compile_error(&e, name, source))?,
        };
        clock.set(Some(Instant::now()));
        let result = engine.run_ast(&ast);
        clock.set(None);
        if let Err(e) = result {
            return Err(load_error(&e, name, source));
        }
        let script = assemble(&state, name, source)?;
        let load_log = log.borrow().clone();
        let captured = super::captured::Captured::take(&script.rules);
        let loaded = state.borrow().clone();
        Ok(Scenario {
            name: name.to_string(),
            path: None,
            source: source.to_string(),
            script,
            engine,
            ast,
            state,
            load_log,
            log,
            clock,
            settings: settings.to_vec(),
            base_dir: base_dir.to_path_buf(),
            ran: Cell::new(false),
            captured,
            loaded,
        })
    }
}
