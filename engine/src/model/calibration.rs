//! The patient-specific constants of the start ([`Calibration`], with the
//! [`StartBalance`] shown in reports) and [`Model::new`], which gathers the
//! pieces of the resting body (see `resting.rs`), builds the initial state
//! and makes it steady (see `start.rs`).

use super::resting::{
    capillaries_and_lymph, compartments, initial_state, kidney, membranes, metabolism,
};
use super::start::{balance_the_start, share_drinking_with_thirst};
use super::{Inputs, Model, Switches};
use crate::body::{Body, StateSlot};
use crate::error::InputError;
use crate::params::Params;
use crate::patient::ResolvedPatient;
use crate::physiology::{capillary, gut};
use crate::units;
use serde::Serialize;

/// Patient-specific constants derived once at the start.
///
/// Its values are the model's own (read with the accessors below, or as a
/// whole in `tidewater patient --json` and every dump); only
/// [`Calibration::start`], the balance of the start in a clinician's units,
/// is open.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Calibration {
    /// Body weight, kg.
    pub(crate) weight_kg: f64,
    /// Age, years.
    pub(crate) age_years: f64,
    /// van't Hoff factor, mmHg per mOsm/L.
    pub(crate) rt: f64,
    /// Effective osmolality the brain is adapted to at rest, mOsm/L.
    pub(crate) reference_tonicity: f64,
    /// Brain-cell water at normal volume, L.
    pub(crate) brain_normal_l: f64,
    /// Fixed (non-adaptive) brain osmoles, mOsm.
    pub(crate) brain_fixed_mosm: f64,
    /// Fixed tissue-cell osmoles other than potassium salts, mOsm.
    pub(crate) cell_fixed_mosm: f64,
    /// Plasma solids (protein volume) at the start, L.
    pub(crate) plasma_solids_l: f64,
    /// Red-cell solids at the start, L.
    pub(crate) red_cell_solids_l: f64,
    /// Red-cell osmoles at the start, mOsm.
    pub(crate) red_cell_osmoles0: f64,
    /// Plasma protein at the start (albumin + globulins), g.
    pub(crate) plasma_protein0_g: f64,
    /// Blood volume at the start, L.
    pub(crate) blood_volume0_l: f64,
    /// Normal extracellular water (the start plus any deficit), L: the
    /// reference of volume natriuresis.
    pub(crate) ecf0_l: f64,
    /// Normal blood volume (the start plus any deficit), L: the reference
    /// of volume-driven vasopressin.
    pub(crate) blood_volume_normal_l: f64,
    /// Most dilute urine (narrowed when GFR is low), mOsm/kg.
    pub(crate) urine_osm_min: f64,
    /// Tissue-cell hydraulic conductance, L/h/mmHg.
    pub(crate) cell_conductance: f64,
    /// Brain-cell hydraulic conductance, L/h/mmHg.
    pub(crate) brain_conductance: f64,
    /// Red-cell hydraulic conductance, L/h/mmHg.
    pub(crate) red_cell_conductance: f64,
    /// Urea permeability-surface product, interstitium ↔ cells, L/h.
    pub(crate) urea_ps_cells: f64,
    /// Urea permeability-surface product, plasma ↔ red cells, L/h.
    pub(crate) urea_ps_red_cells: f64,
    /// Small-solute permeability-surface product of capillaries, L/h.
    pub(crate) small_solute_ps: f64,
    /// Cell/interstitium potassium concentration ratio at equilibrium.
    pub(crate) k_ratio: f64,
    /// Potassium shift constant, L/h.
    pub(crate) k_rate: f64,
    /// Interstitial globulins (constant), g.
    pub(crate) interstitial_globulin_g: f64,
    /// Filtration coefficient, L/h/mmHg.
    pub(crate) kf_l_h_mmhg: f64,
    /// Capillary pressure at rest, mmHg (solved so filtration = lymph).
    pub(crate) capillary0_mmhg: f64,
    /// Capillary pressure rise per litre of blood volume, mmHg/L.
    pub(crate) blood_elastance_mmhg_l: f64,
    /// Interstitial pressure–volume curve.
    pub(crate) interstitium: capillary::InterstitialCompliance,
    /// Lymph plateau flow, L/h.
    pub(crate) lymph_max_l_h: f64,
    /// Lymph half-pressure, mmHg.
    pub(crate) lymph_half_mmhg: f64,
    /// Lymph slope scale, mmHg.
    pub(crate) lymph_scale_mmhg: f64,
    /// Lymph flow at rest, L/h.
    pub(crate) lymph0_l_h: f64,
    /// Fraction of interstitial albumin returned per hour at resting lymph
    /// flow, 1/h (equals escape at rest).
    pub(crate) albumin_return_per_h: f64,
    /// Glucose set point, mmol/L.
    pub(crate) glucose_set_point: f64,
    /// Endogenous glucose production, mmol/h.
    pub(crate) glucose_production_mmol_h: f64,
    /// Urea generation, mmol/h.
    pub(crate) urea_generation_mmol_h: f64,
    /// Water of oxidation, L/h.
    pub(crate) metabolic_water_l_h: f64,
    /// Insensible loss, L/h.
    pub(crate) insensible_l_h: f64,
    /// GFR, L/h.
    pub(crate) gfr_l_h: f64,
    /// Resting sodium excretion, mmol/h.
    pub(crate) na_excretion0_mmol_h: f64,
    /// Largest sodium excretion, mmol/h.
    pub(crate) na_excretion_max_mmol_h: f64,
    /// Resting potassium excretion, mmol/h.
    pub(crate) k_excretion0_mmol_h: f64,
    /// Plasma potassium at the start, mmol/L.
    pub(crate) k0_mmol_l: f64,
    /// Plasma sodium at the start, mmol/L.
    pub(crate) na0_mmol_l: f64,
    /// Fractional excretion of filtered urea.
    pub(crate) urea_fractional_excretion: f64,
    /// Maximal urine osmolality at this age and GFR, mOsm/kg.
    pub(crate) urine_osm_max: f64,
    /// Gut absorption rate constant (first order), 1/h.
    pub(crate) gut_absorption_per_h: f64,
    /// Habitual water intake, L/h.
    pub(crate) habitual_water_l_h: f64,
    /// Habitual sodium intake, mmol/h.
    pub(crate) habitual_na_mmol_h: f64,
    /// Habitual potassium intake, mmol/h.
    pub(crate) habitual_k_mmol_h: f64,
    /// This patient's osmotic threshold for vasopressin, mOsm/kg (solved at
    /// the start so that the habitual intake is in balance).
    pub(crate) avp_threshold_mosm_kg: f64,
    /// How far the start raised the thirst onset above the own vasopressin
    /// threshold plus the offset, mOsm/kg: only when thirst at the start
    /// would drink more than the habitual drinks (docs/model.md, thirst).
    pub(crate) thirst_onset_raise_mosm_kg: f64,
    /// How the start was made steady, in the units a clinician reads.
    pub start: StartBalance,
}

