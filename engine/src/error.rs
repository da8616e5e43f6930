//! Error types of the engine. Every error names what was wrong: the field,
//! the file and line where known, or the simulated time and compartment.

use thiserror::Error;

/// A bad value in a patient description, a parameter or a data file.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum InputError {
    /// A numeric field outside its admissible range.
    #[error("{field} = {} is outside the admissible range {min}..={max} {unit}", crate::numeric::show(*.value))]
    OutOfRange {
        /// Name of the field.
        field: String,
        /// Value given.
        value: f64,
        /// Smallest admissible value.
        min: f64,
        /// Largest admissible value.
        max: f64,
        /// Unit of the field.
        unit: String,
    },
    /// A field that must be given is missing.
    #[error("{field} is required: {why}")]
    Missing {
        /// Name of the field.
        field: String,
        /// Why it is needed.
        why: String,
    },
    /// A word that is not one of the accepted ones.
    #[error("{field} = \"{value}\" is not one of: {expected}")]
    BadChoice {
        /// Name of the field.
        field: String,
        /// Value given.
        value: String,
        /// The accepted values.
        expected: String,
    },
    /// Two fields that cannot be given together.
    #[error("{field} conflicts with {other}: {why}")]
    Conflict {
        /// First field.
        field: String,
        /// Second field.
        other: String,
        /// Why.
        why: String,
    },
    /// A parameter name that does not exist.
    #[error("unknown parameter \"{name}\"{}", suggestion.as_ref().map(|s| format!(" (did you mean \"{s}\"?)")).unwrap_or_default())]
    UnknownParameter {
        /// Name given.
        name: String,
        /// Closest known name.
        suggestion: Option<String>,
    },
    /// A fluid name that does not exist.
    #[error("unknown fluid \"{name}\"{}", suggestion.as_ref().map(|s| format!(" (did you mean \"{s}\"?)")).unwrap_or_default())]
    UnknownFluid {
        /// Name given.
        name: String,
        /// Closest known name.
        suggestion: Option<String>,
    },
    /// A data file (YAML) that could not be read or parsed.
    #[error("{file}{}: {message}", location.map(|(l, c)| format!(":{l}:{c}")).unwrap_or_default())]
    DataFile {
        /// File name.
        file: String,
        /// Line and column (1-based) where known.
        location: Option<(usize, usize)>,
        /// What is wrong.
        message: String,
    },
    /// A bad cell (or header) of an observed-labs file.
    #[error("{file}:{line}:{column} ({header}): {message}")]
    ObservedCell {
        /// File name.
        file: String,
        /// Line (1-based) in the file.
        line: usize,
        /// Column (1-based) in the row.
        column: usize,
        /// The column's header name (or the cell itself, in the header).
        header: String,
        /// What is wrong and what was expected.
        message: String,
    },
}

impl InputError {
    /// The field (or file) the error is about.
    pub fn field(&self) -> &str {
        match self {
            InputError::OutOfRange { field, .. }
            | InputError::Missing { field, .. }
            | InputError::BadChoice { field, .. }
            | InputError::Conflict { field, .. } => field,
            InputError::UnknownParameter { name, .. } | InputError::UnknownFluid { name, .. } => {
                name
            }
            InputError::DataFile { file, .. } | InputError::ObservedCell { file, .. } => file,
        }
    }
}

/// A failure while integrating the model.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SimulationError {
    /// A state would become negative (for example a compartment emptied by
    /// a loss larger than it holds).
    #[error("at t = {time_h:.3} h the {quantity} would become negative ({value:.4e})")]
    Negative {
        /// Simulated time in hours.
        time_h: f64,
        /// Which compartment or pool.
        quantity: String,
        /// The offending value.
        value: f64,
    },
    /// The ODE solver failed.
    #[error("the solver failed at t = {time_h:.3} h: {message}")]
    Solver {
        /// Simulated time in hours.
        time_h: f64,
        /// Solver message.
        message: String,
    },
    /// A controller (scenario rule) failed.
    #[error("rule failed at t = {time_h:.3} h: {message}")]
    Controller {
        /// Simulated time in hours.
        time_h: f64,
        /// What the controller reported.
        message: String,
    },
    /// The plan itself is inconsistent.
    #[error(transparent)]
    Input(#[from] InputError),
}
