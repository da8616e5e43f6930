//! The engine's typed errors as Python exceptions: `tidewater.InputError`
//! (with `file`, `line`, `column`, `field`), `tidewater.SimulationError`
//! (with `time_h`, `pool`, `file`, `line`) and its subclass
//! `tidewater.RuleError` (with `rule`), all under `tidewater.TidewaterError`.

use pyo3::create_exception;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;
use tidewater::scenario::ScenarioError;
use tidewater::sweep::SweepError;

create_exception!(
    tidewater,
    TidewaterError,
    PyException,
    "Base of every Tidewater error."
);
create_exception!(
    tidewater,
    InputError,
    TidewaterError,
    "A bad input: a script, a data file, a patient, a setting or a plan. \
     Attributes: file, line, column (1-based, None when unknown), field \
     (the field named, when the message names one)."
);
create_exception!(
    tidewater,
    SimulationError,
    TidewaterError,
    "The simulation failed. Attributes: time_h (simulated time, h), pool \
     (the compartment or pool that would have become negative, or None), \
     file and line (the script and the last action started before then, \
     when known)."
);
create_exception!(
    tidewater,
    RuleError,
    SimulationError,
    "A rule failed while the simulation ran. Attributes of SimulationError, \
     and rule (the rule's name)."
);

/// Add the exception types to the module.
pub fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("TidewaterError", py.get_type::<TidewaterError>())?;
    m.add("InputError", py.get_type::<InputError>())?;
    m.add("SimulationError", py.get_type::<SimulationError>())?;
    m.add("RuleError", py.get_type::<RuleError>())?;
    Ok(())
}

/// Where an input error is, as far as known.
#[derive(Debug, Clone, Default)]
pub struct Place {
    /// The file (script, data file or spec).
    pub file: Option<String>,
    /// 1-based line.
    pub line: Option<usize>,
    /// 1-based column.
    pub column: Option<usize>,
    /// The field the error is about.
    pub field: Option<String>,
}

/// Why a call failed, gathered without the interpreter (the engine runs
/// detached from it) and turned into a Python exception afterwards.
#[derive(Debug)]
pub enum Failure {
    /// A bad input, with where it is.
    Input(String, Place),
    /// A failed simulation.
    Simulation {
        /// The message.
        message: String,
        /// Simulated time, h.
        time_h: Option<f64>,
        /// The pool that would have become negative.
        pool: Option<String>,
        /// The script, when there is one.
        file: Option<String>,
        /// The script line of the last action started before then.
        line: Option<usize>,
    },
    /// A Python exception already made (a rule's).
    Python(PyErr),
}

fn nonzero(n: usize) -> Option<usize> {
    (n > 0).then_some(n)
}

/// The field an engine message names, read from the words the engine's
/// `InputError` puts first (`na = 300 is outside ...`, `weight_kg is
/// required: ...`, `unknown parameter "x"`, a data file's unknown field), after any
/// `word: ` prefix.
pub fn named_field(message: &str) -> Option<String> {
    for (open, close) in [
        ("unknown parameter \"", '"'),
        ("unknown fluid \"", '"'),
        ("unknown field `", '`'),
    ] {
        if let Some(i) = message.find(open) {
            let rest = &message[i + open.len()..];
            return rest.find(close).map(|j| rest[..j].to_string());
        }
    }
    let mut rest = message;
    loop {
        let ident_end = rest
            .find(|c: char| !(c.is_ascii_alphanumeric() || "_.[]".contains(c)))
            .unwrap_or(rest.len());
        let (ident, tail) = rest.split_at(ident_end);
        if !ident.is_empty()
            && [" = ", " is required", " conflicts with "]
                .iter()
                .any(|w| tail.starts_with(w))
        {
            return Some(ident.to_string());
        }
        match rest.find(": ") {
            Some(i) => rest = &rest[i + 2..],
            None => return None,
        }
    }
}

impl Failure {
    /// An engine input error about `file` (when known).
    pub fn input(e: &tidewater::InputError, file: Option<&str>) -> Failure {
        let mut place = Place {
            file: file.map(str::to_string),
            field: Some(e.field().to_string()),
            ..Place::default()
        };
        match e {
            tidewater::InputError::DataFile { file, location, .. } => {
                place.file = Some(file.clone());
                place.field = named_field(&e.to_string());
                if let Some((l, c)) = location {
                    place.line = Some(*l);
                    place.column = Some(*c);
                }
            }
            tidewater::InputError::ObservedCell {
                file,
                line,
                column,
                header,
                ..
            } => {
                place.file = Some(file.clone());
                place.line = Some(*line);
                place.column = Some(*column);
                place.field = Some(header.clone());
            }
            _ => {}
        }
        Failure::Input(e.to_string(), place)
    }

