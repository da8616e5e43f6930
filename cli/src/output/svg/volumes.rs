//! Body water by compartment: tissue cells, red cells, brain cells,
//! interstitium and plasma, stacked over time.

use super::frame::{canvas, err, legend, picks, time_axes, x_range, Size};
use super::{BRAIN, CELLS, INTERSTITIUM, PLASMA, RED_CELLS, WIDTH};
use crate::input::RunInput;
use anyhow::Result;
use plotters::prelude::*;

/// A stacked layer: name, colour, volume of the compartment.
type Layer = (&'static str, RGBColor, fn(&tidewater::Observation) -> f64);

/// The chart (SVG text).
pub fn chart(input: &RunInput) -> Result<String> {
    let traj = &input.trajectory;
    let layers: [Layer; 5] = [
        ("Tissue cells", CELLS, |o| o.cells_l),
        ("Red cells", RED_CELLS, |o| o.red_cells_l),
        ("Brain cells", BRAIN, |o| o.brain_l),
        ("Interstitium", INTERSTITIUM, |o| o.interstitium_l),
        ("Plasma", PLASMA, |o| o.plasma_l),
    ];
    let idx = picks(traj.samples.len());
    // Running sums from the bottom layer up.
    let mut stacks: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut below = vec![0.0; idx.len()];
    for (_, _, f) in &layers {
        let layer: Vec<(f64, f64)> = idx
            .iter()
            .zip(below.iter_mut())
            .map(|(&j, b)| {
                *b += f(&traj.samples[j].obs);
                (traj.samples[j].time_h, *b)
            })
            .collect();
        stacks.push(layer);
    }
    let top = below.iter().copied().fold(0.0, f64::max);
    canvas((WIDTH, 460), |root| {
        let mut chart = time_axes(
            root,
            Size::Full,
            &format!("Body water by compartment: {}", input.title),
            x_range(traj),
            0.0..top * 1.08,
            "Water (L), stacked",
        )?;
        // Draw from the top layer down so each lower layer covers the rest.
        for (k, (name, color, _)) in layers.iter().enumerate().rev() {
            let color = *color;
            chart
                .draw_series(AreaSeries::new(
                    stacks[k].iter().copied(),
                    0.0,
                    color.mix(0.85).filled(),
                ))
                .map_err(err)?
                .label(*name)
                .legend(move |(x, y)| {
                    Rectangle::new([(x, y - 6), (x + 22, y + 6)], color.filled())
                });
        }
        legend(&mut chart, SeriesLabelPosition::LowerRight)
    })
}
