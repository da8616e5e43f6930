//! The source of a sweep's outputs: the summary of its result file with
//! the share of members that crossed each rule of the scenario's
//! guideline set. Written beside the result file: `summary.json`
//! (`json.rs`) and the fan and sensitivity charts (`charts.rs`).

pub mod charts;
pub mod json;

use super::{Output, Placement};
use anyhow::{bail, Context, Result};
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

    /// Write every output beside the result file `results` (each file
    /// whole or not at all), with the result file's permissions. Returns
    /// the path of `summary.json`.
    pub fn write(&self, results: &Path) -> Result<PathBuf> {
        let dir = match results.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        let written = super::write(self, &OUTPUTS, dir, Placement::Beside)?;
        // Each file is written through a temporary file, which is created
        // owner-only (0600 on unix); the result file, written plainly,
        // follows the umask (0644 under the usual 022). The summary and
        // charts take the result file's mode, so that whoever may read
        // the rows may read their summary too.
        let mode = std::fs::metadata(results)
            .with_context(|| format!("reading {}", results.display()))?
            .permissions();
        for path in &written {
            std::fs::set_permissions(path, mode.clone())
                .with_context(|| format!("setting the permissions of {}", path.display()))?;
        }
        Ok(dir.join(json::FILE_NAME))
    }
}
