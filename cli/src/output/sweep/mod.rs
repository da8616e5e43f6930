//! The source of a sweep's outputs: the summary of its result file with
//! the share of members that crossed each rule of the scenario's
//! guideline set. Written beside the result file: `summary.json`
//! (`json.rs`) and the fan and sensitivity charts (`charts.rs`).

pub mod charts;
pub mod json;

use super::{Output, Placement};
use anyhow::{bail, Result};
use std::path::{Path, PathBuf};
use tidewater::limits::{LimitChoice, Rule};
use tidewater::sweep::{Summary, SweepSpec};

/// The share of members that crossed one rule.
#[derive(Debug, Clone)]
pub struct RuleShare {
    /// The rule's number in its set (1-based).
    pub number: usize,
    /// The rule.
    pub rule: Rule,
    /// Share of members that crossed it (0 when none did).
    pub probability: f64,
}

/// A sweep's result file in brief.
#[derive(Debug, Clone)]
pub struct SweepReport {
    /// Percentiles, shares and sensitivities.
    pub summary: Summary,
    /// The guideline set whose rules the rows count.
    pub limits: LimitChoice,
    /// Every rule of the set, with the share of members that crossed it.
    pub by_rule: Vec<RuleShare>,
    /// The varied parameters' names, in the spec's order.
    pub parameters: Vec<String>,
}

/// Every output of a sweep, in writing order.
pub const OUTPUTS: [&dyn Output<SweepReport>; 2] = [&json::SweepJson, &charts::SweepCharts];

impl SweepReport {
    /// Summarise the result file `results` of `spec`, whose rows count the
    /// rules of `limits`.
    pub fn read(spec: &SweepSpec, results: &Path, limits: &LimitChoice) -> Result<SweepReport> {
        let summary = Summary::from_file(spec, results)?;
        let by_rule: Vec<RuleShare> = limits
            .rules()
            .iter()
            .enumerate()
            .map(|(i, r)| RuleShare {
                number: i + 1,
                rule: r.clone(),
                probability: summary.p_by_rule.get(&(i + 1)).copied().unwrap_or(0.0),
            })
            .collect();
        if let Some(k) = summary
            .p_by_rule
            .keys()
            .find(|k| **k == 0 || **k > by_rule.len())
        {
            bail!(
                "{}: column limits_crossed names rule {k}, but {} has {} rules: was the file written for another scenario?",
                results.display(),
                limits.guideline.id,
                by_rule.len()
            );
        }
        Ok(SweepReport {
            summary,
            limits: limits.clone(),
            by_rule,
            parameters: spec.parameters.iter().map(|p| p.name.clone()).collect(),
        })
    }

    /// Write every output into `dir`, beside the result file (each file
    /// whole or not at all). Returns the path of `summary.json`.
    pub fn write(&self, dir: &Path) -> Result<PathBuf> {
        super::write(self, &OUTPUTS, dir, Placement::Beside)?;
        Ok(dir.join(json::FILE_NAME))
    }
}
