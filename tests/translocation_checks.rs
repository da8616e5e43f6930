//! Model check M3 of REFERENCES.md: with insulin absent in a closed system,
//! glucose accumulates as an effective osmole, draws water out of cells and
//! lowers serum sodium by 1.6–2.4 mmol/L per 100 mg/dL of glucose (Katz,
//! NEJM 1973: 1.6; Hillier et al., Am J Med 1999: 2.4).

use tidewater::Sex;

use tidewater::interpolate;
use tidewater::{units, Patient, Plan};
use tidewater_checks::*;

#[test]
fn m3_translocational_fall_of_sodium() {
    let mut plan = Plan::new(Patient::healthy(Sex::Male, 45.0, 75.0))
        .closed_system()
        .run_for(12.0);
    plan.params.set("insulin_activity", 0.0).unwrap();
    let traj = run(plan);
    assert_balanced(&traj);
    let times = traj.times();
    let glucose: Vec<f64> = traj.samples.iter().map(|s| s.obs.glucose_mmol_l).collect();
    let na = traj.sodium();
    let step = units::glucose_mg_dl_to_mmol_l(100.0);
    // First time glucose has risen by 100 mg/dL.
    let j = glucose
        .iter()
        .position(|g| g - glucose[0] >= step)
        .expect("glucose rises by 100 mg/dL");
    let t = times[j - 1]
        + (times[j] - times[j - 1]) * (glucose[0] + step - glucose[j - 1])
            / (glucose[j] - glucose[j - 1]);
    let fall = na[0] - interpolate(&times, &na, t);
    assert!(
        (1.6..=2.4).contains(&fall),
        "sodium fell {fall:.2} mmol/L per 100 mg/dL of glucose (expected 1.6–2.4)"
    );
    // Cells lost water: glucose is an effective osmole outside them.
    assert!(traj.last().obs.cells_l < traj.samples[0].obs.cells_l);
}
