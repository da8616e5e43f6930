//! Causes of a sodium disorder, named by their physiology. A cause sets
//! several parameters (and standing treatments) together; a scenario can
//! still override any parameter afterwards, one by one.

use crate::error::InputError;
use crate::params::Params;
use crate::patient::ResolvedPatient;
use crate::plan::Stream;
use serde::Serialize;

/// What keeps the patient's sodium where it is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Cause {
    /// None: healthy regulation.
    None,
    /// Extracellular volume depletion: non-osmotic vasopressin until volume
    /// is restored, avid sodium retention.
    Hypovolemic,
    /// Unsuppressible vasopressin (the syndrome of inappropriate
    /// antidiuresis).
    InappropriateAntidiuresis,
    /// Osmoreceptor threshold reset to the patient's present osmolality.
    ResetOsmostat,
    /// Little salt and protein eaten: too few osmoles to excrete water.
    LowSoluteIntake,
    /// Drinking far beyond need.
    PrimaryPolydipsia,
    /// A thiazide taken daily, with mild volume depletion.
    DiureticInduced,
    /// Insulin lacking: glucose accumulates as an effective osmole.
    InsulinDeficiency,
    /// Too little water reaches the patient (cannot reach or ask for it):
    /// hypernatremia with concentrated urine.
    InadequateWaterIntake,
}

/// Accepted names, for messages.
pub const NAMES: &str = "none, hypovolemic, inappropriate_antidiuresis, reset_osmostat, low_solute_intake, primary_polydipsia, diuretic_induced, insulin_deficiency, inadequate_water_intake";

impl Cause {
    /// Parse a cause by name.
    pub fn parse(name: &str) -> Result<Self, InputError> {
        Ok(
            match name
                .trim()
                .to_ascii_lowercase()
                .replace(['-', ' '], "_")
                .as_str()
            {
                "none" | "healthy" => Cause::None,
                "hypovolemic" | "hypovolemia" => Cause::Hypovolemic,
                "inappropriate_antidiuresis" | "siad" | "siadh" => Cause::InappropriateAntidiuresis,
                "reset_osmostat" => Cause::ResetOsmostat,
                "low_solute_intake" | "low_solute" => Cause::LowSoluteIntake,
                "primary_polydipsia" | "polydipsia" => Cause::PrimaryPolydipsia,
                "diuretic_induced" | "thiazide" => Cause::DiureticInduced,
                "insulin_deficiency" => Cause::InsulinDeficiency,
                "inadequate_water_intake" | "water_deprivation" => Cause::InadequateWaterIntake,
                _ => {
                    return Err(InputError::BadChoice {
                        field: "cause".into(),
                        value: name.into(),
                        expected: NAMES.into(),
                    })
                }
            },
        )
    }

    /// Set the parameters this cause implies (values from memory, marked (M)
    /// in the notes beside each).
    pub fn apply(self, patient: &ResolvedPatient, params: &mut Params) {
        match self {
            Cause::None => {}
            // (M) a 12 % extracellular deficit gives ~6 pmol/L of volume-driven vasopressin.
            Cause::Hypovolemic => params.ecf_deficit_fraction = 0.12,
            // (M) a floor of 1.5 pmol/L keeps urine near 500 mOsm/kg.
            Cause::InappropriateAntidiuresis => params.avp_floor_pmol_l = 1.5,
            Cause::ResetOsmostat => {
                let osm = 2.0 * patient.na + patient.glucose_mmol_l + patient.urea_mmol_l;
                params.avp_threshold_mosm_kg = (osm - 1.0).clamp(260.0, 300.0);
                params.thirst_threshold_mosm_kg = (osm + 13.0).clamp(280.0, 320.0);
            }
            Cause::LowSoluteIntake => {
                // (M) tea-and-toast or beer diet: ~40 mmol salt, little protein.
                params.na_intake_mmol_day = 40.0;
                params.k_intake_mmol_day = 20.0;
                params.urea_generation_mmol_kg_day = 2.0;
                // Little food, so little water in food (M).
                params.food_water_l_day = 0.3;
            }
            // (M) twelve litres a day.
            Cause::PrimaryPolydipsia => params.habitual_water_l_day = 12.0,
            Cause::DiureticInduced => params.ecf_deficit_fraction = 0.05,
            Cause::InsulinDeficiency => params.insulin_activity = 0.0,
            // The patient does not drink when thirsty; the intake that
            // holds the start steady is solved and shown.
            Cause::InadequateWaterIntake => params.thirst_enabled = 0.0,
        }
    }

