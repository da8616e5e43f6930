//! The serum sodium chart: the simulated course, the corridor the
//! guideline limits allow for a course moving steadily from the start,
//! the Adrogué–Madias prediction for the same infusions (a closed body,
//! dashed), a marker where each rule was first crossed, and one per goal
//! judged.

use super::frame::{
    canvas, err, legend, legend_place, padded, picks, series, time_axes, x_range, Size,
};
use super::{CEILING, FLAG, FONT, FORMULA, GOAL, PERMITTED, SODIUM, WIDTH};
use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::Result;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use tidewater::goals::GoalStatus;
use tidewater::interpolate;
use tidewater::limits::{Direction, Severity};
use tidewater::Trajectory;

/// A value between samples: linear ([`interpolate`]), except next to a
/// value that is not finite (a time no rule covers), where it is the later
/// sample's value.
fn value_at(times: &[f64], values: &[f64], t: f64) -> f64 {
    let j = times.partition_point(|&x| x < t);
    if j > 0 && j < times.len() && !(values[j - 1].is_finite() && values[j].is_finite()) {
        return values[j];
    }
    interpolate(times, values, t)
}

/// Highest (for rises) or lowest (for falls) serum sodium the guideline
/// limits allow at each sample time, for a course that moves steadily in
/// one direction from the start: `c(t) = min over rules of
/// c(max(from, t − window)) + max_change`, over the rules that apply to
/// the run (start disorder, onset). Infinite (+ for rises, − for falls)
/// where no rule applies, everywhere when none does.
pub fn corridor(traj: &Trajectory, direction: Direction) -> Vec<f64> {
    let times = traj.times();
    let na0 = traj.samples[0].obs.na_mmol_l;
    let rules: Vec<_> = traj
        .limits
        .applicable_rules(&traj.situation)
        .into_iter()
        .filter(|r| r.direction == direction && r.severity == Severity::Limit)
        .collect();
    let sign = match direction {
        Direction::Rise => 1.0,
        Direction::Fall => -1.0,
    };
    if rules.is_empty() {
        // No bound on this side at any time.
        return vec![sign * f64::INFINITY; times.len()];
    }
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
    c.iter().map(|x| na0 + sign * x).collect()
}

