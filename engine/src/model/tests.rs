//! Unit tests of the model as a whole: a steady start, compartments,
//! start balance, refusals and conservation.

use crate::Sex;

use super::{Inputs, Model, Switches};
use crate::body::Species;
use crate::body::{Body, StateSlot, N_STATES};
use crate::params::Params;
use crate::patient::Patient;

fn healthy() -> (Model, Body) {
    let params = Params::default();
    let patient = Patient::healthy(Sex::Male, 40.0, 70.0)
        .resolve(&params)
        .unwrap();
    Model::new(&patient, &params, Switches::default()).unwrap()
}

#[test]
fn initial_state_is_steady() {
    let (model, body) = healthy();
    let mut dy = vec![0.0; N_STATES];
    model.derivative(&body.y, &model.habitual_inputs(), &mut dy);
    for (i, (rate, value)) in dy
        .iter()
        .zip(body.y.iter())
        .enumerate()
        .take(StateSlot::InWater as usize)
    {
        let scale = value.abs().max(1e-3);
        assert!(
            rate.abs() / scale < 1e-9,
            "{} drifts: {rate}",
            crate::body::STATE_NAMES[i]
        );
    }
    let f = model.fluxes(&body.y, &model.habitual_inputs());
    assert!((f.filtration_l_h - f.lymph_l_h).abs() < 1e-12);
    assert!((f.albumin_escape_g_h - f.albumin_return_g_h).abs() < 1e-9);
}

#[test]
fn compartments_follow_rules_of_thumb() {
    let (_, body) = healthy();
    let tbw = body.total_water_l();
    assert!((tbw - 42.0).abs() < 1e-9);
    assert!((body.extracellular_l() / tbw - 1.0 / 3.0).abs() < 1e-3);
    let v_c = body.get(StateSlot::CellsL);
    assert!((24.0..=28.0).contains(&v_c), "{v_c}");
    let v_r = body.get(StateSlot::RedCellsL);
    assert!((1.5..=2.2).contains(&v_r), "{v_r}");
}

fn healthy_at(na: f64) -> Model {
    let params = Params::default();
    let mut patient = Patient::healthy(Sex::Male, 30.0, 75.0);
    patient.na = Some(na);
    let patient = patient.resolve(&params).unwrap();
    Model::new(&patient, &params, Switches::default())
        .unwrap()
        .0
}

#[test]
fn a_healthy_start_drinks_and_passes_ordinary_amounts() {
    // Issue acceptance: urine 0.6-2.5 L/day at 136, 140 and 144 mmol/L
    // with the default intake (EFSA 2010: 2.5 L/day for men).
    for na in [136.0, 140.0, 144.0] {
        let s = healthy_at(na).calibration.start;
        assert!(
            (0.6..=2.5).contains(&s.urine_l_day),
            "Na {na}: urine {} L/day",
            s.urine_l_day
        );
        assert!((1.5..=3.0).contains(&s.habitual_water_l_day), "{s:?}");
        assert!((50.0..=1200.0).contains(&s.urine_osm_mosm_kg), "{s:?}");
    }
}

#[test]
fn an_unexplained_low_sodium_is_refused_naming_the_causes() {
    let params = Params::default();
    let mut patient = Patient::healthy(Sex::Female, 70.0, 60.0);
    patient.na = Some(125.0);
    let patient = patient.resolve(&params).unwrap();
    let err = Model::new(&patient, &params, Switches::default()).unwrap_err();
    let text = err.to_string();
    assert!(text.contains("inappropriate_antidiuresis"), "{text}");
    assert!(text.contains("135"), "{text}");
}

#[test]
fn blood_volume_follows_the_published_prediction() {
    // 70 mL/kg for a man without a height (common practice).
    let m = healthy_at(140.0);
    assert!((m.calibration.start.blood_volume_l - 5.25).abs() < 1e-9);
}

#[test]
fn derivative_conserves_every_species() {
    let (model, body) = healthy();
    let u = Inputs {
        water_in_l_h: 0.5,
        na_in_mmol_h: 70.0,
        k_in_mmol_h: 10.0,
        glucose_in_mmol_h: 20.0,
        albumin_in_g_h: 5.0,
        water_out_l_h: 0.1,
        na_out_mmol_h: 6.0,
        blood_loss_l_h: 0.2,
        ..Default::default()
    };
    let mut dy = vec![0.0; N_STATES];
    model.derivative(&body.y, &u, &mut dy);
    for sp in Species::ALL {
        let balance = sp.content(&dy) - sp.cumulative_in(&dy) + sp.cumulative_out(&dy);
        assert!(balance.abs() < 1e-12, "{} leaks {balance}", sp.name());
    }
}

/// A healthy man free to drink: drinking at will takes the place of part of
/// the habitual drinks, the start stays steady, and the thirst onset lies
/// near the own vasopressin threshold (Thompson et al., Clin Sci 1986:
/// thresholds for thirst and vasopressin are similar).
#[test]
fn drinking_at_will_takes_the_place_of_habitual_drinks_and_the_start_stays_steady() {
    let params = Params {
        thirst_enabled: 1.0,
        ..Params::default()
    };
    let patient = Patient::healthy(Sex::Male, 25.0, 75.0)
        .resolve(&params)
        .unwrap();
    let (model, body) = Model::new(&patient, &params, Switches::default()).unwrap();
    let u = model.habitual_inputs();
    let f = model.fluxes(&body.y, &u);
    let st = &model.calibration.start;
    // The total intake is the habitual 2.5 L/day (EFSA 2010, men).
    let total_l_day = 24.0 * (u.oral_water_l_h + f.thirst_water_l_h);
    assert!((total_l_day - 2.5).abs() < 1e-9, "{total_l_day}");
    assert!(f.thirst_water_l_h > 0.0);
    assert!((24.0 * f.thirst_water_l_h - st.thirst_water_l_day).abs() < 1e-12);
    // Food water stays food: at most the drinks are drunk at will.
    assert!(u.oral_water_l_h >= params.food_water_l_day / 24.0 - 1e-12);
    let onset = st.thirst_onset_mosm_kg;
    let own = model.calibration.avp_threshold_mosm_kg;
    assert!(onset >= own + params.thirst_offset_mosm_kg - 1e-9);
    assert!(onset - own < 3.0, "onset {onset}, own threshold {own}");
    let mut dy = vec![0.0; N_STATES];
    model.derivative(&body.y, &u, &mut dy);
    for (i, (rate, value)) in dy
        .iter()
        .zip(&body.y)
        .enumerate()
        .take(StateSlot::InWater as usize)
    {
        assert!(
            rate.abs() / value.abs().max(1e-3) < 1e-9,
            "{} drifts: {rate}",
            crate::body::STATE_NAMES[i]
        );
    }
    // Plasma diluted by 2 mOsm/kg: thirst stops.
    let mut diluted = body.y.clone();
    diluted[StateSlot::PlasmaL as usize] *= 1.01;
    assert_eq!(model.fluxes(&diluted, &u).thirst_water_l_h, 0.0);
}