impl Calibration {
    /// This patient's osmotic threshold for vasopressin, mOsm/kg.
    pub fn avp_threshold_mosm_kg(&self) -> f64 {
        self.avp_threshold_mosm_kg
    }

    /// Glomerular filtration rate, L/h.
    pub fn gfr_l_h(&self) -> f64 {
        self.gfr_l_h
    }

    /// The least and greatest urine osmolality this kidney makes, mOsm/kg
    /// (the least rises with age).
    pub fn urine_osm_range(&self) -> (f64, f64) {
        (self.urine_osm_min, self.urine_osm_max)
    }
}

/// Where the habitual water intake of the start came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum WaterIntakeSource {
    /// Given by the scenario or the cause (`habitual_water_l_day`).
    Given,
    /// The documented default for the sex.
    DefaultForSex,
    /// Solved so that the start is steady: no osmotic threshold within the
    /// admissible window balances the given intake (another stimulus holds
    /// vasopressin up, or there is too much or too little solute).
    SolvedForBalance,
    /// No habitual intake (switched off) or no kidneys.
    NotApplicable,
}

/// The start's water and solute balance, as shown in reports.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StartBalance {
    /// Habitual water intake (drinks and food water), L/day.
    pub habitual_water_l_day: f64,
    /// Where it came from.
    pub water_intake_source: WaterIntakeSource,
    /// Habitual sodium intake, mmol/day.
    pub habitual_na_mmol_day: f64,
    /// Habitual potassium intake, mmol/day.
    pub habitual_k_mmol_day: f64,
    /// Urea generated from protein eaten, mmol/day.
    pub urea_generation_mmol_day: f64,
    /// Plasma vasopressin at the start, pmol/L.
    pub vasopressin_pmol_l: f64,
    /// Urine flow at the start, L/day.
    pub urine_l_day: f64,
    /// Urine osmolality at the start, mOsm/kg.
    pub urine_osm_mosm_kg: f64,
    /// Blood volume at the start, L.
    pub blood_volume_l: f64,
    /// Plasma volume at the start, L.
    pub plasma_volume_l: f64,
    /// How blood volume was predicted.
    pub blood_volume_method: &'static str,
    /// Plasma osmolality at which thirst begins at the start, mOsm/kg.
    pub thirst_onset_mosm_kg: f64,
    /// Drinking at will (thirst) at the start, L/day: part of the habitual
    /// water intake, taken out of the habitual drinks (0 when thirst is
    /// off).
    pub thirst_water_l_day: f64,
    /// Whether water intake and output balance at the start (false when a
    /// given intake cannot be balanced by any admissible threshold).
    pub steady: bool,
}