    /// An engine simulation error of the script `file` (when known) at its
    /// `line` (0: none).
    pub fn simulation(e: &tidewater::SimulationError, file: Option<&str>, line: usize) -> Failure {
        use tidewater::SimulationError as E;
        let (time_h, pool) = match e {
            E::Negative {
                time_h, quantity, ..
            } => (Some(*time_h), Some(quantity.clone())),
            E::Solver { time_h, .. } | E::Controller { time_h, .. } => (Some(*time_h), None),
            E::Input(ie) => {
                let mut f = Failure::input(ie, file);
                if let Failure::Input(_, place) = &mut f {
                    place.line = place.line.or(nonzero(line));
                }
                return f;
            }
        };
        Failure::Simulation {
            message: match file {
                Some(f) => format!("{f}: the simulation failed: {e}"),
                None => format!("the simulation failed: {e}"),
            },
            time_h,
            pool,
            file: file.map(str::to_string),
            line: nonzero(line),
        }
    }

    /// A scenario error (script, data file, rule or simulation).
    pub fn scenario(e: ScenarioError) -> Failure {
        let message = e.to_string();
        match e {
            ScenarioError::Read { file, .. } => Failure::Input(
                message,
                Place {
                    file: Some(file),
                    ..Place::default()
                },
            ),
            ScenarioError::Script {
                file,
                line,
                column,
                message: m,
                ..
            } => Failure::Input(
                message,
                Place {
                    file: Some(file),
                    line: nonzero(line),
                    column: nonzero(column),
                    field: named_field(&m),
                },
            ),
            ScenarioError::Data {
                data_file,
                location,
                message: m,
                ..
            } => Failure::Input(
                message,
                Place {
                    file: Some(data_file),
                    line: location.map(|l| l.0),
                    column: location.map(|l| l.1),
                    field: named_field(&m),
                },
            ),
            ScenarioError::Rule {
                file, line, time_h, ..
            } => Failure::Simulation {
                message,
                time_h: Some(time_h),
                pool: None,
                file: Some(file),
                line: nonzero(line),
            },
            ScenarioError::Simulation { file, line, source } => {
                let mut f = Failure::simulation(&source, Some(&file), line);
                match &mut f {
                    Failure::Simulation { message: m, .. } | Failure::Input(m, _) => {
                        m.clone_from(&message)
                    }
                    Failure::Python(_) => {}
                }
                f
            }
        }
    }

    /// A sweep error (the spec, its results or a member's runner).
    pub fn sweep(e: SweepError) -> Failure {
        let field = match &e {
            SweepError::Spec { field, .. } => Some(field.clone()),
            _ => None,
        };
        let message = e.to_string();
        let ie = tidewater::InputError::from(e);
        let mut f = Failure::input(&ie, None);
        if let Failure::Input(m, place) = &mut f {
            *m = message;
            place.field = field.or(place.field.take());
        }
        f
    }

    /// The Python exception.
    pub fn into_pyerr(self, py: Python<'_>) -> PyErr {
        let made = match self {
            Failure::Python(e) => return e,
            Failure::Input(message, place) => {
                let err = InputError::new_err(message);
                let v = err.value(py);
                v.setattr("file", place.file)
                    .and_then(|()| v.setattr("line", place.line))
                    .and_then(|()| v.setattr("column", place.column))
                    .and_then(|()| v.setattr("field", place.field))
                    .map(|()| err)
            }
            Failure::Simulation {
                message,
                time_h,
                pool,
                file,
                line,
            } => {
                let err = SimulationError::new_err(message);
                let v = err.value(py);
                v.setattr("time_h", time_h)
                    .and_then(|()| v.setattr("pool", pool))
                    .and_then(|()| v.setattr("file", file))
                    .and_then(|()| v.setattr("line", line))
                    .map(|()| err)
            }
        };
        made.unwrap_or_else(|e| e)
    }
}

/// A bad value of a keyword argument, as a Python `tidewater.InputError`
/// naming the argument.
pub fn bad_argument(field: &str, message: String) -> Failure {
    Failure::Input(
        message,
        Place {
            field: Some(field.to_string()),
            ..Place::default()
        },
    )
}
