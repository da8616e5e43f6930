//! A sweep's charts: the percentile fan of serum sodium over time
//! (`sodium_bands.svg`), what drives the largest 24 h rise
//! (`sensitivity.svg`), and every parameter against every kept output
//! (`sensitivity_by_output.svg`). Each is drawn only when the result file
//! holds what it shows.

use super::SweepReport;
use crate::output::svg::frame::canvas;
use crate::output::{Output, OutputFile};
use anyhow::{bail, Result};
use plotters::prelude::*;
use tidewater::sweep::Summary;

/// The SVG output of a sweep.
pub struct SweepCharts;

impl Output<SweepReport> for SweepCharts {
    fn format(&self) -> &'static str {
        "svg"
    }

    fn files(&self, report: &SweepReport) -> Result<Vec<OutputFile>> {
        let summary = &report.summary;
        let mut files = Vec::new();
        // No fan when no member finished (every band is NaN): there is
        // nothing to draw, and the axes would have no finite range.
        let any_band = summary
            .bands
            .iter()
            .any(|b| b.iter().all(|v| v.is_finite()));
        if !summary.band_times_h.is_empty() && any_band {
            files.push(self.file("sodium_bands.svg", fan_chart(summary)?));
        }
        if !summary.sensitivity.is_empty() {
            files.push(self.file("sensitivity.svg", sensitivity_chart(summary)?));
        }
        if !summary.sensitivity_by_output.is_empty() {
            files.push(self.file("sensitivity_by_output.svg", sensitivity_matrix(summary)?));
        }
        Ok(files)
    }
}

/// The spacing of the band times, h (the spec's `band_every_h`): the chart
/// joins them with straight lines, so its caption says how far apart they
/// are (a peak between two band times is not drawn).
fn band_step(summary: &Summary) -> f64 {
    match summary.band_times_h.as_slice() {
        [a, b, ..] => b - a,
        _ => 0.0,
    }
}

/// Serum sodium across the sweep: 5-95 and 25-75 % bands and the median.
fn fan_chart(summary: &Summary) -> Result<String> {
    canvas((820, 460), |root| {
        let t_max = summary.band_times_h.last().copied().unwrap_or(1.0).max(1.0);
        let lo = summary
            .bands
            .iter()
            .map(|b| b[0])
            .filter(|v| v.is_finite())
            .fold(f64::INFINITY, f64::min)
            .floor()
            - 1.0;
        let hi = summary
            .bands
            .iter()
            .map(|b| b[4])
            .filter(|v| v.is_finite())
            .fold(f64::NEG_INFINITY, f64::max)
            .ceil()
            + 1.0;
        let mut chart = ChartBuilder::on(root)
            .caption(
                format!(
                    "Serum sodium across the sweep (5-95 and 25-75 % bands, median; every {})",
                    crate::format::hours_text(band_step(summary))
                ),
                ("sans-serif", 18),
            )
            .margin(14)
            .x_label_area_size(40)
            .y_label_area_size(56)
            .build_cartesian_2d(0.0..t_max * 1.001, lo..hi)?;
        chart
            .configure_mesh()
            .x_desc("time (h)")
            .y_desc("serum sodium (mmol/L)")
            .x_label_formatter(&|x| format!("{x:.0}"))
            .y_label_formatter(&|y| format!("{y:.0}"))
            .draw()?;
        let band = |i: usize, j: usize| -> Vec<(f64, f64)> {
            let mut pts: Vec<(f64, f64)> = summary
                .band_times_h
                .iter()
                .zip(summary.bands.iter())
                .map(|(t, b)| (*t, b[i]))
                .collect();
            pts.extend(
                summary
                    .band_times_h
                    .iter()
                    .zip(summary.bands.iter())
                    .rev()
                    .map(|(t, b)| (*t, b[j])),
            );
            pts
        };
        // Outer band (5-95 %) first, the inner one (25-75 %) over it.
        let bands = [
            (0, 4, RGBColor(158, 202, 225), 0.5, "5-95 %"),
            (1, 3, RGBColor(66, 146, 198), 0.6, "25-75 %"),
        ];
        for (lo, hi, color, opacity, label) in bands {
            chart
                .draw_series(std::iter::once(Polygon::new(
                    band(lo, hi),
                    color.mix(opacity).filled(),
                )))?
                .label(label)
                .legend(move |(x, y)| {
                    Rectangle::new([(x, y - 5), (x + 14, y + 5)], color.filled())
                });
        }
        chart
            .draw_series(LineSeries::new(
                summary
                    .band_times_h
                    .iter()
                    .zip(summary.bands.iter())
                    .map(|(t, b)| (*t, b[2])),
                ShapeStyle::from(&RGBColor(8, 48, 107)).stroke_width(2),
            ))?
            .label("median")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 14, y)], RGBColor(8, 48, 107)));
        chart
            .configure_series_labels()
            .border_style(BLACK.mix(0.3))
            .background_style(WHITE.mix(0.9))
            .position(SeriesLabelPosition::LowerRight)
            .draw()?;
        Ok(())
    })
}

