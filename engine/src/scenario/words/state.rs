//! What the script has said so far: the state the words build, the action
//! values scripts pass around, planned actions and rules.

use super::super::actions::ActionSpec;
use super::super::expect::Expectation;
use crate::fluids::FluidLibrary;
use crate::limits::LimitChoice;
use crate::patient::Patient;
use rhai::FnPtr;
use std::cell::RefCell;
use std::path::{Path, PathBuf};
use std::rc::Rc;

/// An action value in a script: what it does, its label, where it was made.
#[derive(Debug, Clone)]
pub struct ActionValue {
    pub(crate) id: u64,
    pub(crate) spec: ActionSpec,
    pub(crate) label: Option<String>,
    pub(crate) line: usize,
}

/// A planned action.
#[derive(Debug, Clone)]
pub(crate) struct Planned {
    pub time_h: f64,
    pub action: ActionValue,
    pub line: usize,
}

impl Planned {
    /// The line an error of this action points at: where the action was
    /// made, else where it was planned.
    pub fn blamed_line(&self) -> usize {
        if self.action.line > 0 {
            self.action.line
        } else {
            self.line
        }
    }
}

/// A rule: a closure called with the labs every `interval_h`.
#[derive(Debug, Clone)]
pub(crate) struct RuleDef {
    pub interval_h: f64,
    pub func: FnPtr,
    pub line: usize,
}

/// Whether the script is being read or a rule is running.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Phase {
    /// The top level of the script runs (before the simulation).
    Building,
    /// A rule runs at a simulated time.
    InRule { time_h: f64 },
}

/// What the script has said so far.
#[derive(Debug, Clone)]
pub(crate) struct State {
    pub base_dir: PathBuf,
    pub title: Option<String>,
    pub description: Option<String>,
    pub patient: Option<(Patient, usize)>,
    pub events: Vec<Planned>,
    pub closed: Option<usize>,
    pub run_for: Option<(f64, usize)>,
    pub sample_every: Option<(f64, usize)>,
    pub limits: Option<(LimitChoice, usize)>,
    pub overrides: Vec<(String, f64, usize)>,
    pub fluids: FluidLibrary,
    pub rules: Vec<RuleDef>,
    pub expectations: Vec<Expectation>,
    pub phase: Phase,
    /// Actions a running rule asked for (with the line that asked).
    pub pending: Vec<(ActionValue, usize)>,
    /// Actions made inside a rule and not (yet) started.
    pub dangling: Vec<ActionValue>,
    pub next_id: u64,
    /// Values given from outside (a sweep member) for `setting(name, default)`.
    pub settings: std::collections::BTreeMap<String, f64>,
    /// The names `setting(name, default)` was asked for (a sweep refuses
    /// a `script.<name>` the script never reads).
    pub settings_read: std::collections::BTreeSet<String>,
}

impl State {
    pub fn new(base_dir: &Path) -> Self {
        State {
            base_dir: base_dir.to_path_buf(),
            title: None,
            description: None,
            patient: None,
            events: Vec::new(),
            closed: None,
            run_for: None,
            sample_every: None,
            limits: None,
            overrides: Vec::new(),
            fluids: FluidLibrary::bundled(),
            rules: Vec::new(),
            expectations: Vec::new(),
            phase: Phase::Building,
            pending: Vec::new(),
            dangling: Vec::new(),
            next_id: 0,
            settings: Default::default(),
            settings_read: Default::default(),
        }
    }
}

pub(crate) type Shared = Rc<RefCell<State>>;
