//! SVG charts (plotters, no fonts needed: the viewer renders the text):
//! serum sodium with the guideline corridor and flags, stacked compartment
//! volumes, urine flow and osmolality, cumulative intake and output.

use super::{write_file, Exporter, Report};
use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::{anyhow, Result};
use plotters::prelude::*;
use std::path::Path;
use tidewater::limits::{Direction, Severity};
use tidewater::{Species, Trajectory};

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

/// The SVG writer.
pub struct Charts;

impl Exporter for Charts {
    fn name(&self) -> &'static str {
        "svg"
    }

    fn write(&self, report: &Report, dir: &Path) -> Result<()> {
        for c in &report.charts {
            write_file(&dir.join(c.file_name), c.svg.as_bytes())?;
        }
        Ok(())
    }
}

// Tidewater's palette.
const INK: RGBColor = RGBColor(36, 41, 51);
const GRID: RGBColor = RGBColor(222, 226, 230);
const SODIUM: RGBColor = RGBColor(22, 84, 128);
const CEILING: RGBColor = RGBColor(189, 62, 48);
const PERMITTED: RGBColor = RGBColor(126, 184, 166);
const FLAG: RGBColor = RGBColor(222, 137, 18);
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

const WIDTH: u32 = 920;
const FONT: &str = "sans-serif";
const MAX_POINTS: usize = 1200;

/// Height of the caution line under every chart, px.
const CAUTION_PX: u32 = 18;

/// Write the short caution along the bottom of a chart and return the
/// area above it, for the chart itself: a chart copied out of its report
/// still says what it is.
pub fn caution_footer<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
) -> Result<DrawingArea<DB, plotters::coord::Shift>> {
    let (_, height) = root.dim_in_pixel();
    let (chart, foot) = root.split_vertically(height.saturating_sub(CAUTION_PX));
    foot.draw(&Text::new(
        format!("Caution: {}", tidewater::CAUTION_SHORT),
        (10, 2),
        (FONT, 11).into_font().color(&RGBColor(96, 100, 108)),
    ))
    .map_err(err)?;
    Ok(chart)
}

fn err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow!("drawing a chart: {e:?}")
}

/// Indices of the samples to draw (every k-th, always the last).
fn picks(n: usize) -> Vec<usize> {
    let stride = n.div_ceil(MAX_POINTS).max(1);
    let mut idx: Vec<usize> = (0..n).step_by(stride).collect();
    if n > 0 && idx.last() != Some(&(n - 1)) {
        idx.push(n - 1);
    }
    idx
}

fn series(traj: &Trajectory, f: impl Fn(&tidewater::Sample) -> f64) -> Vec<(f64, f64)> {
    picks(traj.samples.len())
        .into_iter()
        .map(|j| (traj.samples[j].time_h, f(&traj.samples[j])))
        .collect()
}

fn x_range(traj: &Trajectory) -> std::ops::Range<f64> {
    let t0 = traj.samples[0].time_h;
    let t1 = traj.last().time_h.max(t0 + 1e-6);
    t0..t1 + (t1 - t0) * 0.01
}

fn hour_ticks(x: &f64) -> String {
    crate::format::sig(*x, 3)
}

fn padded(lo: f64, hi: f64, pad_fraction: f64, min_span: f64) -> std::ops::Range<f64> {
    let span = (hi - lo).max(min_span);
    let mid = 0.5 * (hi + lo);
    let half = 0.5 * span * (1.0 + 2.0 * pad_fraction);
    (mid - half)..(mid + half)
}

fn value_at(times: &[f64], values: &[f64], t: f64) -> f64 {
    if t <= times[0] {
        return values[0];
    }
    let j = times.partition_point(|&x| x < t).min(times.len() - 1);
    let (t0, t1, v0, v1) = (times[j - 1], times[j], values[j - 1], values[j]);
    if !v0.is_finite() || !v1.is_finite() || t1 <= t0 {
        return v1;
    }
    v0 + (v1 - v0) * (t - t0) / (t1 - t0)
}

