//! Actions: what changes the inputs or the model at a moment.

use super::Stream;
use serde::Serialize;

/// Something that changes the inputs at a moment.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum Action {
    /// Start a stream now.
    Start(Stream),
    /// Stop every running stream with this label.
    Stop(String),
    /// Stop every running stream.
    StopAll,
    /// Change a parameter from now on (only those the model reads as it
    /// runs or recalibrates: `crate::model::check_change`).
    SetParam {
        /// Parameter name.
        name: String,
        /// New value, in the parameter's unit.
        value: f64,
    },
    /// The patient's cause goes away from now on
    /// ([`crate::model::Model::with_cause_resolved`]).
    ResolveCause,
}

impl Action {
    /// Whether the action changes the model rather than the inputs.
    pub fn changes_the_model(&self) -> bool {
        matches!(self, Action::SetParam { .. } | Action::ResolveCause)
    }
}
