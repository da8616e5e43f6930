//! `tidewater compare`: several scenarios laid side by side (an educator's
//! acute against chronic, a clinician's plan A against plan B): serum
//! sodium, the brain-cell volume index and the body's water on shared
//! axes, and a table of their headline figures, in one folder
//! (`report.html`, `summary.json`, three SVG charts).

mod charts;
mod page;

use super::{Output, OutputFile, Placement};
use crate::format::round_sig;
use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::Result;
use serde::Serialize;
use std::path::Path;

/// Most scenarios one comparison holds: beyond eight the lines of a chart
/// can no longer be told apart.
pub const MAX_SCENARIOS: usize = 8;

/// Refuse a comparison of fewer than 2 or more than [`MAX_SCENARIOS`]
/// scenarios (checked before any is run, and again by [`Comparison::new`]).
pub fn check_count(n: usize) -> Result<()> {
    if !(2..=MAX_SCENARIOS).contains(&n) {
        anyhow::bail!(
            "compare takes 2 to {MAX_SCENARIOS} scenarios ({n} given): beyond {MAX_SCENARIOS} the lines of a chart can no longer be told apart"
        );
    }
    Ok(())
}

/// One scenario of a comparison: its run and its summary.
pub struct Member {
    /// The run.
    pub input: RunInput,
    /// Its summary (as `tidewater run` writes it).
    pub summary: Summary,
}

/// Scenarios side by side, with their charts drawn once.
pub struct Comparison {
    /// The scenarios, in the order given.
    pub members: Vec<Member>,
    /// Charts on shared axes.
    pub charts: Vec<super::svg::Chart>,
}

/// The headline figures of one scenario, as the table and
/// `summary.json` give them.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Headline {
    /// Scenario (the script's name).
    pub scenario: String,
    /// Its title.
    pub title: String,
    /// Serum sodium at the start, mmol/L.
    pub na_start_mmol_l: f64,
    /// At the end, mmol/L.
    pub na_end_mmol_l: f64,
    /// Lowest, mmol/L.
    pub na_min_mmol_l: f64,
    /// Highest, mmol/L.
    pub na_max_mmol_l: f64,
    /// Largest rise in any 24 h, mmol/L.
    pub largest_rise_24h_mmol_l: f64,
    /// Largest rise in any 48 h, mmol/L.
    pub largest_rise_48h_mmol_l: f64,
    /// Lowest brain-cell volume index.
    pub brain_index_min: f64,
    /// Highest brain-cell volume index.
    pub brain_index_max: f64,
    /// Guideline limits crossed.
    pub limits_crossed: usize,
    /// Volume given by vein and by mouth, the habitual intake left out, mL.
    pub given_ml: f64,
    /// Sodium given, the habitual intake left out, mmol.
    pub na_given_mmol: f64,
    /// Urine passed over the run, mL.
    pub urine_ml: f64,
    /// Length of the run, h.
    pub duration_h: f64,
}

impl Headline {
    fn of(m: &Member) -> Self {
        let s = &m.summary;
        let given = s.given.iter().filter(|g| g.stream != "habitual");
        let traj = &m.input.trajectory;
        // The ledger's cumulative urine (exact to the solver's tolerance).
        let urine = |y: &[f64]| y[tidewater::StateSlot::UrineL as usize];
        let urine_ml = (urine(&traj.last().y) - urine(&traj.samples[0].y)) * 1000.0;
        Headline {
            scenario: m.input.name.clone(),
            title: m.input.title.clone(),
            na_start_mmol_l: s.sodium.start.mmol_l,
            na_end_mmol_l: s.sodium.end.mmol_l,
            na_min_mmol_l: s.sodium.min.mmol_l,
            na_max_mmol_l: s.sodium.max.mmol_l,
            largest_rise_24h_mmol_l: s.sodium.largest_rise_24h.mmol_l,
            largest_rise_48h_mmol_l: s.sodium.largest_rise_48h.mmol_l,
            brain_index_min: s.brain_volume_index.min,
            brain_index_max: s.brain_volume_index.max,
            limits_crossed: s.flags.iter().filter(|f| f.severity == "limit").count(),
            given_ml: round_sig(given.clone().map(|g| g.volume_in_ml).sum(), 7),
            na_given_mmol: round_sig(given.map(|g| g.na_in_mmol).sum(), 7),
            urine_ml: round_sig(urine_ml, 7),
            duration_h: s.duration_h,
        }
    }
}

impl Comparison {
    /// Summarise each run and draw the shared charts.
    pub fn new(inputs: Vec<RunInput>) -> Result<Self> {
        check_count(inputs.len())?;
        let members: Vec<Member> = inputs
            .into_iter()
            .map(|input| Member {
                summary: Summary::of(&input),
                input,
            })
            .collect();
        let charts = charts::charts(&members)?;
        Ok(Comparison { members, charts })
    }

    /// The headline figures of every scenario.
    pub fn headlines(&self) -> Vec<Headline> {
        self.members.iter().map(Headline::of).collect()
    }

    /// Write the comparison's folder (staged and swapped in whole).
    pub fn write(&self, dest: &Path) -> Result<()> {
        super::write(self, &[&Files], dest, Placement::Folder).map(|_| ())
    }
}

struct Files;

impl Output<Comparison> for Files {
    fn format(&self) -> &'static str {
        "comparison"
    }

    fn files(&self, c: &Comparison) -> Result<Vec<OutputFile>> {
        let summary = serde_json::json!({
            "caution": tidewater::CAUTION,
            "scenarios": c.headlines(),
        });
        let mut files = vec![
            self.file("report.html", page::render(c)),
            self.file(
                "summary.json",
                serde_json::to_string_pretty(&summary)? + "\n",
            ),
        ];
        for chart in &c.charts {
            files.push(self.file(chart.file_name, chart.svg.as_str()));
        }
        Ok(files)
    }
}
