//! Unit tests of the metric vocabulary.

use super::*;

#[test]
fn every_metric_has_a_unique_name_and_arguments_ending_in_their_unit() {
    let mut names: Vec<&str> = METRICS.iter().map(|(_, i)| i.name).collect();
    names.sort();
    names.dedup();
    assert_eq!(names.len(), METRICS.len());
    for (k, i) in METRICS {
        assert_eq!(MetricKind::from_name(i.name), Some(*k));
        for a in i.args {
            assert!(
                a.ends_with("_h")
                    || a.ends_with("_ml")
                    || a.ends_with("_mmol")
                    || a.ends_with("_mg_dl"),
                "{}: argument {a} carries no unit",
                i.name
            );
        }
    }
}

#[test]
fn extremes_include_interpolated_window_ends() {
    let t = [0.0, 1.0, 2.0, 3.0];
    let v = [0.0, 4.0, -2.0, 6.0];
    let ((min, tmin), (max, tmax)) = extremes(&t, &v, 0.0, 2.5);
    assert_eq!((min, tmin), (-2.0, 2.0));
    assert_eq!((max, tmax), (4.0, 1.0));
    // The end at 2.5 h lies halfway between -2 and 6.
    let (_, (max, tmax)) = extremes(&t, &v, 0.0, 3.0);
    assert_eq!((max, tmax), (6.0, 3.0));
    assert_eq!(extremes(&t, &v, 0.0, 0.5).1 .0, 2.0);
}

#[test]
fn trapezoid_integral_of_a_line_is_exact() {
    // v = 2t on samples every 0.5 h; the integral from 0.25 to 2.75 is
    // t^2 evaluated: 7.5625 - 0.0625 = 7.5.
    let t: Vec<f64> = (0..=6).map(|i| i as f64 * 0.5).collect();
    let v: Vec<f64> = t.iter().map(|x| 2.0 * x).collect();
    assert!((integral(&t, &v, 0.25, 2.75) - 7.5).abs() < 1e-12);
}

#[test]
fn half_effect_ends_where_the_series_crosses_half_its_rise() {
    // Rises from 100 to 900 at 2 h, falls linearly to 100 at 10 h: half
    // of the rise (500) is crossed at 6 h.
    let t: Vec<f64> = (0..=12).map(|i| i as f64).collect();
    let v: Vec<f64> = t
        .iter()
        .map(|&x| {
            if x <= 2.0 {
                100.0 + 400.0 * x
            } else {
                (900.0 - 100.0 * (x - 2.0)).max(100.0)
            }
        })
        .collect();
    assert!((half_effect_end(&t, &v, 12.0) - 6.0).abs() < 1e-12);
    // A series still high at the window's end reports the end.
    assert_eq!(half_effect_end(&t, &v, 4.0), 4.0);
}

#[test]
fn first_reach_interpolates_the_crossing() {
    let t = [0.0, 1.0, 2.0];
    let v = [100.0, 300.0, 500.0];
    assert_eq!(first_reach(&t, &v, 400.0, 2.0), Some(1.5));
    assert_eq!(first_reach(&t, &v, 600.0, 2.0), None);
    assert_eq!(first_reach(&t, &v, 50.0, 2.0), Some(0.0));
}
