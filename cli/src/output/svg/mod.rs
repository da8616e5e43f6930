//! SVG charts of a run (plotters, no fonts needed: the viewer renders the
//! text), one module per chart: serum sodium with the guideline corridor
//! and flags (`sodium.rs`), stacked compartment volumes (`volumes.rs`),
//! the brain-cell volume index (`brain.rs`),
//! urine flow and osmolality (`urine.rs`), cumulative intake and output
//! (`balance.rs`). `frame.rs` holds what they share: the canvas with its
//! caution line, the time axis, panels and legends. The charts of a sweep
//! are in `output/sweep/charts.rs`.

pub mod balance;
pub mod brain;
pub mod frame;
pub mod sodium;
pub mod urine;
pub mod volumes;

use super::report::Report;
use super::{Output, OutputFile};
use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::Result;
use plotters::style::RGBColor;

/// One rendered chart.
#[derive(Debug, Clone)]
pub struct Chart {
    /// File name in the report folder.
    pub file_name: &'static str,
    /// Caption, for the HTML page.
    pub title: String,
    /// The SVG document.
    pub svg: String,
}

/// The SVG output of a run: its charts, drawn once by [`Report::new`].
pub struct Charts;

impl Output<Report> for Charts {
    fn format(&self) -> &'static str {
        "svg"
    }

    fn files(&self, report: &Report) -> Result<Vec<OutputFile>> {
        Ok(report
            .charts
            .iter()
            .map(|c| self.file(c.file_name, c.svg.as_str()))
            .collect())
    }
}

// Tidewater's palette.
pub(crate) const INK: RGBColor = RGBColor(36, 41, 51);
const GRID: RGBColor = RGBColor(222, 226, 230);
const GRID_DARK: RGBColor = RGBColor(150, 156, 164);
pub(crate) const SODIUM: RGBColor = RGBColor(22, 84, 128);
const CEILING: RGBColor = RGBColor(189, 62, 48);
pub(crate) const PERMITTED: RGBColor = RGBColor(126, 184, 166);
pub(crate) const FLAG: RGBColor = RGBColor(222, 137, 18);
const GOAL: RGBColor = RGBColor(38, 118, 74);
const CELLS: RGBColor = RGBColor(94, 114, 128);
const RED_CELLS: RGBColor = RGBColor(176, 58, 62);
const BRAIN: RGBColor = RGBColor(158, 132, 194);
const INTERSTITIUM: RGBColor = RGBColor(112, 172, 150);
const PLASMA: RGBColor = RGBColor(238, 190, 86);
const URINE_FLOW: RGBColor = RGBColor(176, 134, 20);
const URINE_OSM: RGBColor = RGBColor(88, 62, 138);
const INTAKE: RGBColor = RGBColor(38, 118, 92);
const OUTPUT: RGBColor = RGBColor(198, 92, 44);
const NET: RGBColor = RGBColor(110, 110, 120);
pub(crate) const FORMULA: RGBColor = RGBColor(72, 60, 50);

/// Width of a run's charts, px.
pub(crate) const WIDTH: u32 = 920;
pub(crate) const FONT: &str = "sans-serif";

/// Draw every chart of a run.
pub fn charts(input: &RunInput, summary: &Summary) -> Result<Vec<Chart>> {
    if input.trajectory.samples.len() < 2 {
        anyhow::bail!("the run has fewer than two samples: nothing to chart");
    }
    Ok(vec![
        Chart {
            file_name: "sodium.svg",
            title: "Serum sodium and the guideline corridor".into(),
            svg: sodium::chart(input, summary)?,
        },
        Chart {
            file_name: "volumes.svg",
            title: "Body water by compartment".into(),
            svg: volumes::chart(input)?,
        },
        Chart {
            file_name: "brain.svg",
            title: "Brain-cell volume index (a model index, not a diagnosis)".into(),
            svg: brain::chart(input)?,
        },
        Chart {
            file_name: "urine.svg",
            title: "Urine flow and osmolality".into(),
            svg: urine::chart(input)?,
        },
        Chart {
            file_name: "intake_output.svg",
            title: "Cumulative intake and output".into(),
            svg: balance::chart(input)?,
        },
    ])
}