impl Model {
    /// Build the model and the steady initial state for a patient.
    pub fn new(
        patient: &ResolvedPatient,
        params: &Params,
        switches: Switches,
    ) -> Result<(Model, Body), InputError> {
        params.validate()?;
        let p = params;
        let size = patient.weight_kg / 70.0;
        let rt = units::van_t_hoff_mmhg_per_mosm_l(p.body_temperature_c);
        let w = compartments(patient, p)?;
        let cap = capillaries_and_lymph(patient, p, &w, size);
        let mem = membranes(patient, p, &w, rt);
        let met = metabolism(patient, p, size);
        let kid = kidney(patient, p, met.urea_generation);

        let mut calibration = Calibration {
            weight_kg: patient.weight_kg,
            age_years: patient.age_years,
            rt,
            reference_tonicity: w.reference_tonicity,
            brain_normal_l: w.brain_normal,
            brain_fixed_mosm: w.brain_fixed,
            cell_fixed_mosm: w.cell_fixed,
            plasma_solids_l: w.plasma_solids,
            red_cell_solids_l: w.red_cell_solids,
            red_cell_osmoles0: w.red_cell_osmoles,
            plasma_protein0_g: cap.albumin_p + cap.globulin_p,
            blood_volume0_l: cap.blood_volume0,
            ecf0_l: w.ecf / (1.0 - p.ecf_deficit_fraction),
            blood_volume_normal_l: cap.blood_volume0 / (1.0 - p.ecf_deficit_fraction),
            urine_osm_min: kid.urine_osm_min,
            cell_conductance: mem.cell_conductance,
            brain_conductance: mem.brain_conductance,
            red_cell_conductance: mem.red_cell_conductance,
            urea_ps_cells: mem.urea_ps_cells,
            urea_ps_red_cells: mem.urea_ps_red_cells,
            small_solute_ps: mem.small_solute_ps,
            k_ratio: mem.k_ratio,
            k_rate: mem.k_rate,
            interstitial_globulin_g: cap.globulin_i,
            kf_l_h_mmhg: cap.kf,
            capillary0_mmhg: cap.capillary0,
            blood_elastance_mmhg_l: p.capillary_elastance_mmhg / cap.blood_volume0,
            interstitium: cap.interstitium,
            lymph_max_l_h: p.lymph_max_ratio * cap.lymph0,
            lymph_half_mmhg: p.lymph_half_pressure_mmhg,
            lymph_scale_mmhg: cap.lymph_scale,
            lymph0_l_h: cap.lymph0,
            albumin_return_per_h: cap.albumin_return_per_h,
            glucose_set_point: patient.glucose_mmol_l,
            glucose_production_mmol_h: met.glucose_production,
            urea_generation_mmol_h: met.urea_generation,
            metabolic_water_l_h: met.metabolic_water_l_h,
            insensible_l_h: met.insensible_l_h,
            gfr_l_h: kid.gfr_l_h,
            na_excretion0_mmol_h: kid.na_excretion0,
            na_excretion_max_mmol_h: kid.na_excretion_max,
            k_excretion0_mmol_h: kid.k_excretion0,
            k0_mmol_l: patient.k,
            na0_mmol_l: patient.na,
            urea_fractional_excretion: kid.urea_fe,
            urine_osm_max: kid.urine_osm_max,
            gut_absorption_per_h: gut::absorption_rate_per_h(p.gut_absorption_half_life_min),
            habitual_water_l_h: 0.0,
            habitual_na_mmol_h: 0.0,
            habitual_k_mmol_h: 0.0,
            avp_threshold_mosm_kg: p.avp_threshold_mosm_kg,
            thirst_onset_raise_mosm_kg: 0.0,
            start: StartBalance {
                habitual_water_l_day: 0.0,
                water_intake_source: WaterIntakeSource::NotApplicable,
                habitual_na_mmol_day: 0.0,
                habitual_k_mmol_day: 0.0,
                urea_generation_mmol_day: units::per_h_to_per_day(met.urea_generation),
                vasopressin_pmol_l: 0.0,
                urine_l_day: 0.0,
                urine_osm_mosm_kg: 0.0,
                blood_volume_l: w.blood_volume_start,
                plasma_volume_l: w.plasma_volume,
                blood_volume_method: w.blood_volume_method,
                thirst_onset_mosm_kg: 0.0,
                thirst_water_l_day: 0.0,
                steady: true,
            },
        };

        let mut y = initial_state(patient, &w, &cap);
        balance_the_start(patient, p, switches, &mut calibration, &mut y)?;
        share_drinking_with_thirst(patient, p, switches, &mut calibration, &y);
        let model = Model {
            params: p.clone(),
            calibration,
            switches,
        };
        model.fill_the_gut(&mut y, &patient.cause.standing_inputs());
        Ok((model, Body { y }))
    }

