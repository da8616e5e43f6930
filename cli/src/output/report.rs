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
    /// The fit to observed labs, when the run has them, with its chart.
    pub fit: Option<(super::fit::FitReport, String)>,
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
            fit: None,
        })
    }

    /// Add the fit to observed labs (its section in the page, its files
    /// beside the run's).
    pub fn with_fit(mut self, fit: super::fit::FitReport) -> Result<Self> {
        let svg = fit.chart()?;
        self.fit = Some((fit, svg));
        Ok(self)
    }

    /// Write every output of the run into `dest`, a folder of its own:
    /// staged beside it and swapped in whole, so a failure leaves `dest`
    /// as it was.
    pub fn write(&self, dest: &Path) -> Result<()> {
        let mut outputs: Vec<&dyn Output<Report>> = OUTPUTS.to_vec();
        if self.fit.is_some() {
            outputs.push(&FitFiles);
        }
        super::write(self, &outputs, dest, Placement::Folder).map(|_| ())
    }
}

/// The fit's files beside a run's: `forecast.csv`, `fit.json`,
/// `forecast.svg`.
struct FitFiles;

impl Output<Report> for FitFiles {
    fn format(&self) -> &'static str {
        "fit"
    }

    fn files(&self, report: &Report) -> Result<Vec<super::OutputFile>> {
        let Some((fit, svg)) = &report.fit else {
            return Ok(Vec::new());
        };
        let mut files = super::fit::ForecastCsv.files(fit)?;
        files.extend(super::fit::FitJson.files(fit)?);
        files.push(self.file("forecast.svg", svg.as_str()));
        Ok(files)
    }
}

/// Every output of a run, in writing order.
pub const OUTPUTS: [&dyn Output<Report>; 4] =
    [&csv::Samples, &json::SummaryJson, &svg::Charts, &html::Page];
