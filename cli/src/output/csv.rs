//! `samples.csv`: one row per sample, units in the column names, numbers
//! with fixed significant digits.

use super::report::Report;
use super::{Output, OutputFile};
use anyhow::Result;

pub use tidewater_cli::samples::{line, values, COLUMNS, DIGITS};

/// The CSV writer.
pub struct Samples;

/// The CSV text of a run.
pub fn render(report: &Report) -> String {
    let traj = &report.input.trajectory;
    let mut out = String::with_capacity(traj.samples.len() * 200);
    out.push_str(&COLUMNS.join(","));
    out.push('\n');
    for row in values(traj) {
        out.push_str(&line(&row));
    }
    out
}

impl Output<Report> for Samples {
    fn format(&self) -> &'static str {
        "csv"
    }

    fn files(&self, report: &Report) -> Result<Vec<OutputFile>> {
        Ok(vec![self.file("samples.csv", render(report))])
    }
}
