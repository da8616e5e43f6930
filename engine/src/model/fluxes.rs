//! Every flow at one instant: membranes, capillaries and lymph, cell
//! handling of potassium, urea and glucose, brain adaptation, vasopressin
//! and the kidney. [`Model::fluxes`] is read by the right-hand side and by
//! the observations alike.

use super::{conc, Inputs, Model};
use crate::body::StateSlot;
use crate::physiology::{
    blood_volume, brain, capillary, drugs, glucose, kidney, membrane, osmoregulation, potassium,
};
use serde::Serialize;

/// Every flow of the model at one instant (rates per hour). Shared by the
/// right-hand side and the observations so that both see the same numbers.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct Fluxes {
    /// Water interstitium → tissue cells, L/h.
    pub cell_water_l_h: f64,
    /// Water interstitium → brain cells, L/h.
    pub brain_water_l_h: f64,
    /// Water plasma → red cells, L/h.
    pub red_cell_water_l_h: f64,
    /// Net capillary filtration plasma → interstitium, L/h.
    pub filtration_l_h: f64,
    /// Lymph interstitium → plasma, L/h.
    pub lymph_l_h: f64,
    /// Capillary pressure, mmHg.
    pub capillary_mmhg: f64,
    /// Interstitial pressure, mmHg.
    pub interstitial_mmhg: f64,
    /// Plasma colloid osmotic pressure, mmHg.
    pub plasma_colloid_mmhg: f64,
    /// Interstitial colloid osmotic pressure, mmHg.
    pub interstitial_colloid_mmhg: f64,
    /// Albumin escape plasma → interstitium, g/h.
    pub albumin_escape_g_h: f64,
    /// Albumin return by lymph, g/h.
    pub albumin_return_g_h: f64,
    /// Potassium interstitium → cells, mmol/h.
    pub k_into_cells_mmol_h: f64,
    /// Urea interstitium → cells, mmol/h.
    pub urea_into_cells_mmol_h: f64,
    /// Urea plasma → red cells, mmol/h.
    pub urea_into_red_cells_mmol_h: f64,
    /// Glucose disposal, mmol/h.
    pub glucose_disposal_mmol_h: f64,
    /// Brain adaptive osmolyte change, mOsm/h.
    pub brain_osmolyte_mosm_h: f64,
    /// Plasma vasopressin, pmol/L.
    pub vasopressin_pmol_l: f64,
    /// Urine osmolality, mOsm/kg.
    pub urine_osm: f64,
    /// Urine flow, L/h.
    pub urine_l_h: f64,
    /// Urinary sodium, mmol/h.
    pub urine_na_mmol_h: f64,
    /// Urinary potassium, mmol/h.
    pub urine_k_mmol_h: f64,
    /// Urinary urea, mmol/h.
    pub urine_urea_mmol_h: f64,
    /// Urinary glucose, mmol/h.
    pub urine_glucose_mmol_h: f64,
    /// Insensible loss, L/h.
    pub insensible_l_h: f64,
    /// Water of oxidation, L/h.
    pub metabolic_water_l_h: f64,
    /// Urea generation, mmol/h.
    pub urea_generation_mmol_h: f64,
    /// Glucose production, mmol/h.
    pub glucose_production_mmol_h: f64,
    /// V2 agonism the collecting duct is moving toward, pmol/L.
    pub v2_target_pmol_l: f64,
    /// Drinking driven by thirst, L/h (into the gut).
    pub thirst_water_l_h: f64,
    /// Blood volume, L.
    pub blood_volume_l: f64,
    /// Hematocrit, fraction.
    pub hematocrit: f64,
    /// Fraction of blood volume lost per hour, 1/h.
    pub blood_loss_per_h: f64,
}