/// Highest (for rises) or lowest (for falls) serum sodium the guideline
/// limits allow at each sample time, for a course that moves steadily in
/// one direction from the start: `c(t) = min over rules of
/// c(max(from, t − window)) + max_change`. Infinite where no rule applies.
pub fn corridor(traj: &Trajectory, direction: Direction) -> Vec<f64> {
    let times = traj.times();
    let na0 = traj.samples[0].obs.na_mmol_l;
    let rules: Vec<_> = traj
        .limits
        .rules()
        .iter()
        .filter(|r| r.direction == direction && r.severity == Severity::Limit)
        .collect();
    let mut c = vec![0.0; times.len()];
    for j in 0..times.len() {
        let t = times[j];
        if j == 0 {
            c[0] = 0.0;
            continue;
        }
        let mut best = f64::INFINITY;
        for r in &rules {
            if t <= r.from_h + 1e-9 || r.to_h.is_some_and(|end| t > end + 1e-9) {
                continue;
            }
            let from = r.from_h.max(t - r.window_h);
            let base = if from >= times[j - 1] {
                c[j - 1]
            } else {
                value_at(&times[..j], &c[..j], from)
            };
            best = best.min(base + r.max_mmol_l);
        }
        c[j] = best;
    }
    let sign = match direction {
        Direction::Rise => 1.0,
        Direction::Fall => -1.0,
    };
    c.iter().map(|x| na0 + sign * x).collect()
}

fn sodium_chart(input: &RunInput, summary: &Summary) -> Result<String> {
    let traj = &input.trajectory;
    let na: Vec<(f64, f64)> = series(traj, |s| s.obs.na_mmol_l);
    let na0 = summary.sodium.start.mmol_l;
    let rises = summary.sodium.max.mmol_l - na0 >= na0 - summary.sodium.min.mmol_l;
    let direction = if rises {
        Direction::Rise
    } else {
        Direction::Fall
    };
    let bound = corridor(traj, direction);
    let times = traj.times();
    let (mut lo, mut hi) = (summary.sodium.min.mmol_l, summary.sodium.max.mmol_l);
    let finite_bound: Vec<f64> = bound.iter().copied().filter(|b| b.is_finite()).collect();
    let reach = 25.0;
    for b in &finite_bound {
        if rises && *b <= hi + reach {
            hi = hi.max(*b);
        }
        if !rises && *b >= lo - reach {
            lo = lo.min(*b);
        }
    }
    let y = padded(lo, hi, 0.08, 6.0);
    let x = x_range(traj);

    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (WIDTH, 460)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let root = caution_footer(&root)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(
                format!("Serum sodium: {}", input.title),
                (FONT, 18).into_font().color(&INK),
            )
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(x.clone(), y.clone())
            .map_err(err)?;
        chart
            .configure_mesh()
            .x_desc("Time since start (h)")
            .y_desc("Serum sodium (mmol/L)")
            .x_label_formatter(&hour_ticks)
            .y_label_formatter(&|v| crate::format::fixed(*v, 0))
            .bold_line_style(GRID)
            .light_line_style(WHITE)
            .axis_desc_style((FONT, 14).into_font().color(&INK))
            .label_style((FONT, 12).into_font().color(&INK))
            .draw()
            .map_err(err)?;

        // Permitted region (between the guideline bound and the far edge).
        let edge = if rises { y.start } else { y.end };
        let clamp = |b: f64| b.clamp(y.start, y.end);
        let picks_idx = picks(times.len());
        let mut polygon: Vec<(f64, f64)> = picks_idx
            .iter()
            .map(|&j| (times[j], clamp(bound[j])))
            .collect();
        polygon.push((times[times.len() - 1], edge));
        polygon.push((times[0], edge));
        if !finite_bound.is_empty() {
            chart
                .draw_series(std::iter::once(Polygon::new(
                    polygon,
                    PERMITTED.mix(0.22).filled(),
                )))
                .map_err(err)?
                .label(format!(
                    "Within {} limits ({})",
                    traj.limits.guideline.id,
                    if rises { "rise" } else { "fall" }
                ))
                .legend(|(x, y)| {
                    Rectangle::new([(x, y - 6), (x + 22, y + 6)], PERMITTED.mix(0.35).filled())
                });
            chart
                .draw_series(LineSeries::new(
                    picks_idx
                        .iter()
                        .filter(|&&j| bound[j].is_finite())
                        .map(|&j| (times[j], clamp(bound[j]))),
                    CEILING.stroke_width(2),
                ))
                .map_err(err)?
                .label(if rises {
                    "Highest sodium the limits allow"
                } else {
                    "Lowest sodium the limits allow"
                })
                .legend(|(x, y)| {
                    PathElement::new(vec![(x, y), (x + 22, y)], CEILING.stroke_width(2))
                });
        }
        chart
            .draw_series(LineSeries::new(na.iter().copied(), SODIUM.stroke_width(3)))
            .map_err(err)?
            .label("Serum sodium (simulated)")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], SODIUM.stroke_width(3)));

        // Flags: a marker where each rule was first crossed.
        let all_na = traj.sodium();
        let mut first = true;
        for (k, f) in traj.flags.iter().enumerate() {
            let v = value_at(&times, &all_na, f.time_h);
            let anno = chart
                .draw_series(vec![
                    PathElement::new(
                        vec![(f.time_h, y.start), (f.time_h, y.end)],
                        FLAG.mix(0.6).stroke_width(1),
                    )
                    .into_dyn(),
                    TriangleMarker::new((f.time_h, v), 9, FLAG.filled()).into_dyn(),
                    Text::new(
                        format!(
                            "{} crossed at {} h",
                            f.rule.label,
                            crate::format::sig(f.time_h, 3)
                        ),
                        (
                            f.time_h,
                            y.end - (y.end - y.start) * (0.05 + 0.06 * k as f64),
                        ),
                        (FONT, 12).into_font().color(&FLAG),
                    )
                    .into_dyn(),
                ])
                .map_err(err)?;
            if first {
                anno.label("Guideline flag")
                    .legend(|(x, y)| TriangleMarker::new((x + 11, y), 7, FLAG.filled()));
                first = false;
            }
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .background_style(WHITE.mix(0.9))
            .border_style(GRID)
            .label_font((FONT, 12).into_font().color(&INK))
            .draw()
            .map_err(err)?;
        root.present().map_err(err)?;
    }
    Ok(buf)
}

