//! Controllers: a protocol's rules, consulted at check times, and the
//! [`Snapshot`] of labs they see.

use super::Action;
use crate::model::Observation;
use serde::Serialize;
use std::sync::Arc;

/// What a [`Controller`] sees at a check.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Snapshot {
    /// Simulated time, h.
    pub time_h: f64,
    /// Labs and flows now.
    pub obs: Observation,
    /// Serum sodium at the start, mmol/L.
    pub na_start: f64,
    /// Change since the start, mmol/L.
    pub na_change_since_start: f64,
    /// Change over the trailing 24 h, mmol/L.
    pub na_change_24h: f64,
    /// Change over the trailing 48 h, mmol/L.
    pub na_change_48h: f64,
    /// Labels of the streams running now (shared: rules read them often).
    pub running: Arc<[String]>,
}

/// A protocol that looks at the labs at check times and may change the
/// inputs (the scenario runtime implements it for script rules).
pub trait Controller {
    /// Called at every check time; returns the actions to take now.
    fn check(&mut self, snapshot: &Snapshot) -> Result<Vec<Action>, String>;
}

/// A controller that never acts.
#[derive(Debug, Clone, Copy, Default)]
pub struct NoController;

impl Controller for NoController {
    fn check(&mut self, _snapshot: &Snapshot) -> Result<Vec<Action>, String> {
        Ok(Vec::new())
    }
}