impl Model {
    /// Every flow at state `y` under inputs `u`.
    pub fn fluxes(&self, y: &[f64], u: &Inputs) -> Fluxes {
        let c = &self.calibration;
        let p = &self.params;
        let s = |i: StateSlot| y[i as usize];
        let (v_c, v_r, v_b, v_i, v_p) = (
            s(StateSlot::CellsL),
            s(StateSlot::RedCellsL),
            s(StateSlot::BrainL),
            s(StateSlot::InterstitiumL),
            s(StateSlot::PlasmaL),
        );
        let na_p = conc(s(StateSlot::NaPlasma), v_p);
        let na_i = conc(s(StateSlot::NaInterstitium), v_i);
        let k_p = conc(s(StateSlot::KPlasma), v_p);
        let k_i = conc(s(StateSlot::KInterstitium), v_i);
        let k_c = conc(s(StateSlot::KCells), v_c);
        let g_p = conc(s(StateSlot::GlucosePlasma), v_p);
        let g_i = conc(s(StateSlot::GlucoseInterstitium), v_i);
        let u_p = conc(s(StateSlot::UreaPlasma), v_p);
        let u_i = conc(s(StateSlot::UreaInterstitium), v_i);
        let u_c = conc(s(StateSlot::UreaCells), v_c + v_b);
        let u_r = conc(s(StateSlot::UreaRedCells), v_r);

        // Cell membranes: effective osmolality differences (σ-weighted).
        let eff_i = 2.0 * (na_i + k_i) + g_i;
        let eff_p = 2.0 * (na_p + k_p) + g_p;
        let eff_c = conc(2.0 * s(StateSlot::KCells) + c.cell_fixed_mosm, v_c);
        let eff_b = conc(c.brain_fixed_mosm + s(StateSlot::BrainOsmolytes), v_b);
        let eff_r = conc(s(StateSlot::RedCellOsmoles), v_r);
        let cell_water = membrane::water_flow_l_h(
            c.cell_conductance,
            c.rt,
            eff_c - eff_i + p.sigma_urea_cells * (u_c - u_i),
        );
        let brain_water = membrane::water_flow_l_h(
            c.brain_conductance,
            c.rt,
            eff_b - eff_i + p.sigma_urea_brain * (u_c - u_i),
        );
        let red_cell_water = membrane::water_flow_l_h(
            c.red_cell_conductance,
            c.rt,
            eff_r - eff_p + p.sigma_urea_rbc * (u_r - u_p),
        );

        // Capillaries and lymph.
        let red_cell_volume =
            v_r + c.red_cell_solids_l * s(StateSlot::RedCellOsmoles) / c.red_cell_osmoles0;
        let plasma_protein = s(StateSlot::AlbuminPlasma) + s(StateSlot::GlobulinPlasma);
        let plasma_volume = v_p + c.plasma_solids_l * plasma_protein / c.plasma_protein0_g;
        let (hematocrit, blood_volume) = blood_volume::hematocrit(red_cell_volume, plasma_volume);
        let capillary_mmhg =
            c.capillary0_mmhg + c.blood_elastance_mmhg_l * (blood_volume - c.blood_volume0_l);
        let interstitial_mmhg = c.interstitium.pressure_mmhg(v_i);
        let plasma_colloid = capillary::landis_pappenheimer_mmhg(conc(plasma_protein, v_p) / 10.0);
        let interstitial_colloid = capillary::landis_pappenheimer_mmhg(
            conc(
                s(StateSlot::AlbuminInterstitium) + c.interstitial_globulin_g,
                v_i,
            ) / 10.0,
        );
        let filtration = capillary::starling_filtration_l_h(
            c.kf_l_h_mmhg,
            capillary_mmhg,
            interstitial_mmhg,
            p.sigma_albumin,
            plasma_colloid,
            interstitial_colloid,
        );
        let lymph = capillary::lymph_flow_l_h(
            interstitial_mmhg,
            c.lymph_max_l_h,
            c.lymph_half_mmhg,
            c.lymph_scale_mmhg,
        );
        let overfill = capillary::overfill_leak_factor(
            blood_volume / c.blood_volume_normal_l,
            p.overfill_leak_threshold_fraction,
            p.overfill_albumin_leak_gain,
        );
        let albumin_escape =
            p.albumin_escape_per_h * overfill * s(StateSlot::AlbuminPlasma).max(0.0);
        // Albumin returns with lymph; the return grows less than in
        // proportion to lymph flow (lymph protein falls as flow rises).
        let albumin_return = c.albumin_return_per_h
            * s(StateSlot::AlbuminInterstitium).max(0.0)
            * crate::physiology::power(
                (lymph / c.lymph0_l_h).max(0.0),
                p.albumin_return_flow_exponent,
            );

        // Potassium, urea and glucose handling by cells.
        let k_into_cells = potassium::flux_into_cells_mmol_h(c.k_rate, c.k_ratio, k_i, k_c);
        let urea_into_cells = membrane::solute_exchange_mmol_h(c.urea_ps_cells, u_i, u_c);
        let urea_into_red_cells = membrane::solute_exchange_mmol_h(c.urea_ps_red_cells, u_p, u_r);
        // Tissues take glucose up from the blood passing through them.
        let glucose_disposal = glucose::disposal_mmol_h(
            g_p,
            c.glucose_set_point,
            c.glucose_production_mmol_h,
            p.glucose_insulin_independent_fraction,
            p.glucose_uptake_km_mmol_l,
            p.insulin_activity,
            p.insulin_gain,
        );

        // Brain adaptation toward normal volume at the current tonicity.
        let brain_target =
            brain::target_osmolytes_mosm(eff_i, c.brain_normal_l, c.brain_fixed_mosm);
        let brain_osmolyte = brain::osmolyte_rate_mosm_h(
            s(StateSlot::BrainOsmolytes),
            brain_target,
            p.brain_osmolyte_loss_h,
            p.brain_osmolyte_regain_h,
        );

        // Kidney and vasopressin.
        let plasma_osm = 2.0 * na_p + g_p + u_p;
        let osmotic_avp = osmoregulation::osmotic_vasopressin_pmol_l(
            plasma_osm,
            c.avp_threshold_mosm_kg,
            p.avp_slope_pmol_l_per_mosm,
        );
        let volume_avp = osmoregulation::volume_vasopressin_pmol_l(
            1.0 - blood_volume / c.blood_volume_normal_l,
            p.volume_avp_threshold_fraction,
            p.volume_avp_gain_pmol_l,
        );
        let vasopressin =
            osmoregulation::plasma_vasopressin_pmol_l(osmotic_avp + volume_avp, p.avp_floor_pmol_l);
        // V2 agonism: vasopressin plus desmopressin, blunted by an antagonist;
        // the collecting duct follows it with a lag (state RenalV2Effect).
        let desmopressin_equiv =
            p.desmopressin_avp_equiv_pmol_l_per_ug * s(StateSlot::Desmopressin).max(0.0);
        let antagonism = drugs::v2_agonism_left(s(StateSlot::V2Antagonist), p.v2_antagonist_ki_mg);
        let v2_target = (vasopressin + desmopressin_equiv) * antagonism;
        let thiazide = u.thiazide_effect.clamp(0.0, 1.0);
        let loop_effect = drugs::loop_effect(
            s(StateSlot::LoopDiureticEffectSite),
            p.loop_diuretic_ec50_mg,
            p.loop_diuretic_hill,
        );
        let osm_min =
            c.urine_osm_min + thiazide * (p.thiazide_min_urine_osm - c.urine_osm_min).max(0.0);
        let concentrated = kidney::urine_osmolality(
            s(StateSlot::RenalV2Effect),
            osm_min,
            c.urine_osm_max.max(osm_min),
            p.avp_half_max_pmol_l,
            p.avp_hill,
        );
        let urine_osm = concentrated + loop_effect * (p.loop_diuretic_urine_osm - concentrated);
        let (urine_na, urine_k, urine_urea, urine_glucose, urine) = if self.switches.kidneys {
            let ecf = v_p + v_i;
            let e_na = kidney::sodium_excretion_mmol_h(
                c.na_excretion0_mmol_h,
                p.natriuresis_gain,
                (ecf - c.ecf0_l) / c.ecf0_l,
                c.na_excretion_max_mmol_h,
            ) + (loop_effect * p.loop_diuretic_na_mmol_h
                + thiazide * p.thiazide_na_mmol_h)
                * (na_p / c.na0_mmol_l).min(p.drug_electrolyte_scale_max);
            let e_k = kidney::potassium_excretion_mmol_h(
                c.k_excretion0_mmol_h,
                k_p,
                c.k0_mmol_l,
                p.kaliuresis_exponent,
            ) + (loop_effect * p.loop_diuretic_k_mmol_h + thiazide * p.thiazide_k_mmol_h)
                * (k_p / c.k0_mmol_l).min(p.drug_electrolyte_scale_max);
            let e_u = c.urea_fractional_excretion * c.gfr_l_h * u_p.max(0.0);
            let e_g =
                kidney::glucose_excretion_mmol_h(c.gfr_l_h, g_p, p.glucose_renal_threshold_mmol_l);
            let solute = 2.0 * (e_na + e_k) + e_u + e_g;
            (
                e_na,
                e_k,
                e_u,
                e_g,
                kidney::urine_flow_l_h(solute, urine_osm),
            )
        } else {
            (0.0, 0.0, 0.0, 0.0, 0.0)
        };

        let sw = &self.switches;
        let on = |b: bool, x: f64| if b { x } else { 0.0 };
        Fluxes {
            cell_water_l_h: cell_water,
            brain_water_l_h: brain_water,
            red_cell_water_l_h: red_cell_water,
            filtration_l_h: filtration,
            lymph_l_h: lymph,
            capillary_mmhg,
            interstitial_mmhg,
            plasma_colloid_mmhg: plasma_colloid,
            interstitial_colloid_mmhg: interstitial_colloid,
            albumin_escape_g_h: albumin_escape,
            albumin_return_g_h: albumin_return,
            k_into_cells_mmol_h: k_into_cells,
            urea_into_cells_mmol_h: urea_into_cells,
            urea_into_red_cells_mmol_h: urea_into_red_cells,
            glucose_disposal_mmol_h: glucose_disposal,
            brain_osmolyte_mosm_h: brain_osmolyte,
            vasopressin_pmol_l: vasopressin,
            urine_osm,
            urine_l_h: urine,
            urine_na_mmol_h: urine_na,
            urine_k_mmol_h: urine_k,
            urine_urea_mmol_h: urine_urea,
            urine_glucose_mmol_h: urine_glucose,
            insensible_l_h: on(sw.insensible_loss, c.insensible_l_h),
            metabolic_water_l_h: on(sw.metabolic_water, c.metabolic_water_l_h),
            urea_generation_mmol_h: on(sw.urea_generation, c.urea_generation_mmol_h),
            glucose_production_mmol_h: c.glucose_production_mmol_h,
            v2_target_pmol_l: v2_target,
            thirst_water_l_h: if p.thirst_enabled >= 0.5 {
                osmoregulation::thirst_drinking_l_h(
                    plasma_osm,
                    osmoregulation::thirst_onset_mosm_kg(
                        p.thirst_threshold_mosm_kg,
                        c.avp_threshold_mosm_kg,
                        p.thirst_offset_mosm_kg,
                        c.thirst_onset_raise_mosm_kg,
                    ),
                    p.thirst_gain_l_h_per_mosm,
                    p.thirst_max_l_h,
                )
            } else {
                0.0
            },
            blood_volume_l: blood_volume,
            hematocrit,
            blood_loss_per_h: u.blood_loss_l_h / blood_volume.max(1e-9),
        }
    }
}
