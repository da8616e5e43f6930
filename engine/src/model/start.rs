//! The steady start (docs/model.md, the start): the habitual intake is a
//! property of the patient (given, or the documented default for the sex)
//! and the osmotic threshold for vasopressin is individual: it is solved,
//! within a window around the population mean, so that the urine of the
//! start replaces exactly what the patient habitually takes in. Only when
//! no threshold in that window balances (another stimulus holds vasopressin
//! up, or the solute load is too small or too large) is the water intake
//! solved instead, said so in [`super::StartBalance`], and refused when it
//! would need more drinking than a healthy adult does without a cause that
//! explains it.

use super::{Calibration, Inputs, Model, Switches, WaterIntakeSource};
use crate::body::StateSlot;
use crate::causes::Cause;
use crate::error::InputError;
use crate::params::Params;
use crate::patient::{ResolvedPatient, Sex};
use crate::physiology::osmoregulation::{self, ThresholdFit};
use crate::units;

/// The habitual water intake in L/day and where it comes from.
pub fn habitual_water_l_day(patient: &ResolvedPatient, p: &Params) -> (f64, WaterIntakeSource) {
    if p.habitual_water_l_day > 0.0 {
        (p.habitual_water_l_day, WaterIntakeSource::Given)
    } else {
        let w = match patient.sex {
            Sex::Male => p.habitual_water_man_l_day,
            Sex::Female => p.habitual_water_woman_l_day,
        };
        (w, WaterIntakeSource::DefaultForSex)
    }
}

/// A sodium outside the reference interval needs a cause when the kidneys
/// and the habitual intake are on (a closed system has no start to explain).
pub fn check_sodium_is_explained(
    patient: &ResolvedPatient,
    p: &Params,
    switches: Switches,
) -> Result<(), InputError> {
    let outside = patient.na < p.na_reference_low_mmol_l || patient.na > p.na_reference_high_mmol_l;
    if outside && patient.cause == Cause::None && switches.kidneys && switches.habitual_intake {
        return Err(InputError::Missing {
            field: "cause".into(),
            why: format!(
                "serum sodium {} mmol/L lies outside the reference interval {}-{} mmol/L, and a steady start needs to know what keeps it there. Name the cause:\n{}",
                patient.na,
                p.na_reference_low_mmol_l,
                p.na_reference_high_mmol_l,
                Cause::menu()
            ),
        });
    }
    Ok(())
}

/// Urine flow (L/h) and vasopressin (pmol/L) of the start with the
/// collecting duct in step with plasma vasopressin, at a given threshold.
fn urine_at(model: &mut Model, y: &mut [f64], standing: &Inputs, threshold: f64) -> (f64, f64) {
    model.calibration.avp_threshold_mosm_kg = threshold;
    y[StateSlot::RenalV2Effect as usize] = model.fluxes(y, standing).v2_target_pmol_l;
    let f = model.fluxes(y, standing);
    (f.urine_l_h, f.vasopressin_pmol_l)
}