/// A stacked layer: name, colour, volume of the compartment.
type Layer = (&'static str, RGBColor, fn(&tidewater::Observation) -> f64);

fn volume_chart(input: &RunInput) -> Result<String> {
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
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (WIDTH, 460)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let root = caution_footer(&root)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(
                format!("Body water by compartment: {}", input.title),
                (FONT, 18).into_font().color(&INK),
            )
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(x_range(traj), 0.0..top * 1.08)
            .map_err(err)?;
        chart
            .configure_mesh()
            .x_desc("Time since start (h)")
            .y_desc("Water (L), stacked")
            .x_label_formatter(&hour_ticks)
            .y_label_formatter(&|v| crate::format::fixed(*v, 0))
            .bold_line_style(GRID)
            .light_line_style(WHITE)
            .axis_desc_style((FONT, 14).into_font().color(&INK))
            .label_style((FONT, 12).into_font().color(&INK))
            .draw()
            .map_err(err)?;
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
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .background_style(WHITE.mix(0.9))
            .border_style(GRID)
            .label_font((FONT, 12).into_font().color(&INK))
            .draw()
            .map_err(err)?;
        root.present().map_err(err)?;
    }
    Ok(buf)
}

struct Line {
    name: String,
    color: RGBColor,
    width: u32,
    points: Vec<(f64, f64)>,
}