    /// Set the gut lumen to what the habitual intake, the standing
    /// treatments and the thirst of the start hold there at steady state.
    fn fill_the_gut(&self, y: &mut [f64], standing: &Inputs) {
        let u = self.habitual_inputs().plus(standing);
        let k = self.calibration.gut_absorption_per_h;
        let thirst = self.fluxes(y, &u).thirst_water_l_h;
        y[StateSlot::GutWater as usize] = gut::steady_content(u.oral_water_l_h + thirst, k);
        y[StateSlot::GutNa as usize] = gut::steady_content(u.oral_na_mmol_h, k);
        y[StateSlot::GutK as usize] = gut::steady_content(u.oral_k_mmol_h, k);
        y[StateSlot::GutUrea as usize] = gut::steady_content(u.oral_urea_mmol_h, k);
        y[StateSlot::GutGlucose as usize] = gut::steady_content(u.oral_glucose_mmol_h, k);
    }

    /// The habitual intake (water, salt, potassium) as input rates; zero
    /// when the habitual-intake switch is off.
    pub fn habitual_inputs(&self) -> Inputs {
        if !self.switches.habitual_intake {
            return Inputs::default();
        }
        let c = &self.calibration;
        Inputs {
            oral_water_l_h: c.habitual_water_l_h,
            oral_na_mmol_h: c.habitual_na_mmol_h,
            oral_k_mmol_h: c.habitual_k_mmol_h,
            ..Default::default()
        }
    }
}
