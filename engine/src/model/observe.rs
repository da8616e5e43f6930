//! What a clinician sees: the labs, volumes, pressures and urine of one
//! instant, derived from the state and the flows.

use super::{conc, Inputs, Model};
use crate::body::StateSlot;
use crate::physiology::kidney;
use crate::units;
use serde::Serialize;

/// What a clinician (or a report) sees at one instant.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct Observation {
    /// Serum sodium, mmol/L (per litre of plasma water).
    pub na_mmol_l: f64,
    /// Serum potassium, mmol/L.
    pub k_mmol_l: f64,
    /// Plasma glucose, mmol/L.
    pub glucose_mmol_l: f64,
    /// Plasma urea, mmol/L.
    pub urea_mmol_l: f64,
    /// Plasma albumin, g/L.
    pub albumin_g_l: f64,
    /// Calculated osmolality `2·Na + glucose + urea`, mOsm/kg.
    pub osmolality_mosm_kg: f64,
    /// Effective osmolality (tonicity) `2·Na + glucose`, mOsm/kg.
    pub tonicity_mosm_kg: f64,
    /// Tissue-cell water, L.
    pub cells_l: f64,
    /// Red-cell water, L.
    pub red_cells_l: f64,
    /// Brain-cell water, L.
    pub brain_l: f64,
    /// Interstitial water, L.
    pub interstitium_l: f64,
    /// Plasma water, L.
    pub plasma_l: f64,
    /// Total body water, L (the gut lumen excluded).
    pub total_water_l: f64,
    /// Water in the gut lumen not yet absorbed, mL.
    pub gut_ml: f64,
    /// Brain-cell volume relative to normal (1 = normal).
    pub brain_volume_index: f64,
    /// Hematocrit, fraction.
    pub hematocrit: f64,
    /// Blood volume, L.
    pub blood_volume_l: f64,
    /// Capillary pressure, mmHg.
    pub capillary_mmhg: f64,
    /// Interstitial pressure, mmHg.
    pub interstitial_mmhg: f64,
    /// Plasma colloid osmotic pressure, mmHg.
    pub plasma_colloid_mmhg: f64,
    /// Interstitial colloid osmotic pressure, mmHg.
    pub interstitial_colloid_mmhg: f64,
    /// Net capillary filtration, mL/h.
    pub filtration_ml_h: f64,
    /// Lymph flow, mL/h.
    pub lymph_ml_h: f64,
    /// Plasma vasopressin, pmol/L.
    pub vasopressin_pmol_l: f64,
    /// Urine flow, mL/h.
    pub urine_ml_h: f64,
    /// Urine osmolality, mOsm/kg.
    pub urine_osm_mosm_kg: f64,
    /// Urine sodium, mmol/L.
    pub urine_na_mmol_l: f64,
    /// Urine potassium, mmol/L.
    pub urine_k_mmol_l: f64,
    /// Electrolyte-free water clearance, mL/h.
    pub efwc_ml_h: f64,
    /// Osmolar clearance, mL/h.
    pub osmolar_clearance_ml_h: f64,
    /// Free-water clearance, mL/h.
    pub free_water_clearance_ml_h: f64,
}

impl Model {
    /// What the state alone gives at `y`, without evaluating the flows:
    /// the concentrations (serum sodium, potassium, glucose, urea,
    /// albumin, osmolality, tonicity) and the volumes (with the brain-cell
    /// volume index), each the same number [`Model::observe`] gives; the
    /// fields that need the flows (hematocrit, blood volume, pressures,
    /// filtration, lymph, vasopressin, urine and clearances) are NaN.
    pub fn observe_state(&self, y: &[f64]) -> Observation {
        let c = &self.calibration;
        let s = |i: StateSlot| y[i as usize];
        let v_p = s(StateSlot::PlasmaL);
        let na = conc(s(StateSlot::NaPlasma), v_p);
        let g = conc(s(StateSlot::GlucosePlasma), v_p);
        let urea = conc(s(StateSlot::UreaPlasma), v_p);
        let nan = f64::NAN;
        Observation {
            na_mmol_l: na,
            k_mmol_l: conc(s(StateSlot::KPlasma), v_p),
            glucose_mmol_l: g,
            urea_mmol_l: urea,
            albumin_g_l: conc(s(StateSlot::AlbuminPlasma), v_p),
            osmolality_mosm_kg: 2.0 * na + g + urea,
            tonicity_mosm_kg: 2.0 * na + g,
            cells_l: s(StateSlot::CellsL),
            red_cells_l: s(StateSlot::RedCellsL),
            brain_l: s(StateSlot::BrainL),
            interstitium_l: s(StateSlot::InterstitiumL),
            plasma_l: v_p,
            total_water_l: crate::body::total_water_l(y),
            gut_ml: units::l_to_ml(s(StateSlot::GutWater)),
            brain_volume_index: s(StateSlot::BrainL) / c.brain_normal_l,
            hematocrit: nan,
            blood_volume_l: nan,
            capillary_mmhg: nan,
            interstitial_mmhg: nan,
            plasma_colloid_mmhg: nan,
            interstitial_colloid_mmhg: nan,
            filtration_ml_h: nan,
            lymph_ml_h: nan,
            vasopressin_pmol_l: nan,
            urine_ml_h: nan,
            urine_osm_mosm_kg: nan,
            urine_na_mmol_l: nan,
            urine_k_mmol_l: nan,
            efwc_ml_h: nan,
            osmolar_clearance_ml_h: nan,
            free_water_clearance_ml_h: nan,
        }
    }

    /// Derived labs and flows at state `y` under inputs `u`: what the state
    /// gives ([`Model::observe_state`]) and what the flows add.
    pub fn observe(&self, y: &[f64], u: &Inputs) -> Observation {
        let f = self.fluxes(y, u);
        let state = self.observe_state(y);
        let (na, osm) = (state.na_mmol_l, state.osmolality_mosm_kg);
        let urine_ml_h = units::l_to_ml(f.urine_l_h);
        let (u_na, u_k) = if f.urine_l_h > 1e-12 {
            (
                f.urine_na_mmol_h / f.urine_l_h,
                f.urine_k_mmol_h / f.urine_l_h,
            )
        } else {
            (0.0, 0.0)
        };
        Observation {
            hematocrit: f.hematocrit,
            blood_volume_l: f.blood_volume_l,
            capillary_mmhg: f.capillary_mmhg,
            interstitial_mmhg: f.interstitial_mmhg,
            plasma_colloid_mmhg: f.plasma_colloid_mmhg,
            interstitial_colloid_mmhg: f.interstitial_colloid_mmhg,
            filtration_ml_h: units::l_to_ml(f.filtration_l_h),
            lymph_ml_h: units::l_to_ml(f.lymph_l_h),
            vasopressin_pmol_l: f.vasopressin_pmol_l,
            urine_ml_h,
            urine_osm_mosm_kg: if self.switches.kidneys {
                f.urine_osm
            } else {
                0.0
            },
            urine_na_mmol_l: u_na,
            urine_k_mmol_l: u_k,
            efwc_ml_h: kidney::electrolyte_free_water_clearance(urine_ml_h, u_na, u_k, na),
            osmolar_clearance_ml_h: kidney::osmolar_clearance(urine_ml_h, f.urine_osm, osm),
            free_water_clearance_ml_h: kidney::free_water_clearance(urine_ml_h, f.urine_osm, osm),
            ..state
        }
    }
}
