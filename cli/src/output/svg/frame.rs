//! What every chart shares: the canvas with the caution line along its
//! foot, the time axis and its styling, panels of line series, legends,
//! and the thinning of long runs to a drawable number of points.

use super::{FONT, GRID, INK, WIDTH};
use anyhow::{anyhow, Result};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::ops::Range;
use tidewater::Trajectory;

/// A drawing area of an SVG canvas.
pub type Area<'b> = DrawingArea<SVGBackend<'b>, Shift>;

/// A chart over time (h) with a numeric y axis.
pub type TimeChart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// At most this many points of a series are drawn.
const MAX_POINTS: usize = 1200;

/// Height of the caution line under every chart, px.
const CAUTION_PX: u32 = 18;

/// A plotters error, as an error of ours.
pub fn err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow!("drawing a chart: {e:?}")
}

/// Write the short caution along the bottom of a chart and return the
/// area above it, for the chart itself: a chart copied out of its report
/// still says what it is.
pub fn caution_footer<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
) -> Result<DrawingArea<DB, Shift>> {
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

/// An SVG document of `size` px: a white canvas with the caution line at
/// its foot, the rest drawn by `draw`.
pub fn canvas(size: (u32, u32), draw: impl FnOnce(&Area<'_>) -> Result<()>) -> Result<String> {
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, size).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let root = caution_footer(&root)?;
        draw(&root)?;
        root.present().map_err(err)?;
    }
    Ok(buf)
}

/// Indices of the samples to draw (every k-th, always the last).
pub fn picks(n: usize) -> Vec<usize> {
    let stride = n.div_ceil(MAX_POINTS).max(1);
    let mut idx: Vec<usize> = (0..n).step_by(stride).collect();
    if n > 0 && idx.last() != Some(&(n - 1)) {
        idx.push(n - 1);
    }
    idx
}

/// `(time, f(sample))` of the drawn samples.
pub fn series(traj: &Trajectory, f: impl Fn(&tidewater::Sample) -> f64) -> Vec<(f64, f64)> {
    picks(traj.samples.len())
        .into_iter()
        .map(|j| (traj.samples[j].time_h, f(&traj.samples[j])))
        .collect()
}

/// The time axis of a run, h, with 1 % room on the right.
pub fn x_range(traj: &Trajectory) -> Range<f64> {
    let t0 = traj.samples[0].time_h;
    let t1 = traj.last().time_h.max(t0 + 1e-6);
    t0..t1 + (t1 - t0) * 0.01
}

fn hour_ticks(x: &f64) -> String {
    crate::format::sig(*x, 3)
}

/// `lo..hi` widened to at least `min_span` and padded by `pad_fraction` of
/// the span on each side.
pub fn padded(lo: f64, hi: f64, pad_fraction: f64, min_span: f64) -> Range<f64> {
    let span = (hi - lo).max(min_span);
    let mid = 0.5 * (hi + lo);
    let half = 0.5 * span * (1.0 + 2.0 * pad_fraction);
    (mid - half)..(mid + half)
}

/// How large a time chart is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Size {
    /// A chart of its own (whole numbers on the y axis).
    Full,
    /// One of two panels under a common title (four significant digits).
    Panel,
}

/// Axes, grid and labels of a chart over time on `area`.
pub fn time_axes<'a, 'b>(
    area: &'a Area<'b>,
    size: Size,
    caption: &str,
    x: Range<f64>,
    y: Range<f64>,
    y_desc: &str,
) -> Result<TimeChart<'a, 'b>> {
    let (caption_px, margin, x_area, y_area, desc_px) = match size {
        Size::Full => (18, 14, 44, 64, 14),
        Size::Panel => (16, 12, 40, 70, 13),
    };
    let y_ticks = |v: &f64| match size {
        Size::Full => crate::format::fixed(*v, 0),
        Size::Panel => crate::format::sig(*v, 4),
    };
    let mut chart = ChartBuilder::on(area)
        .caption(caption, (FONT, caption_px).into_font().color(&INK))
        .margin(margin)
        .x_label_area_size(x_area)
        .y_label_area_size(y_area)
        .build_cartesian_2d(x, y)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc("Time since start (h)")
        .y_desc(y_desc)
        .x_label_formatter(&hour_ticks)
        .y_label_formatter(&y_ticks)
        .bold_line_style(GRID)
        .light_line_style(WHITE)
        .axis_desc_style((FONT, desc_px).into_font().color(&INK))
        .label_style((FONT, 12).into_font().color(&INK))
        .draw()
        .map_err(err)?;
    Ok(chart)
}

/// The legend of a chart, at `position`.
pub fn legend<'a, 'b: 'a>(
    chart: &mut TimeChart<'a, 'b>,
    position: SeriesLabelPosition,
) -> Result<()> {
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.9))
        .border_style(GRID)
        .label_font((FONT, 12).into_font().color(&INK))
        .draw()
        .map_err(err)
}

/// One line series of a panel.
pub struct Line {
    /// Legend text.
    pub name: String,
    /// Colour.
    pub color: RGBColor,
    /// Stroke width, px.
    pub width: u32,
    /// `(time, value)` points.
    pub points: Vec<(f64, f64)>,
}

