use super::*;
use crate::limits::choose;
use crate::patient::Onset;

fn line(na0: f64, rate_per_h: f64, hours: f64, step_h: f64) -> (Vec<f64>, Vec<f64>) {
    let n = (hours / step_h).round() as usize;
    let t: Vec<f64> = (0..=n).map(|i| i as f64 * step_h).collect();
    let na = t.iter().map(|t| na0 + rate_per_h * t).collect();
    (t, na)
}

fn hypo(symptoms: Symptoms) -> Situation {
    Situation {
        start_na_mmol_l: 118.0,
        onset: Onset::Chronic,
        symptoms,
    }
}

#[test]
fn us_minimum_is_four_in_the_first_day_at_both_risks() {
    // Verbalis et al. 2013: a minimum correction of 4-8 mmol/L per 24 h
    // (4-6 at high risk), from memory: at least 4 by 24 h.
    for high_risk in [false, true] {
        let us = choose("us-2013", high_risk).unwrap();
        let (t, na) = line(118.0, 3.5 / 24.0, 48.0, 1.0);
        let r = check(&t, &na, &us, &hypo(Symptoms::None));
        assert_eq!(r.len(), 1);
        assert_eq!(r[0].status, GoalStatus::Missed);
        assert!((r[0].change_mmol_l - 3.5).abs() < 1e-9);
        assert_eq!(r[0].time_h, 24.0);
        // Reached later in the run (4 at ~27.4 h: first sample 28 h).
        assert_eq!(r[0].reached_h, Some(28.0));
        let (t, na) = line(118.0, 4.5 / 24.0, 48.0, 1.0);
        let r = check(&t, &na, &us, &hypo(Symptoms::None));
        assert_eq!(r[0].status, GoalStatus::Met);
        assert_eq!(r[0].reached_h, Some(22.0));
    }
}

#[test]
fn european_first_hour_aim_applies_to_severe_symptoms_only() {
    // Spasovski et al. 2014: for severe symptoms, aim for a 5 mmol/L rise
    // in the first hour (from memory).
    let eu = choose("europe-2014", false).unwrap();
    let (t, na) = line(118.0, 6.0, 1.0, 1.0 / 12.0);
    let r = check(&t, &na, &eu, &hypo(Symptoms::Severe));
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].goal.by_h, 1.0);
    assert_eq!(r[0].status, GoalStatus::Met);
    let (t, na) = line(118.0, 4.0, 2.0, 1.0 / 12.0);
    let r = check(&t, &na, &eu, &hypo(Symptoms::Severe));
    assert_eq!(r[0].status, GoalStatus::Missed);
    assert!((r[0].change_mmol_l - 4.0).abs() < 1e-9);
    assert!(check(&t, &na, &eu, &hypo(Symptoms::None)).is_empty());
    // Moderately severe symptoms: aim for 5 mmol/L in 24 h instead
    // (Spasovski et al. 2014, from memory).
    let r = check(&t, &na, &eu, &hypo(Symptoms::Moderate));
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].goal.by_h, 24.0);
    // The run stops at 2 h: the first-day aim is not judged.
    assert_eq!(r[0].status, GoalStatus::RunTooShort);
    assert_eq!(r[0].time_h, 2.0);
}

#[test]
fn rise_goals_do_not_apply_to_hypernatremia() {
    // Serum sodium above 145 mmol/L is hypernatremia (common practice).
    let us = choose("us-2013", false).unwrap();
    let hyper = Situation {
        start_na_mmol_l: 157.0,
        ..hypo(Symptoms::Severe)
    };
    assert!(us.applicable_goals(&hyper).is_empty());
}

#[test]
fn fall_below_start_during_hyponatremia_correction_is_reported() {
    // Isotonic fluid in inappropriate antidiuresis can lower sodium further
    // (common practice): 118 falling to 116.5 at 6 h, then rising.
    let t: Vec<f64> = (0..=24).map(|h| h as f64).collect();
    let na: Vec<f64> = t
        .iter()
        .map(|&h| {
            if h <= 6.0 {
                118.0 - 0.25 * h
            } else {
                116.5 + 0.3 * (h - 6.0)
            }
        })
        .collect();
    let w = below_start(&t, &na, &hypo(Symptoms::None)).expect("a warning");
    // 0.5 below the start is reached at 2 h; the first sample beyond it is 3 h.
    assert_eq!(w.first_time_h, 3.0);
    assert_eq!(w.lowest_mmol_l, 116.5);
    assert_eq!(w.lowest_time_h, 6.0);
    assert_eq!(w.start_mmol_l, 118.0);
    // Not for a hypernatremic start, and not for a dip within the tolerance.
    let hyper = Situation {
        start_na_mmol_l: 157.0,
        ..hypo(Symptoms::None)
    };
    assert!(below_start(&t, &na, &hyper).is_none());
    let shallow: Vec<f64> = na.iter().map(|v| v.max(117.6)).collect();
    assert!(below_start(&t, &shallow, &hypo(Symptoms::None)).is_none());
}