/// Solve the individual threshold (or, failing that, the water intake) so
/// that the start is steady, set the collecting duct in step with it, and
/// record the balance in `calibration.start`.
pub fn balance_the_start(
    patient: &ResolvedPatient,
    p: &Params,
    switches: Switches,
    calibration: &mut Calibration,
    y: &mut [f64],
) -> Result<(), InputError> {
    check_sodium_is_explained(patient, p, switches)?;
    let standing = patient.cause.standing_inputs();
    let mut probe = Model {
        params: p.clone(),
        calibration: calibration.clone(),
        switches,
    };
    let centre = p.avp_threshold_mosm_kg;
    let (low, high) = (
        centre - p.avp_threshold_spread_mosm_kg,
        centre + p.avp_threshold_spread_mosm_kg,
    );
    let on = |b: bool, x: f64| if b { x } else { 0.0 };
    let extrarenal = on(switches.insensible_loss, calibration.insensible_l_h)
        - on(switches.metabolic_water, calibration.metabolic_water_l_h);
    let (water_l_h, source, threshold) = if switches.habitual_intake && switches.kidneys {
        let (w_day, given) = habitual_water_l_day(patient, p);
        let w = units::per_day_to_per_h(w_day);
        let fit = osmoregulation::solve_threshold(
            |t| urine_at(&mut probe, y, &standing, t).0,
            w - extrarenal,
            low,
            high,
        );
        match fit {
            ThresholdFit::Found(t) => (w, given, t),
            // An intake the scenario gave is honoured even when no
            // threshold balances it: the start is then not steady, and
            // says so (for example more drinking than a low-solute diet
            // lets the kidney excrete).
            ThresholdFit::TooConcentrated(t) | ThresholdFit::TooDilute(t)
                if given == WaterIntakeSource::Given =>
            {
                (w, given, t)
            }
            ThresholdFit::TooConcentrated(edge) | ThresholdFit::TooDilute(edge) => {
                // When no threshold in the window changes the urine of the
                // start (another stimulus, or none, sets vasopressin), the
                // start says nothing about this patient's own threshold:
                // take the population's, which decides what happens once
                // the other stimulus goes. Otherwise the nearest edge.
                let (at_low, at_high) = (
                    urine_at(&mut probe, y, &standing, low).0,
                    urine_at(&mut probe, y, &standing, high).0,
                );
                let t = if (at_high - at_low).abs() <= 1e-9 * at_high.abs().max(1e-12) {
                    centre
                } else {
                    edge
                };
                let urine = urine_at(&mut probe, y, &standing, t).0;
                let needed = (urine + extrarenal).max(0.0);
                let needed_day = units::per_h_to_per_day(needed);
                let explained = matches!(
                    patient.cause,
                    // Drinking beyond need, or the polydipsia that follows an
                    // osmotic diuresis of glucose (common practice).
                    Cause::PrimaryPolydipsia | Cause::LowSoluteIntake | Cause::InsulinDeficiency
                );
                if needed_day > p.unexplained_water_intake_max_l_day && !explained {
                    return Err(InputError::Conflict {
                        field: "habitual_water_l_day".into(),
                        other: "cause".into(),
                        why: format!(
                            "a steady start at serum sodium {} mmol/L would need {needed_day:.1} L/day of drinking (more than {} L/day): that is primary polydipsia. Give cause primary_polydipsia (or low_solute_intake), or a cause that holds vasopressin up, or set the patient's habitual_water_l_day",
                            patient.na, p.unexplained_water_intake_max_l_day
                        ),
                    });
                }
                (needed, WaterIntakeSource::SolvedForBalance, t)
            }
        }
    } else if switches.habitual_intake {
        // No kidneys: the habitual intake replaces the extrarenal loss.
        (
            extrarenal.max(0.0),
            WaterIntakeSource::SolvedForBalance,
            centre,
        )
    } else {
        (0.0, WaterIntakeSource::NotApplicable, centre)
    };
    let (urine, vasopressin) = urine_at(&mut probe, y, &standing, threshold);
    let f = probe.fluxes(y, &standing);
    calibration.avp_threshold_mosm_kg = threshold;
    if switches.habitual_intake {
        calibration.habitual_water_l_h = water_l_h;
        if switches.kidneys {
            calibration.habitual_na_mmol_h = f.urine_na_mmol_h;
            calibration.habitual_k_mmol_h = f.urine_k_mmol_h;
        }
    }
    let start = &mut calibration.start;
    start.habitual_water_l_day = units::per_h_to_per_day(calibration.habitual_water_l_h);
    start.water_intake_source = source;
    start.habitual_na_mmol_day = units::per_h_to_per_day(calibration.habitual_na_mmol_h);
    start.habitual_k_mmol_day = units::per_h_to_per_day(calibration.habitual_k_mmol_h);
    start.vasopressin_pmol_l = vasopressin;
    start.urine_l_day = units::per_h_to_per_day(urine);
    start.urine_osm_mosm_kg = if switches.kidneys { f.urine_osm } else { 0.0 };
    let net = water_l_h + on(switches.metabolic_water, calibration.metabolic_water_l_h)
        - on(switches.insensible_loss, calibration.insensible_l_h)
        - urine;
    start.steady = !switches.habitual_intake || net.abs() < 1e-6;
    Ok(())
}

/// With thirst on, part of the habitual drinking is drinking at will: the
/// thirst the start's plasma osmolality gives (its onset at the patient's
/// own vasopressin threshold plus the offset) takes the place of that much
/// of the habitual drinks, so the total intake, and the balance solved
/// above, stay as they were. When thirst alone would drink more than the
/// habitual drinks (food water stays food), the onset is raised until it
/// drinks exactly them. With thirst off, only the onset is recorded.
pub fn share_drinking_with_thirst(
    patient: &ResolvedPatient,
    p: &Params,
    switches: Switches,
    calibration: &mut Calibration,
    y: &[f64],
) {
    calibration.thirst_onset_raise_mosm_kg = 0.0;
    let standing = patient.cause.standing_inputs();
    let probe = |c: &Calibration| Model {
        params: p.clone(),
        calibration: c.clone(),
        switches,
    };
    let thirst_on = p.thirst_enabled >= 0.5 && switches.habitual_intake;
    let mut thirst = 0.0;
    if thirst_on {
        let m = probe(calibration);
        let u = m.habitual_inputs().plus(&standing);
        thirst = m.fluxes(y, &u).thirst_water_l_h;
        let plasma_osm = m.observe_state(y).osmolality_mosm_kg;
        let food = units::per_day_to_per_h(p.food_water_l_day).min(calibration.habitual_water_l_h);
        let drinks = calibration.habitual_water_l_h - food;
        if thirst > drinks && p.thirst_threshold_mosm_kg <= 0.0 {
            let onset =
                osmoregulation::onset_for_drinking(plasma_osm, drinks, p.thirst_gain_l_h_per_mosm);
            let unraised = osmoregulation::thirst_onset_mosm_kg(
                0.0,
                calibration.avp_threshold_mosm_kg,
                p.thirst_offset_mosm_kg,
                0.0,
            );
            calibration.thirst_onset_raise_mosm_kg = onset - unraised;
            let m = probe(calibration);
            thirst = m
                .fluxes(y, &m.habitual_inputs().plus(&standing))
                .thirst_water_l_h;
        }
        thirst = thirst.min(calibration.habitual_water_l_h);
        calibration.habitual_water_l_h -= thirst;
    }
    calibration.start.thirst_onset_mosm_kg = osmoregulation::thirst_onset_mosm_kg(
        p.thirst_threshold_mosm_kg,
        calibration.avp_threshold_mosm_kg,
        p.thirst_offset_mosm_kg,
        calibration.thirst_onset_raise_mosm_kg,
    );
    calibration.start.thirst_water_l_day = units::per_h_to_per_day(thirst);
}