    /// Every cause, in the order messages list them.
    pub const ALL: [Cause; 9] = [
        Cause::None,
        Cause::Hypovolemic,
        Cause::InappropriateAntidiuresis,
        Cause::ResetOsmostat,
        Cause::LowSoluteIntake,
        Cause::PrimaryPolydipsia,
        Cause::DiureticInduced,
        Cause::InsulinDeficiency,
        Cause::InadequateWaterIntake,
    ];

    /// The name scripts and patient files use.
    pub fn name(self) -> &'static str {
        match self {
            Cause::None => "none",
            Cause::Hypovolemic => "hypovolemic",
            Cause::InappropriateAntidiuresis => "inappropriate_antidiuresis",
            Cause::ResetOsmostat => "reset_osmostat",
            Cause::LowSoluteIntake => "low_solute_intake",
            Cause::PrimaryPolydipsia => "primary_polydipsia",
            Cause::DiureticInduced => "diuretic_induced",
            Cause::InsulinDeficiency => "insulin_deficiency",
            Cause::InadequateWaterIntake => "inadequate_water_intake",
        }
    }

    /// What choosing the cause implies for the model, in a line.
    pub fn implies(self) -> &'static str {
        match self {
            Cause::None => "healthy regulation (sodium in the reference interval)",
            Cause::Hypovolemic => "a 12 % extracellular deficit: volume-driven vasopressin and avid sodium retention until volume is restored",
            Cause::InappropriateAntidiuresis => "vasopressin that does not fall below 1.5 pmol/L whatever the osmolality",
            Cause::ResetOsmostat => "the osmotic threshold set just below the present osmolality; water is still excreted",
            Cause::LowSoluteIntake => "little salt and protein eaten, so too few osmoles to excrete water",
            Cause::PrimaryPolydipsia => "twelve litres a day of drinking",
            Cause::DiureticInduced => "a thiazide taken daily and a 5 % extracellular deficit",
            Cause::InsulinDeficiency => "no insulin action: glucose accumulates as an effective osmole",
            Cause::InadequateWaterIntake => "too little water reaches the patient (no drinking on thirst); the intake that holds the start is solved and shown",
        }
    }

    /// Every cause with what it implies, one per line (for messages).
    pub fn menu() -> String {
        Cause::ALL
            .iter()
            .filter(|c| **c != Cause::None)
            .map(|c| format!("  {}: {}", c.name(), c.implies()))
            .collect::<Vec<_>>()
            .join("\n")
    }

    /// The standing treatments' rates at the start (the start is made
    /// steady with them running).
    pub fn standing_inputs(self) -> crate::model::Inputs {
        self.standing_streams()
            .iter()
            .fold(crate::model::Inputs::default(), |acc, s| acc.plus(&s.rates))
    }

    /// Treatments the cause implies that run from the start.
    pub fn standing_streams(self) -> Vec<Stream> {
        match self {
            Cause::DiureticInduced => vec![Stream::thiazide()],
            _ => Vec::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clinicians_abbreviations_name_inappropriate_antidiuresis() {
        // SIAD / SIADH: the abbreviations in clinical use (common practice).
        for name in ["SIADH", "SIAD", "siadh", "inappropriate antidiuresis"] {
            assert_eq!(
                Cause::parse(name).unwrap(),
                Cause::InappropriateAntidiuresis,
                "{name}"
            );
        }
        assert!(Cause::parse("siadhh").is_err());
    }
}
