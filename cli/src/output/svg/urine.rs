//! Urine flow (mL/h) and urine osmolality (mOsm/kg), two panels.

use super::frame::{panel, series, two_panels, Line};
use super::{URINE_FLOW, URINE_OSM};
use crate::input::RunInput;
use anyhow::Result;
use plotters::prelude::SeriesLabelPosition;

/// The chart (SVG text).
pub fn chart(input: &RunInput) -> Result<String> {
    let traj = &input.trajectory;
    two_panels(&format!("Urine: {}", input.title), |top, bottom| {
        panel(
            top,
            traj,
            "Urine flow",
            "Urine flow (mL/h)",
            vec![Line {
                name: "Urine flow".into(),
                color: URINE_FLOW,
                width: 2,
                points: series(traj, |s| s.obs.urine_ml_h),
            }],
            true,
            SeriesLabelPosition::UpperRight,
        )?;
        panel(
            bottom,
            traj,
            "Urine osmolality",
            "Urine osmolality (mOsm/kg)",
            vec![Line {
                name: "Urine osmolality".into(),
                color: URINE_OSM,
                width: 2,
                points: series(traj, |s| s.obs.urine_osm_mosm_kg),
            }],
            true,
            SeriesLabelPosition::UpperRight,
        )
    })
}
