//! Changes to the model during a run (docs/model.md, changes during a run):
//! a parameter set at a time or by a rule, and a cause that resolves. The
//! commonest path to overcorrection is a cause that goes away (a drug
//! stopped, nausea settled, cortisol replaced): vasopressin falls and a
//! water diuresis follows.
//!
//! A change never recalibrates the whole start (that would re-solve the
//! patient's osmotic threshold around the present, low sodium, and hide
//! the very diuresis the change should cause). Parameters split in two:
//! those the running model reads as it goes ([`READ_AS_IT_RUNS`]), which
//! take effect at once, and those that shaped one piece of the start
//! ([`RECALIBRATED`]), whose piece is recomputed. Every other parameter
//! shapes the start as a whole (body composition, conductances, resting
//! pressures) and is refused during a run, by name.

use super::{Inputs, Model};
use crate::causes::Cause;
use crate::error::InputError;
use crate::params::Params;
use crate::patient::ResolvedPatient;
use crate::units;

/// Parameters the model reads at every evaluation: a change acts at once.
pub const READ_AS_IT_RUNS: &[&str] = &[
    "albumin_escape_per_h",
    "albumin_return_flow_exponent",
    "avp_floor_pmol_l",
    "avp_half_max_pmol_l",
    "avp_hill",
    "avp_slope_pmol_l_per_mosm",
    "brain_osmolyte_loss_h",
    "brain_osmolyte_regain_h",
    "desmopressin_absorption_h",
    "desmopressin_avp_equiv_pmol_l_per_ug",
    "desmopressin_half_life_h",
    "drug_electrolyte_scale_max",
    "glucose_insulin_independent_fraction",
    "glucose_renal_threshold_mmol_l",
    "glucose_uptake_km_mmol_l",
    "insulin_activity",
    "insulin_gain",
    "kaliuresis_exponent",
    "loop_diuretic_absorption_h",
    "loop_diuretic_ec50_mg",
    "loop_diuretic_effect_delay_h",
    "loop_diuretic_half_life_h",
    "loop_diuretic_hill",
    "loop_diuretic_k_mmol_h",
    "loop_diuretic_na_mmol_h",
    "loop_diuretic_urine_osm",
    "natriuresis_gain",
    "sigma_albumin",
    "sigma_urea_brain",
    "sigma_urea_cells",
    "sigma_urea_rbc",
    "thiazide_k_mmol_h",
    "thiazide_min_urine_osm",
    "thiazide_na_mmol_h",
    "thirst_enabled",
    "thirst_gain_l_h_per_mosm",
    "thirst_max_l_h",
    "thirst_threshold_mosm_kg",
    "v2_antagonist_half_life_h",
    "v2_antagonist_ki_mg",
    "v2_response_h",
    "volume_avp_gain_pmol_l",
    "volume_avp_threshold_fraction",
];

/// Parameters that set one piece of the start, recomputed on a change:
/// the osmotic threshold, the habitual intake (the running habitual stream
/// takes the new rates) and urea generation.
pub const RECALIBRATED: &[&str] = &[
    "avp_threshold_mosm_kg",
    "habitual_water_l_day",
    "na_intake_mmol_day",
    "k_intake_mmol_day",
    "urea_generation_mmol_kg_day",
];

/// What a change asks of the schedule besides the new model.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ChangeEffects {
    /// Streams to stop (a standing treatment the resolved cause implied).
    pub stop: Vec<String>,
    /// New rates of the habitual intake, if it changed.
    pub habitual: Option<Inputs>,
}

/// Check that `name` may change during a run and that `value` is
/// admissible.
pub fn check_change(name: &str, value: f64) -> Result<(), InputError> {
    Params::default().set(name, value)?;
    if READ_AS_IT_RUNS.contains(&name) || RECALIBRATED.contains(&name) {
        return Ok(());
    }
    Err(InputError::Conflict {
        field: name.to_string(),
        other: "a change during the run".into(),
        why: format!(
            "{name} shapes the start as a whole (body composition, conductances or resting pressures), so it can only be set before the run, at the top level of the script. Parameters that may change during a run: {}",
            READ_AS_IT_RUNS
                .iter()
                .chain(RECALIBRATED)
                .copied()
                .collect::<Vec<_>>()
                .join(", ")
        ),
    })
}

/// Check that the patient's cause can resolve during a run.
pub fn check_resolvable(cause: Cause) -> Result<(), InputError> {
    let why = match cause {
        Cause::None => "the patient has no cause to resolve (cause none)",
        Cause::Hypovolemic => "hypovolemia resolves as the volume is restored: give isotonic fluid, and the volume-driven vasopressin falls by itself",
        _ => return Ok(()),
    };
    Err(InputError::Conflict {
        field: "resolve_cause".into(),
        other: format!("cause {}", cause.name()),
        why: why.into(),
    })
}

