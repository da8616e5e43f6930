//! `summary.json`: the run in brief (see [`crate::summary::Summary`]).

use super::report::Report;
use super::{Output, OutputFile};
use anyhow::Result;

/// The JSON writer.
pub struct SummaryJson;

impl Output<Report> for SummaryJson {
    fn format(&self) -> &'static str {
        "json"
    }

    fn files(&self, report: &Report) -> Result<Vec<OutputFile>> {
        let mut text = serde_json::to_string_pretty(&report.summary)?;
        text.push('\n');
        Ok(vec![self.file("summary.json", text)])
    }
}
