//! Cumulative intake and output of water (L) and of sodium (mmol), with
//! their difference, two panels.

use super::frame::{panel, series, two_panels, Line};
use super::{INTAKE, NET, OUTPUT};
use crate::input::RunInput;
use anyhow::Result;
use plotters::prelude::SeriesLabelPosition;
use tidewater::Species;

/// The chart (SVG text).
pub fn chart(input: &RunInput) -> Result<String> {
    let traj = &input.trajectory;
    let lines = |sp: Species, scale: f64, unit: &str| {
        vec![
            Line {
                name: format!("Cumulative intake ({unit})"),
                color: INTAKE,
                width: 2,
                points: series(traj, |s| sp.cumulative_in(&s.y) * scale),
            },
            Line {
                name: format!("Cumulative output ({unit})"),
                color: OUTPUT,
                width: 2,
                points: series(traj, |s| sp.cumulative_out(&s.y) * scale),
            },
            Line {
                name: format!("Net (intake − output, {unit})"),
                color: NET,
                width: 1,
                points: series(traj, |s| {
                    (sp.cumulative_in(&s.y) - sp.cumulative_out(&s.y)) * scale
                }),
            },
        ]
    };
    two_panels(
        &format!("Cumulative intake and output: {}", input.title),
        |top, bottom| {
            panel(
                top,
                traj,
                "Water",
                "Water (L)",
                lines(Species::Water, 1.0, "L"),
                true,
                SeriesLabelPosition::UpperLeft,
            )?;
            panel(
                bottom,
                traj,
                "Sodium",
                "Sodium (mmol)",
                lines(Species::Sodium, 1.0, "mmol"),
                true,
                SeriesLabelPosition::UpperLeft,
            )
        },
    )
}