impl Model {
    /// The model with one parameter changed from now on, and what the
    /// schedule must do about it.
    pub fn with_param(
        &self,
        name: &str,
        value: f64,
        patient: &ResolvedPatient,
    ) -> Result<(Model, ChangeEffects), InputError> {
        check_change(name, value)?;
        let mut m = self.clone();
        m.params.set(name, value)?;
        let mut effects = ChangeEffects::default();
        let c = &mut m.calibration;
        match name {
            "avp_threshold_mosm_kg" => c.avp_threshold_mosm_kg = value,
            "urea_generation_mmol_kg_day" => {
                c.urea_generation_mmol_h = units::per_day_to_per_h(value * patient.weight_kg)
            }
            "habitual_water_l_day" => {
                c.habitual_water_l_h =
                    units::per_day_to_per_h(super::habitual_water_l_day(patient, &m.params).0)
            }
            "na_intake_mmol_day" => c.habitual_na_mmol_h = units::per_day_to_per_h(value),
            "k_intake_mmol_day" => c.habitual_k_mmol_h = units::per_day_to_per_h(value),
            _ => {}
        }
        if matches!(
            name,
            "habitual_water_l_day" | "na_intake_mmol_day" | "k_intake_mmol_day"
        ) {
            effects.habitual = Some(m.habitual_inputs());
        }
        Ok((m, effects))
    }

