//! The brain-cell volume index (brain-cell water over its normal volume)
//! over time, with the normal (1): what
//! swells in acute hyponatremia and shrinks when a chronic one is corrected
//! too fast, and what no bedside formula gives. A model index, not a
//! diagnosis.

use super::frame::{canvas, panel, series, Line};
use super::{BRAIN, GRID_DARK, WIDTH};
use crate::input::RunInput;
use anyhow::Result;
use plotters::prelude::SeriesLabelPosition;

/// The chart (SVG text).
pub fn chart(input: &RunInput) -> Result<String> {
    let traj = &input.trajectory;
    let (t0, t1) = (
        traj.samples[0].time_h,
        traj.samples[traj.samples.len() - 1].time_h,
    );
    canvas((WIDTH, 380), |root| {
        panel(
            root,
            traj,
            &format!(
                "Brain-cell volume index (a model index, not a diagnosis): {}",
                input.title
            ),
            "Brain-cell volume / normal",
            vec![
                Line {
                    name: "Normal brain-cell volume (1)".into(),
                    color: GRID_DARK,
                    width: 1,
                    points: vec![(t0, 1.0), (t1, 1.0)],
                },
                Line {
                    name: "Brain-cell volume index".into(),
                    color: BRAIN,
                    width: 2,
                    points: series(traj, |s| s.obs.brain_volume_index),
                },
            ],
            false,
            SeriesLabelPosition::LowerRight,
        )
    })
}
