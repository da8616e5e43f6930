//! The source of a run's outputs: the run with its summary and its charts,
//! each made once (the HTML page shows the charts the SVG files hold).

use super::{csv, html, json, svg, Output, Placement};
use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::Result;
use std::path::Path;

/// A finished run with its summary and charts, ready to be written.
pub struct Report {
    /// The run.
    pub input: RunInput,
    /// Its summary.
    pub summary: Summary,
    /// Its charts, rendered once (SVG text).
    pub charts: Vec<svg::Chart>,
}

impl Report {
    /// Summarise the run and draw its charts.
    pub fn new(input: RunInput) -> Result<Self> {
        let summary = Summary::of(&input);
        let charts = svg::charts(&input, &summary)?;
        Ok(Report {
            input,
            summary,
            charts,
        })
    }

    /// Write every output of the run into `dest`, a folder of its own:
    /// staged beside it and swapped in whole, so a failure leaves `dest`
    /// as it was.
    pub fn write(&self, dest: &Path) -> Result<()> {
        super::write(self, &OUTPUTS, dest, Placement::Folder).map(|_| ())
    }
}

/// Every output of a run, in writing order.
pub const OUTPUTS: [&dyn Output<Report>; 4] =
    [&csv::Samples, &json::SummaryJson, &svg::Charts, &html::Page];