/// The chart (SVG text).
pub fn chart(input: &RunInput, summary: &Summary) -> Result<String> {
    let traj = &input.trajectory;
    let na: Vec<(f64, f64)> = series(traj, |s| s.obs.na_mmol_l);
    // Both corridors: the highest sodium the rise limits allow and the
    // lowest the fall limits allow (infinite where no rule applies), so a
    // course that turns the other way still shows the bound it meets.
    let ceiling = corridor(traj, Direction::Rise);
    let floor = corridor(traj, Direction::Fall);
    let times = traj.times();
    let (mut lo, mut hi) = (summary.sodium.min.mmol_l, summary.sodium.max.mmol_l);
    let formula: Vec<f64> = tidewater::bedside::formula_course(traj)
        .iter()
        .map(|d| traj.samples[0].obs.na_mmol_l + d)
        .collect();
    for f in &formula {
        lo = lo.min(*f);
        hi = hi.max(*f);
    }
    // A bound within reach of the course widens the axis to show it.
    let reach = 25.0;
    for b in ceiling.iter().filter(|b| b.is_finite()) {
        if *b <= hi + reach {
            hi = hi.max(*b);
        }
    }
    for b in floor.iter().filter(|b| b.is_finite()) {
        if *b >= lo - reach {
            lo = lo.min(*b);
        }
    }
    let y = padded(lo, hi, 0.08, 6.0);
    let x = x_range(traj);
    let any_ceiling = ceiling.iter().any(|b| b.is_finite());
    let any_floor = floor.iter().any(|b| b.is_finite());
    let picks_idx = picks(times.len());

    // The legend in the corner the sodium, formula and bound lines leave
    // free, or above them (its entries of up to about 45 characters, 20 px
    // each, on a plot about 820 x 330 px).
    let (corner, y) = {
        let clamp = |b: f64| b.clamp(y.start, y.end);
        let bound_points = |bound: &[f64]| -> Vec<(f64, f64)> {
            picks_idx
                .iter()
                .filter(|&&j| bound[j].is_finite())
                .map(|&j| (times[j], clamp(bound[j])))
                .collect()
        };
        let (ceiling_points, floor_points) = (bound_points(&ceiling), bound_points(&floor));
        let formula_points: Vec<(f64, f64)> =
            picks_idx.iter().map(|&j| (times[j], formula[j])).collect();
        let entries = 2
            + usize::from(any_ceiling || any_floor)
            + usize::from(any_ceiling)
            + usize::from(any_floor)
            + usize::from(!traj.flags.is_empty())
            + usize::from(
                traj.goals
                    .iter()
                    .any(|g| g.status != GoalStatus::RunTooShort),
            );
        legend_place(
            &[&na, &formula_points, &ceiling_points, &floor_points],
            &x,
            y,
            (0.45, 1.1 * (12.0 + 20.0 * entries as f64) / 330.0),
            SeriesLabelPosition::LowerRight,
        )
    };

    canvas((WIDTH, 460), |root| {
        let mut chart = time_axes(
            root,
            Size::Full,
            &format!("Serum sodium: {}", input.title),
            x.clone(),
            y.clone(),
            "Serum sodium (mmol/L)",
        )?;

        // Permitted region: between the floor and the ceiling (the axis
        // edge where a side has no rule).
        let clamp = |b: f64| b.clamp(y.start, y.end);
        let mut polygon: Vec<(f64, f64)> = picks_idx
            .iter()
            .map(|&j| (times[j], clamp(ceiling[j])))
            .collect();
        polygon.extend(picks_idx.iter().rev().map(|&j| (times[j], clamp(floor[j]))));
        if any_ceiling || any_floor {
            let sides = match (any_ceiling, any_floor) {
                (true, true) => "rise and fall",
                (true, false) => "rise",
                _ => "fall",
            };
            chart
                .draw_series(std::iter::once(Polygon::new(
                    polygon,
                    PERMITTED.mix(0.22).filled(),
                )))
                .map_err(err)?
                .label(format!(
                    "Within {} limits ({sides})",
                    traj.limits.guideline.id
                ))
                .legend(|(x, y)| {
                    Rectangle::new([(x, y - 6), (x + 22, y + 6)], PERMITTED.mix(0.35).filled())
                });
        }
        for (bound, present, label) in [
            (&ceiling, any_ceiling, "Highest sodium the limits allow"),
            (&floor, any_floor, "Lowest sodium the limits allow"),
        ] {
            if !present {
                continue;
            }
            chart
                .draw_series(LineSeries::new(
                    picks_idx
                        .iter()
                        .filter(|&&j| bound[j].is_finite())
                        .map(|&j| (times[j], clamp(bound[j]))),
                    CEILING.stroke_width(2),
                ))
                .map_err(err)?
                .label(label)
                .legend(|(x, y)| {
                    PathElement::new(vec![(x, y), (x + 22, y)], CEILING.stroke_width(2))
                });
        }
        chart
            .draw_series(LineSeries::new(na.iter().copied(), SODIUM.stroke_width(3)))
            .map_err(err)?
            .label("Serum sodium (simulated)")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], SODIUM.stroke_width(3)));
        chart
            .draw_series(DashedLineSeries::new(
                picks_idx.iter().map(|&j| (times[j], formula[j])),
                8,
                5,
                FORMULA.stroke_width(2),
            ))
            .map_err(err)?
            .label("Adrogué–Madias (closed body)")
            .legend(|(x, y)| {
                plotters::element::DashedPathElement::new(
                    vec![(x, y), (x + 22, y)],
                    6,
                    3,
                    FORMULA.stroke_width(2),
                )
            });

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
                            " {} crossed at {} ",
                            f.rule.label,
                            crate::format::hours_text(f.time_h)
                        ),
                        (
                            f.time_h,
                            y.end - (y.end - y.start) * (0.05 + 0.06 * k as f64),
                        ),
                        // In the right third, the label ends at its line so
                        // the chart's edge does not cut it.
                        (FONT, 12).into_font().color(&FLAG).pos(Pos::new(
                            if f.time_h > x.start + 0.66 * (x.end - x.start) {
                                HPos::Right
                            } else {
                                HPos::Left
                            },
                            VPos::Top,
                        )),
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
        // Goals: a circle at the level each asks for, at its time (filled
        // when met, hollow when missed); goals not judged are left out.
        let mut first = true;
        for g in traj
            .goals
            .iter()
            .filter(|g| g.status != GoalStatus::RunTooShort)
        {
            let sign = match g.goal.direction {
                Direction::Rise => 1.0,
                Direction::Fall => -1.0,
            };
            let level = (all_na[0] + sign * g.goal.min_mmol_l).clamp(y.start, y.end);
            let met = g.status == GoalStatus::Met;
            let style = if met {
                GOAL.filled()
            } else {
                GOAL.stroke_width(2)
            };
            let anno = chart
                .draw_series(vec![
                    Circle::new((g.time_h, level), 6, style).into_dyn(),
                    Text::new(
                        format!(
                            "goal {}{} by {} h: {}",
                            if sign > 0.0 { "+" } else { "-" },
                            crate::format::sig(g.goal.min_mmol_l, 3),
                            crate::format::sig(g.goal.by_h, 3),
                            if met { "met" } else { "missed" }
                        ),
                        (g.time_h, level),
                        (FONT, 12).into_font().color(&GOAL),
                    )
                    .into_dyn(),
                ])
                .map_err(err)?;
            if first {
                anno.label("Guideline goal (hollow: missed)")
                    .legend(|(x, y)| Circle::new((x + 11, y), 5, GOAL.filled()));
                first = false;
            }
        }
        legend(&mut chart, corner)
    })
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

    #[test]
    fn a_side_without_rules_has_no_bound_at_all() {
        // A hyponatremic start: the fall limit applies only to a chronic
        // hypernatremic start, so the floor is absent everywhere (not a
        // point at the start value).
        let plan = tidewater::reference::benchmark_plan();
        let traj = tidewater::Simulation::new(plan).unwrap().run().unwrap();
        assert!(corridor(&traj, Direction::Fall)
            .iter()
            .all(|b| *b == f64::NEG_INFINITY));
    }

    #[test]
    fn values_between_samples() {
        let times = [0.0, 1.0, 2.0, 3.0];
        let values = [10.0, 20.0, f64::INFINITY, 40.0];
        assert_eq!(value_at(&times, &values, -1.0), 10.0);
        assert_eq!(value_at(&times, &values, 0.25), 12.5);
        // Next to a time no rule covers: the later sample.
        assert_eq!(value_at(&times, &values, 1.5), f64::INFINITY);
        assert_eq!(value_at(&times, &values, 2.5), 40.0);
    }
}
