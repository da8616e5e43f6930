//! The charts of a comparison: one line per scenario on shared axes.

use super::Member;
use crate::output::svg::frame::{canvas, err, legend, legend_place, padded, time_axes, Area, Size};
use crate::output::svg::{Chart, FONT, INK, WIDTH};
use anyhow::Result;
use plotters::prelude::*;

/// One colour per scenario, told apart in print and by most colour-blind
/// readers (a qualitative set of our own: blue, orange, green, purple,
/// brown, teal, grey, red).
const PALETTE: [RGBColor; super::MAX_SCENARIOS] = [
    RGBColor(31, 92, 153),
    RGBColor(214, 120, 20),
    RGBColor(46, 139, 87),
    RGBColor(128, 82, 160),
    RGBColor(140, 96, 60),
    RGBColor(24, 150, 160),
    RGBColor(100, 100, 108),
    RGBColor(190, 50, 60),
];

/// A scenario's values over time.
type Extract = fn(&tidewater::Observation) -> f64;

fn lines(members: &[Member], f: Extract) -> Vec<Vec<(f64, f64)>> {
    members
        .iter()
        .map(|m| {
            m.input
                .trajectory
                .samples
                .iter()
                .map(|s| (s.time_h, f(&s.obs)))
                .collect()
        })
        .collect()
}

/// One panel of every scenario's line of one quantity.
fn panel(
    area: &Area<'_>,
    size: Size,
    members: &[Member],
    caption: &str,
    y_desc: &str,
    f: Extract,
    min_span: f64,
) -> Result<()> {
    let data = lines(members, f);
    let end = data
        .iter()
        .filter_map(|l| l.last().map(|p| p.0))
        .fold(0.0, f64::max);
    let (lo, hi) = data
        .iter()
        .flatten()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.1), b.max(p.1))
        });
    let x = 0.0..end.max(1e-3);
    let y = padded(lo, hi, 0.08, min_span);
    let longest = members
        .iter()
        .map(|m| m.input.name.chars().count())
        .max()
        .unwrap_or(0);
    let shares = (
        ((40 + 7 * longest) as f64 / 820.0).min(0.6),
        ((12 + 20 * members.len()) as f64 / 260.0).min(0.7),
    );
    let refs: Vec<&[(f64, f64)]> = data.iter().map(Vec::as_slice).collect();
    let (corner, y) = legend_place(&refs, &x, y, shares, SeriesLabelPosition::LowerRight);
    let mut chart = time_axes(area, size, caption, x.clone(), y.clone(), y_desc)?;
    for (k, (points, m)) in data.iter().zip(members).enumerate() {
        let color = PALETTE[k];
        chart
            .draw_series(LineSeries::new(
                points.iter().copied(),
                color.stroke_width(2),
            ))
            .map_err(err)?
            .label(m.input.name.clone())
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 22, y)], color.stroke_width(2))
            });
    }
    legend(&mut chart, corner)
}

/// Serum sodium, the brain-cell volume index, and the water inside and
/// outside cells, each scenario in its colour.
pub fn charts(members: &[Member]) -> Result<Vec<Chart>> {
    let sodium = canvas((WIDTH, 440), |root| {
        panel(
            root,
            Size::Full,
            members,
            "Serum sodium, scenarios side by side",
            "Serum sodium (mmol/L)",
            |o| o.na_mmol_l,
            6.0,
        )
    })?;
    let brain = canvas((WIDTH, 380), |root| {
        panel(
            root,
            Size::Panel,
            members,
            "Brain-cell volume index (a model index, not a diagnosis)",
            "Brain-cell volume / normal",
            |o| o.brain_volume_index,
            0.02,
        )
    })?;
    let water = canvas((WIDTH, 640), |root| {
        let root = root
            .titled(
                "Body water inside and outside cells",
                (FONT, 18).into_font().color(&INK),
            )
            .map_err(err)?;
        let areas = root.split_evenly((2, 1));
        panel(
            &areas[0],
            Size::Panel,
            members,
            "Inside cells (tissue, red and brain cells)",
            "Water (L)",
            |o| o.cells_l + o.red_cells_l + o.brain_l,
            0.2,
        )?;
        panel(
            &areas[1],
            Size::Panel,
            members,
            "Outside cells (interstitium and plasma)",
            "Water (L)",
            |o| o.interstitium_l + o.plasma_l,
            0.2,
        )
    })?;
    Ok(vec![
        Chart {
            file_name: "sodium.svg",
            title: "Serum sodium".into(),
            svg: sodium,
        },
        Chart {
            file_name: "brain.svg",
            title: "Brain-cell volume index (a model index, not a diagnosis)".into(),
            svg: brain,
        },
        Chart {
            file_name: "volumes.svg",
            title: "Body water inside and outside cells".into(),
            svg: water,
        },
    ])
}