    /// The model once the patient's cause has gone away: the parameters
    /// the cause set return to their defaults (and the standing treatment
    /// it implied stops). The patient's own threshold, solved at the start,
    /// stays.
    pub fn with_cause_resolved(
        &self,
        patient: &ResolvedPatient,
    ) -> Result<(Model, ChangeEffects), InputError> {
        check_resolvable(patient.cause)?;
        let d = Params::default();
        let mut changes: Vec<(&str, f64)> = Vec::new();
        let mut stop = Vec::new();
        match patient.cause {
            Cause::None | Cause::Hypovolemic => {}
            Cause::InappropriateAntidiuresis => {
                changes.push(("avp_floor_pmol_l", d.avp_floor_pmol_l))
            }
            Cause::ResetOsmostat => {
                changes.push(("avp_threshold_mosm_kg", d.avp_threshold_mosm_kg));
                changes.push(("thirst_threshold_mosm_kg", d.thirst_threshold_mosm_kg));
            }
            Cause::LowSoluteIntake => {
                changes.push(("na_intake_mmol_day", d.na_intake_mmol_day));
                changes.push(("k_intake_mmol_day", d.k_intake_mmol_day));
                changes.push(("urea_generation_mmol_kg_day", d.urea_generation_mmol_kg_day));
            }
            Cause::PrimaryPolydipsia => {
                changes.push(("habitual_water_l_day", d.habitual_water_l_day))
            }
            Cause::DiureticInduced => stop.extend(
                patient
                    .cause
                    .standing_streams()
                    .into_iter()
                    .map(|s| s.label),
            ),
            Cause::InsulinDeficiency => changes.push(("insulin_activity", d.insulin_activity)),
            // Water now reaches the patient, who drinks when thirsty.
            Cause::InadequateWaterIntake => changes.push(("thirst_enabled", 1.0)),
        }
        let mut model = self.clone();
        let mut effects = ChangeEffects {
            stop,
            habitual: None,
        };
        for (name, value) in changes {
            let (m, e) = model.with_param(name, value, patient)?;
            model = m;
            if e.habitual.is_some() {
                effects.habitual = e.habitual;
            }
        }
        Ok((model, effects))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Switches;
    use crate::patient::Patient;
    use crate::Sex;

    fn model_for(cause: &str, na: f64) -> (Model, ResolvedPatient) {
        let params = Params::default();
        let mut patient = Patient::healthy(Sex::Female, 60.0, 60.0);
        patient.na = Some(na);
        patient.cause = Some(Cause::parse(cause).unwrap());
        let resolved = patient.resolve(&params).unwrap();
        let mut p = params.clone();
        resolved.cause.apply(&resolved, &mut p);
        let (m, _) = Model::new(&resolved, &p, Switches::default()).unwrap();
        (m, resolved)
    }

    #[test]
    fn every_listed_parameter_exists_and_only_those_may_change() {
        for name in READ_AS_IT_RUNS.iter().chain(RECALIBRATED) {
            let info =
                crate::params::info(name).unwrap_or_else(|| panic!("{name} is no parameter"));
            assert!(check_change(name, info.default).is_ok(), "{name}");
        }
        let err = check_change("cell_water_equilibration_min", 4.0).unwrap_err();
        assert!(err.to_string().contains("before the run"), "{err}");
        assert!(check_change("avp_floor_pmol_l", -1.0).is_err());
    }

    #[test]
    fn parameters_read_as_it_runs_are_read_by_the_model() {
        // Each listed parameter, moved within its range, moves some rate of
        // a state where every mechanism is active; a parameter the model
        // did not read as it runs would leave every rate unchanged.
        use crate::body::StateSlot;
        let (mut m, patient) = model_for("insulin_deficiency", 132.0);
        let mut y = Model::new(&patient, &m.params, m.switches).unwrap().1.y;
        y[StateSlot::Desmopressin as usize] = 2.0;
        y[StateSlot::DesmopressinDepot as usize] = 2.0;
        y[StateSlot::V2Antagonist as usize] = 10.0;
        y[StateSlot::RenalV2Effect as usize] = 2.0;
        y[StateSlot::LoopDiuretic as usize] = 6.0;
        y[StateSlot::LoopDiureticEffectSite as usize] = 5.0;
        y[StateSlot::LoopDiureticDepot as usize] = 5.0;
        y[StateSlot::PlasmaL as usize] *= 0.85;
        y[StateSlot::BrainOsmolytes as usize] *= 0.9;
        y[StateSlot::UreaCells as usize] *= 1.2;
        y[StateSlot::UreaRedCells as usize] *= 1.2;
        y[StateSlot::GlucosePlasma as usize] *= 3.0;
        let u = Inputs {
            thiazide_effect: 0.5,
            ..Default::default()
        };
        m.params.thirst_enabled = 1.0;
        m.params.thirst_threshold_mosm_kg = 281.0;
        m.params.avp_floor_pmol_l = 0.5;
        m.params.insulin_activity = 0.5;
        // A second state with brain osmolytes above their target, so that
        // both the loss and the regain time constants are in use.
        let mut y_high = y.clone();
        y_high[StateSlot::BrainOsmolytes as usize] *= 1.3;
        let rates = |m: &Model| {
            let mut dy = vec![0.0; 2 * crate::body::N_STATES];
            let (a, b) = dy.split_at_mut(crate::body::N_STATES);
            m.derivative(&y, &u, a);
            m.derivative(&y_high, &u, b);
            dy
        };
        // A second set of parameters with thirst below its cap, so that
        // both the gain and the cap are in use in one of the two.
        let mut m_linear = m.clone();
        m_linear.params.thirst_threshold_mosm_kg = 320.0;
        m_linear.params.thirst_max_l_h = 5.0;
        for name in READ_AS_IT_RUNS {
            let moves_a_rate = [&m, &m_linear].iter().any(|base_model| {
                let info = crate::params::info(name).unwrap();
                let now = base_model.params.get(name).unwrap();
                // The floor acts only above the other stimuli: move it
                // high; a switch flips; the cap on drug electrolyte scaling
                // acts only when plasma is more concentrated than at the
                // start: move it to its least.
                let moved = match *name {
                    "avp_floor_pmol_l" => 0.9 * info.max,
                    "thirst_enabled" => 1.0 - now,
                    "drug_electrolyte_scale_max" => info.min,
                    _ if now != 0.0 && now * 1.5 <= info.max => now * 1.5,
                    _ => 0.5 * (info.min + info.max),
                };
                let mut changed = (*base_model).clone();
                changed.params.set(name, moved).unwrap();
                rates(&changed) != rates(base_model)
            });
            assert!(moves_a_rate, "{name} changes no rate");
        }
    }

    #[test]
    fn inappropriate_antidiuresis_resolves_into_a_water_diuresis() {
        let (m, patient) = model_for("inappropriate_antidiuresis", 125.0);
        let body = Model::new(&patient, &m.params, m.switches).unwrap().1;
        let u = m.habitual_inputs();
        let before = m.fluxes(&body.y, &u);
        let (resolved, effects) = m.with_cause_resolved(&patient).unwrap();
        assert_eq!(effects, ChangeEffects::default());
        let after = resolved.fluxes(&body.y, &u);
        assert!(before.vasopressin_pmol_l >= 1.5);
        assert!(
            after.vasopressin_pmol_l < 0.1,
            "{}",
            after.vasopressin_pmol_l
        );
    }

    #[test]
    fn a_resolved_polydipsia_drinks_the_default_and_a_thiazide_stops() {
        let (m, patient) = model_for("primary_polydipsia", 130.0);
        let (r, e) = m.with_cause_resolved(&patient).unwrap();
        let h = e.habitual.expect("habitual intake changes");
        assert!((h.oral_water_l_h - 2.0 / 24.0).abs() < 1e-12, "{h:?}");
        assert!(r.calibration.habitual_water_l_h < m.calibration.habitual_water_l_h);
        let (m, patient) = model_for("diuretic_induced", 130.0);
        let (_, e) = m.with_cause_resolved(&patient).unwrap();
        assert_eq!(e.stop, vec!["thiazide".to_string()]);
    }

    #[test]
    fn causes_that_cannot_resolve_say_why() {
        let (m, patient) = model_for("hypovolemic", 128.0);
        let err = m.with_cause_resolved(&patient).unwrap_err().to_string();
        assert!(err.contains("isotonic"), "{err}");
    }
}