fn panel(
    area: &DrawingArea<SVGBackend, plotters::coord::Shift>,
    traj: &Trajectory,
    caption: &str,
    y_desc: &str,
    lines: Vec<Line>,
    include_zero: bool,
    legend_at: SeriesLabelPosition,
) -> Result<()> {
    let mut lo = lines
        .iter()
        .flat_map(|l| l.points.iter().map(|p| p.1))
        .fold(f64::INFINITY, f64::min);
    let mut hi = lines
        .iter()
        .flat_map(|l| l.points.iter().map(|p| p.1))
        .fold(f64::NEG_INFINITY, f64::max);
    if include_zero {
        lo = lo.min(0.0);
        hi = hi.max(0.0);
    }
    let span_floor = (hi.abs().max(lo.abs()) * 0.05).max(1e-3);
    let y = padded(lo, hi, 0.06, span_floor);
    let y = if include_zero && lo >= 0.0 {
        0.0..y.end
    } else {
        y
    };
    let mut chart = ChartBuilder::on(area)
        .caption(caption, (FONT, 16).into_font().color(&INK))
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(70)
        .build_cartesian_2d(x_range(traj), y)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("Time since start (h)")
        .y_desc(y_desc)
        .x_label_formatter(&hour_ticks)
        .y_label_formatter(&|v| crate::format::sig(*v, 4))
        .bold_line_style(GRID)
        .light_line_style(WHITE)
        .axis_desc_style((FONT, 13).into_font().color(&INK))
        .label_style((FONT, 12).into_font().color(&INK))
        .draw()
        .map_err(err)?;
    for l in lines {
        let (color, width) = (l.color, l.width);
        chart
            .draw_series(LineSeries::new(l.points, color.stroke_width(width)))
            .map_err(err)?
            .label(l.name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 22, y)], color.stroke_width(width))
            });
    }
    chart
        .configure_series_labels()
        .position(legend_at)
        .background_style(WHITE.mix(0.9))
        .border_style(GRID)
        .label_font((FONT, 12).into_font().color(&INK))
        .draw()
        .map_err(err)?;
    Ok(())
}

fn two_panels(
    title: &str,
    draw: impl FnOnce(
        &DrawingArea<SVGBackend, plotters::coord::Shift>,
        &DrawingArea<SVGBackend, plotters::coord::Shift>,
    ) -> Result<()>,
) -> Result<String> {
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (WIDTH, 640)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let root = caution_footer(&root)?;
        let root = root
            .titled(title, (FONT, 18).into_font().color(&INK))
            .map_err(err)?;
        let areas = root.split_evenly((2, 1));
        draw(&areas[0], &areas[1])?;
        root.present().map_err(err)?;
    }
    Ok(buf)
}

fn urine_chart(input: &RunInput) -> Result<String> {
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

fn balance_chart(input: &RunInput) -> Result<String> {
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

/// Draw every chart of a run.
pub fn charts(input: &RunInput, summary: &Summary) -> Result<Vec<Chart>> {
    if input.trajectory.samples.len() < 2 {
        anyhow::bail!("the run has fewer than two samples: nothing to chart");
    }
    Ok(vec![
        Chart {
            file_name: "sodium.svg",
            title: "Serum sodium and the guideline corridor".into(),
            svg: sodium_chart(input, summary)?,
        },
        Chart {
            file_name: "volumes.svg",
            title: "Body water by compartment".into(),
            svg: volume_chart(input)?,
        },
        Chart {
            file_name: "urine.svg",
            title: "Urine flow and osmolality".into(),
            svg: urine_chart(input)?,
        },
        Chart {
            file_name: "intake_output.svg",
            title: "Cumulative intake and output".into(),
            svg: balance_chart(input)?,
        },
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn european_corridor_is_ten_then_eighteen() {
        // Spasovski et al. 2014: at most 10 mmol/L in the first 24 h and
        // 8 mmol/L in each later 24 h, so a steady rise may reach the start
        // + 10 at 24 h and the start + 18 at 48 h.
        let plan = tidewater::reference::benchmark_plan();
        let traj = tidewater::Simulation::new(plan).unwrap().run().unwrap();
        let c = corridor(&traj, Direction::Rise);
        let na0 = traj.samples[0].obs.na_mmol_l;
        let at = |t: f64| {
            c[traj
                .samples
                .iter()
                .position(|s| (s.time_h - t).abs() < 1e-6)
                .unwrap()]
        };
        assert!((at(12.0) - (na0 + 10.0)).abs() < 1e-9);
        assert!((at(24.0) - (na0 + 10.0)).abs() < 1e-9);
        assert!((at(48.0) - (na0 + 18.0)).abs() < 1e-9);
    }
}