/// Parameters ranked by their rank correlation with the largest 24 h rise.
fn sensitivity_chart(summary: &Summary) -> Result<String> {
    if summary.sensitivity.is_empty() {
        bail!("no parameters to rank");
    }
    let n = summary.sensitivity.len();
    canvas((820, (150 + 34 * n) as u32), |root| {
        // The colour key, under the chart.
        let (_, h) = root.dim_in_pixel();
        let key_y = h as i32 - 22;
        let font = ("sans-serif", 12).into_font();
        for (k, (color, text)) in [
            (POSITIVE, "a larger value goes with a larger rise"),
            (NEGATIVE, "a larger value goes with a smaller rise"),
        ]
        .into_iter()
        .enumerate()
        {
            let x = 240 + 280 * k as i32;
            root.draw(&Rectangle::new(
                [(x, key_y - 6), (x + 14, key_y + 6)],
                color.mix(0.8).filled(),
            ))?;
            root.draw(&Text::new(text, (x + 20, key_y - 6), font.clone()))?;
        }
        let (root, _) = root.split_vertically(h as i32 - 36);
        let root = &root;
        let mut chart = ChartBuilder::on(root)
            .caption(
                "What drives the largest 24 h rise (rank correlation)",
                ("sans-serif", 18),
            )
            .margin(14)
            .x_label_area_size(40)
            .y_label_area_size(230)
            // n bars in n segments (0..n would make n + 1, the top one empty).
            .build_cartesian_2d(-1.0..1.0, (0..n - 1).into_segmented())?;
        let names: Vec<String> = summary.sensitivity.iter().map(|(n, _)| n.clone()).collect();
        chart
            .configure_mesh()
            .x_desc("rank correlation with the largest 24 h rise")
            .y_label_formatter(&|v| match v {
                SegmentValue::CenterOf(i) => names.get(*i).cloned().unwrap_or_default(),
                _ => String::new(),
            })
            .x_label_formatter(&|x| format!("{x:+.1}"))
            .draw()?;
        chart.draw_series(summary.sensitivity.iter().enumerate().map(|(i, (_, r))| {
            let color = if *r >= 0.0 { POSITIVE } else { NEGATIVE };
            Rectangle::new(
                [
                    (0.0, SegmentValue::Exact(i)),
                    (*r, SegmentValue::Exact(i + 1)),
                ],
                color.mix(0.8).filled(),
            )
        }))?;
        Ok(())
    })
}

/// Colour of a positive correlation.
const POSITIVE: RGBColor = RGBColor(203, 24, 29);
/// Colour of a negative correlation.
const NEGATIVE: RGBColor = RGBColor(33, 113, 181);

/// Colour of a correlation: [`NEGATIVE`] or [`POSITIVE`], paler towards
/// zero.
fn correlation_colour(r: f64) -> RGBColor {
    let a = r.abs().clamp(0.0, 1.0);
    let RGBColor(base_r, base_g, base_b) = if r >= 0.0 { POSITIVE } else { NEGATIVE };
    let mix = |c: u8| (255.0 + (f64::from(c) - 255.0) * a).round() as u8;
    RGBColor(mix(base_r), mix(base_g), mix(base_b))
}

/// Every parameter against every kept output: a grid of cells coloured by
/// the rank correlation, with its value written in.
fn sensitivity_matrix(summary: &Summary) -> Result<String> {
    let outputs = &summary.sensitivity_by_output;
    let n_out = outputs.len();
    let n_par = outputs.first().map_or(0, |(_, by)| by.len());
    if n_par == 0 {
        bail!("no parameters to rank");
    }
    // Each column as wide as its output's name (about 7 px a character).
    let longest = outputs.iter().map(|(n, _)| n.len()).max().unwrap_or(0) as i32;
    let (cell_w, cell_h, left, top) = ((7 * longest + 12).clamp(110, 200), 34i32, 240i32, 70i32);
    let width = (left + cell_w * n_out as i32 + 20) as u32;
    let height = (top + cell_h * n_par as i32 + 90) as u32;
    canvas((width.max(520), height), |root| {
        root.draw(&Text::new(
            "What drives each output (rank correlation)",
            (14, 12),
            ("sans-serif", 18).into_font(),
        ))?;
        let label = ("sans-serif", 12).into_font();
        for (o, (name, by)) in outputs.iter().enumerate() {
            let x = left + cell_w * o as i32;
            root.draw(&Text::new(name.clone(), (x + 4, top - 18), label.clone()))?;
            for (p, (param, r)) in by.iter().enumerate() {
                let y = top + cell_h * p as i32;
                if o == 0 {
                    root.draw(&Text::new(param.clone(), (14, y + 10), label.clone()))?;
                }
                root.draw(&Rectangle::new(
                    [(x, y), (x + cell_w - 2, y + cell_h - 2)],
                    correlation_colour(*r).filled(),
                ))?;
                let ink = if r.abs() > 0.6 { WHITE } else { BLACK };
                root.draw(&Text::new(
                    format!("{r:+.2}"),
                    (x + cell_w / 2 - 16, y + 10),
                    label.clone().color(&ink),
                ))?;
            }
        }
        // The colour bar: rank correlation from -1 to +1.
        let bar_y = top + cell_h * n_par as i32 + 24;
        let bar_w = 300i32;
        for k in 0..bar_w {
            let r = -1.0 + 2.0 * f64::from(k) / f64::from(bar_w - 1);
            root.draw(&Rectangle::new(
                [(left + k, bar_y), (left + k + 1, bar_y + 12)],
                correlation_colour(r).filled(),
            ))?;
        }
        root.draw(&Rectangle::new(
            [(left, bar_y), (left + bar_w, bar_y + 12)],
            BLACK.mix(0.4),
        ))?;
        for (r, text) in [(-1.0, "-1"), (0.0, "0"), (1.0, "+1")] {
            let x = left + ((r + 1.0) / 2.0 * f64::from(bar_w - 1)) as i32;
            root.draw(&Text::new(text, (x - 6, bar_y + 16), label.clone()))?;
        }
        root.draw(&Text::new("rank correlation", (14, bar_y), label.clone()))?;
        Ok(())
    })
}
