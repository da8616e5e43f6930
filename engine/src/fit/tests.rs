//! The fit on synthetic observations: a known patient is simulated, its
//! labs are read off (with noise in the recovery check), and the fit must
//! find the patient again.

use super::*;
use crate::observations::{Lab, ObservedRow};
use std::path::Path;

/// An invented patient whose inappropriate antidiuresis ends at a time
/// the fit does not know.
pub(crate) const SETTLING: &str = r#"
    patient(#{ sex: "female", age_years: 58, weight_kg: 66, na: 122, onset: "chronic", cause: "inappropriate_antidiuresis" });
    limits("europe-2014", false);
    run_for(hours(36));
    at(hours(0), fluid_restriction(litres(1)));
    at(hours(0), infuse("saline_3", ml(100), minutes(20)));
"#;

/// Observations of `truth` at `times`: sodium and the urine collected.
pub(crate) fn observe(
    truth: &Trajectory,
    times: &[f64],
    noise: &mut dyn FnMut() -> f64,
) -> Observations {
    let mut since = 0.0;
    let rows = times
        .iter()
        .enumerate()
        .map(|(i, &t)| {
            let na = residuals::model_value(truth, Lab::Na, t, since, 66.0) + noise();
            let mut values = vec![(Lab::Na, (na * 10.0).round() / 10.0)];
            if i > 0 {
                let u = residuals::model_value(truth, Lab::UrineMl, t, since, 66.0);
                values.push((Lab::UrineMl, (u * (1.0 + 0.05 * noise())).max(0.0).round()));
            }
            since = t;
            ObservedRow {
                line: i + 2,
                time_h: t,
                values,
            }
        })
        .collect();
    Observations {
        file: "synthetic.csv".into(),
        rows,
    }
}

#[test]
fn the_fit_finds_when_the_antidiuresis_ended() {
    let scenario = Scenario::from_source("s.rhai", SETTLING, Path::new(".")).unwrap();
    let unknowns = default_unknowns(scenario.plan()).unwrap();
    let names: Vec<&str> = unknowns.iter().map(|u| u.name.as_str()).collect();
    assert!(names.contains(&CAUSE_RESOLVES_H), "{names:?}");
    let none = Observations {
        file: "x".into(),
        rows: vec![],
    };
    let model = FitModel::new(&scenario, &unknowns, &none);
    // The truth: body water 10 % above the prediction, the secretion ends
    // at 5 h.
    let mut truth_values: Vec<(String, f64)> = unknowns
        .iter()
        .map(|u| (u.name.clone(), u.median()))
        .collect();
    for (n, v) in truth_values.iter_mut() {
        if n == CAUSE_RESOLVES_H {
            *v = 5.0;
        }
    }
    let truth = model.run(&truth_values, None, 1e-8).unwrap();
    let obs = observe(&truth, &[0.0, 2.0, 4.0, 6.0, 8.0, 10.0], &mut || 0.0);
    let model = FitModel::new(&scenario, &unknowns, &obs);
    let fit = fit(&model).unwrap();
    eprintln!("{:#?}", fit.estimates);
    eprintln!("{:?}", fit.convergence);
    let t = fit
        .estimates
        .iter()
        .find(|e| e.name == CAUSE_RESOLVES_H)
        .unwrap();
    assert!((t.value - 5.0).abs() < 1.0, "{t:?}");
    assert!(t.p5 <= 5.0 && 5.0 <= t.p95, "{t:?}");
    let f = forecast(&model, &fit, 40, 1).unwrap();
    eprintln!("{:?}", f.limits);
}
