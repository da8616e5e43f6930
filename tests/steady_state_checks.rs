//! Model check M6 of REFERENCES.md: a healthy resting adult with no inputs
//! beyond habitual intake stays at steady state for 72 h, with filtration
//! equal to lymph flow at 2–3 L/day (Guyton & Hall textbook lymph flow).

use tidewater::Sex;

use tidewater::{Patient, Plan, Switches, N_STATES_BODY};
use tidewater_checks::*;

fn check_steady(patient: Patient, switches: Switches) {
    let per_70_kg = 70.0 / patient.weight_kg;
    let mut plan = Plan::new(patient).run_for(72.0).sample_every(1.0);
    plan.switches = switches;
    let traj = run(plan);
    assert_balanced(&traj);
    let y0 = &traj.samples[0].y;
    for s in &traj.samples {
        for (i, (now, start)) in s.y.iter().zip(y0.iter()).take(N_STATES_BODY).enumerate() {
            let rel = (now - start).abs() / start.abs().max(1e-6);
            assert!(
                rel < 0.005,
                "{} moved {:.3} % by {} h",
                tidewater::STATE_NAMES[i],
                rel * 100.0,
                s.time_h
            );
        }
        // Lymph flow scales with body size: 2–3 L/day for a 70 kg adult.
        let lymph_l_day = s.obs.lymph_ml_h * 24.0 / 1000.0 * per_70_kg;
        assert!(
            (2.0..=3.0).contains(&lymph_l_day),
            "lymph {lymph_l_day:.2} L/day per 70 kg"
        );
        assert!((s.obs.filtration_ml_h - s.obs.lymph_ml_h).abs() < 1e-3 * s.obs.lymph_ml_h);
    }
}

#[test]
fn m6_healthy_adult_with_kidneys_is_steady_for_72_h() {
    check_steady(Patient::healthy(Sex::Male, 40.0, 70.0), Switches::default());
    check_steady(
        Patient::healthy(Sex::Female, 70.0, 58.0),
        Switches::default(),
    );
}

#[test]
fn m6_closed_system_is_steady_for_72_h() {
    check_steady(Patient::healthy(Sex::Male, 25.0, 90.0), Switches::closed());
}
