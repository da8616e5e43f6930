//! `summary.json`: the run in brief (see [`crate::summary::Summary`]).

use super::{write_file, Exporter, Report};
use anyhow::Result;
use std::path::Path;

/// The JSON writer.
pub struct SummaryJson;

impl Exporter for SummaryJson {
    fn name(&self) -> &'static str {
        "json"
    }

    fn write(&self, report: &Report, dir: &Path) -> Result<()> {
        let mut text = serde_json::to_string_pretty(&report.summary)?;
        text.push('\n');
        write_file(&dir.join("summary.json"), text.as_bytes())
    }
}