/// The corner of a plot with the fewest data points under a legend box
/// (`width` and `height` as shares of the plot), `preferred` first among
/// equals, so that a legend sits in free space rather than on the data.
/// A line between two points is counted by points along it. Returns the
/// corner and the number of points left under the legend there.
fn corner_and_count(
    lines: &[&[(f64, f64)]],
    x: &Range<f64>,
    y: &Range<f64>,
    (width, height): (f64, f64),
    preferred: SeriesLabelPosition,
) -> (SeriesLabelPosition, usize) {
    use SeriesLabelPosition::*;
    let corners = [UpperRight, UpperLeft, LowerRight, LowerLeft];
    let inside = |c: &SeriesLabelPosition, (px, py): (f64, f64)| {
        let fx = (px - x.start) / (x.end - x.start);
        let fy = (py - y.start) / (y.end - y.start);
        let right = matches!(c, UpperRight | LowerRight);
        let upper = matches!(c, UpperRight | UpperLeft);
        let in_x = if right {
            fx >= 1.0 - width
        } else {
            fx <= width
        };
        let in_y = if upper {
            fy >= 1.0 - height
        } else {
            fy <= height
        };
        in_x && in_y
    };
    let count = |c: &SeriesLabelPosition| {
        let mut n = 0usize;
        for points in lines {
            for w in points.windows(2) {
                // Ten points along each segment: a long straight stretch
                // crosses a corner without a sample inside it.
                for k in 0..10 {
                    let f = k as f64 / 10.0;
                    let p = (
                        w[0].0 + f * (w[1].0 - w[0].0),
                        w[0].1 + f * (w[1].1 - w[0].1),
                    );
                    n += usize::from(inside(c, p));
                }
            }
            if let Some(&last) = points.last() {
                n += usize::from(inside(c, last));
            }
        }
        n
    };
    let preferred_count = count(&preferred);
    corners
        .iter()
        .map(|c| (count(c), c))
        .filter(|(n, _)| *n < preferred_count)
        .min_by_key(|(n, _)| *n)
        .map_or((preferred, preferred_count), |(n, c)| (c.clone(), n))
}

/// Where the legend goes and the y range to draw: a free corner when one
/// is, else the upper right with the top of the axis raised so that the
/// data stay below the legend (a legend never sits on the data).
pub fn legend_place(
    lines: &[&[(f64, f64)]],
    x: &Range<f64>,
    y: Range<f64>,
    shares: (f64, f64),
    preferred: SeriesLabelPosition,
) -> (SeriesLabelPosition, Range<f64>) {
    let (corner, n) = corner_and_count(lines, x, &y, shares, preferred);
    if n == 0 {
        return (corner, y);
    }
    let raised = y.start + (y.end - y.start) / (1.0 - shares.1 - 0.04).max(0.3);
    (SeriesLabelPosition::UpperRight, y.start..raised)
}

/// One panel of line series over the run's time axis; `include_zero`
/// keeps 0 on the y axis; the legend goes to `legend_at` unless another
/// corner holds less of the data.
pub fn panel(
    area: &Area<'_>,
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
    let shares = legend_shares(&lines);
    let (legend_at, y) = legend_place(
        &lines
            .iter()
            .map(|l| l.points.as_slice())
            .collect::<Vec<_>>(),
        &x_range(traj),
        y,
        shares,
        legend_at,
    );
    let mut chart = time_axes(area, Size::Panel, caption, x_range(traj), y, y_desc)?;
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
    legend(&mut chart, legend_at)
}

/// The share of a panel's plot (width, height) a legend of these lines
/// takes: about 7 px per character plus the key, 20 px per line, on a plot
/// about 820 x 220 px.
fn legend_shares(lines: &[Line]) -> (f64, f64) {
    let longest = lines
        .iter()
        .map(|l| l.name.chars().count())
        .max()
        .unwrap_or(0);
    // A tenth more than measured, to keep clear of the box's edge.
    let width = 1.1 * (40.0 + 7.0 * longest as f64) / 820.0;
    let height = 1.1 * (12.0 + 20.0 * lines.len() as f64) / 220.0;
    (width.min(0.6), height.min(0.6))
}

/// A chart of two panels, one above the other, under `title`.
pub fn two_panels(
    title: &str,
    draw: impl FnOnce(&Area<'_>, &Area<'_>) -> Result<()>,
) -> Result<String> {
    canvas((WIDTH, 640), |root| {
        let root = root
            .titled(title, (FONT, 18).into_font().color(&INK))
            .map_err(err)?;
        let areas = root.split_evenly((2, 1));
        draw(&areas[0], &areas[1])
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use SeriesLabelPosition::*;

    #[test]
    fn the_legend_goes_where_the_data_is_not() {
        let (x, y) = (0.0..10.0, 0.0..10.0);
        // A line falling from the upper left to the lower right leaves the
        // upper right and lower left free: the preferred lower right is
        // taken only when free.
        let falling = [(0.0, 10.0), (10.0, 0.0)];
        let c = corner_and_count(&[&falling], &x, &y, (0.3, 0.3), LowerRight).0;
        assert!(matches!(c, UpperRight | LowerLeft), "{c:?}");
        // A line along the top: the preferred lower corner stays.
        let top = [(0.0, 9.5), (10.0, 9.5)];
        let c = corner_and_count(&[&top], &x, &y, (0.3, 0.3), LowerRight).0;
        assert!(matches!(c, LowerRight), "{c:?}");
        // Rising to the upper right: the legend leaves that corner.
        let rising = [(0.0, 0.0), (10.0, 10.0)];
        let c = corner_and_count(&[&rising], &x, &y, (0.3, 0.3), UpperRight).0;
        assert!(matches!(c, UpperLeft | LowerRight), "{c:?}");
        // A zigzag through every corner: no corner is free, so the axis
        // is raised and the data stay below the legend's box.
        let zigzag = [(0.0, 0.0), (1.0, 10.0), (9.0, 10.0), (10.0, 0.0)];
        let (c, raised) = legend_place(&[&zigzag], &x, y.clone(), (0.3, 0.3), LowerRight);
        assert!(matches!(c, UpperRight), "{c:?}");
        let (_, n) = corner_and_count(&[&zigzag], &x, &raised, (0.3, 0.3), UpperRight);
        assert_eq!(n, 0, "{raised:?}");
    }
}
