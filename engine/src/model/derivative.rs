//! The right-hand side of the ODE system: the flows of [`Model::fluxes`]
//! placed into the pools they leave and enter, and into the ledger of what
//! came in and went out.

use super::{conc, Inputs, Model};
use crate::body::StateSlot;
use crate::physiology::{drugs, gut};

impl Model {
    /// The right-hand side: `dy = f(y, inputs)`. Every transfer is added to
    /// one pool and subtracted from another as the same number, and every
    /// exchange with the outside is mirrored in the ledger, so water and
    /// each solute balance to rounding.
    pub fn derivative(&self, y: &[f64], u: &Inputs, dy: &mut [f64]) {
        let f = self.fluxes(y, u);
        let s = |i: StateSlot| y[i as usize];
        let (v_p, v_i) = (s(StateSlot::PlasmaL), s(StateSlot::InterstitiumL));
        let bl = f.blood_loss_per_h;

        // Transcapillary flow of a small solute, plasma → interstitium:
        // convection with filtration (reflection 0), return with lymph,
        // diffusion.
        let ps = self.calibration.small_solute_ps;
        let transcap = |amount_p: f64, amount_i: f64| {
            let (cp, ci) = (conc(amount_p, v_p), conc(amount_i, v_i));
            f.filtration_l_h * cp - f.lymph_l_h * ci + ps * (cp - ci)
        };
        let t_na = transcap(s(StateSlot::NaPlasma), s(StateSlot::NaInterstitium));
        let t_k = transcap(s(StateSlot::KPlasma), s(StateSlot::KInterstitium));
        let t_g = transcap(
            s(StateSlot::GlucosePlasma),
            s(StateSlot::GlucoseInterstitium),
        );
        let t_u = transcap(s(StateSlot::UreaPlasma), s(StateSlot::UreaInterstitium));

        let bl_water_p = bl * v_p;
        let bl_water_r = bl * s(StateSlot::RedCellsL);
        let bl_na = bl * s(StateSlot::NaPlasma);
        let bl_k = bl * s(StateSlot::KPlasma);
        let bl_g = bl * s(StateSlot::GlucosePlasma);
        let bl_u_p = bl * s(StateSlot::UreaPlasma);
        let bl_u_r = bl * s(StateSlot::UreaRedCells);
        let bl_alb = bl * s(StateSlot::AlbuminPlasma);

        // The gut lumen: what is swallowed waits there and is absorbed
        // into plasma, each pool at the same fractional rate.
        let k_gut = self.calibration.gut_absorption_per_h;
        let gut_water = gut::absorbed_per_h(s(StateSlot::GutWater), k_gut);
        let gut_na = gut::absorbed_per_h(s(StateSlot::GutNa), k_gut);
        let gut_k = gut::absorbed_per_h(s(StateSlot::GutK), k_gut);
        let gut_urea = gut::absorbed_per_h(s(StateSlot::GutUrea), k_gut);
        let gut_glucose = gut::absorbed_per_h(s(StateSlot::GutGlucose), k_gut);

        let mut set = |i: StateSlot, v: f64| dy[i as usize] = v;
        set(StateSlot::CellsL, f.cell_water_l_h);
        set(StateSlot::BrainL, f.brain_water_l_h);
        set(StateSlot::RedCellsL, f.red_cell_water_l_h - bl_water_r);
        set(
            StateSlot::InterstitiumL,
            f.filtration_l_h - f.lymph_l_h - f.cell_water_l_h - f.brain_water_l_h,
        );
        set(
            StateSlot::PlasmaL,
            -f.filtration_l_h + f.lymph_l_h - f.red_cell_water_l_h
                + u.water_in_l_h
                + gut_water
                + f.metabolic_water_l_h
                - u.water_out_l_h
                - f.urine_l_h
                - f.insensible_l_h
                - bl_water_p,
        );
        set(
            StateSlot::NaPlasma,
            -t_na + u.na_in_mmol_h + gut_na - u.na_out_mmol_h - f.urine_na_mmol_h - bl_na,
        );
        set(StateSlot::NaInterstitium, t_na);
        set(
            StateSlot::KPlasma,
            -t_k + u.k_in_mmol_h + gut_k - u.k_out_mmol_h - f.urine_k_mmol_h - bl_k,
        );
        set(StateSlot::KInterstitium, t_k - f.k_into_cells_mmol_h);
        set(StateSlot::KCells, f.k_into_cells_mmol_h);
        set(
            StateSlot::GlucosePlasma,
            -t_g + u.glucose_in_mmol_h + gut_glucose + f.glucose_production_mmol_h
                - f.glucose_disposal_mmol_h
                - u.glucose_out_mmol_h
                - f.urine_glucose_mmol_h
                - bl_g,
        );
        set(StateSlot::GlucoseInterstitium, t_g);
        set(
            StateSlot::UreaPlasma,
            -t_u - f.urea_into_red_cells_mmol_h
                + u.urea_in_mmol_h
                + gut_urea
                + f.urea_generation_mmol_h
                - u.urea_out_mmol_h
                - f.urine_urea_mmol_h
                - bl_u_p,
        );
        set(StateSlot::UreaInterstitium, t_u - f.urea_into_cells_mmol_h);
        set(StateSlot::UreaCells, f.urea_into_cells_mmol_h);
        set(
            StateSlot::UreaRedCells,
            f.urea_into_red_cells_mmol_h - bl_u_r,
        );
        set(
            StateSlot::AlbuminPlasma,
            -f.albumin_escape_g_h + f.albumin_return_g_h + u.albumin_in_g_h
                - u.albumin_out_g_h
                - bl_alb,
        );
        set(
            StateSlot::AlbuminInterstitium,
            f.albumin_escape_g_h - f.albumin_return_g_h,
        );
        set(
            StateSlot::GlobulinPlasma,
            -bl * s(StateSlot::GlobulinPlasma),
        );
        set(
            StateSlot::RedCellOsmoles,
            -bl * s(StateSlot::RedCellOsmoles),
        );
        set(StateSlot::BrainOsmolytes, f.brain_osmolyte_mosm_h);
        let p = &self.params;
        let absorbed =
            drugs::absorbed_per_h(s(StateSlot::DesmopressinDepot), p.desmopressin_absorption_h);
        set(
            StateSlot::DesmopressinDepot,
            u.desmopressin_depot_ug_h - absorbed,
        );
        set(
            StateSlot::Desmopressin,
            u.desmopressin_ug_h + absorbed
                - drugs::eliminated_per_h(s(StateSlot::Desmopressin), p.desmopressin_half_life_h),
        );
        set(
            StateSlot::V2Antagonist,
            u.v2_antagonist_mg_h
                - drugs::eliminated_per_h(s(StateSlot::V2Antagonist), p.v2_antagonist_half_life_h),
        );
        let loop_absorbed = drugs::absorbed_per_h(
            s(StateSlot::LoopDiureticDepot),
            p.loop_diuretic_absorption_h,
        );
        set(
            StateSlot::LoopDiureticDepot,
            u.loop_diuretic_depot_mg_h - loop_absorbed,
        );
        set(
            StateSlot::LoopDiuretic,
            u.loop_diuretic_mg_h + loop_absorbed
                - drugs::eliminated_per_h(s(StateSlot::LoopDiuretic), p.loop_diuretic_half_life_h),
        );
        set(
            StateSlot::LoopDiureticEffectSite,
            drugs::toward_effect_site(
                s(StateSlot::LoopDiuretic),
                s(StateSlot::LoopDiureticEffectSite),
                p.loop_diuretic_effect_delay_h,
            ),
        );
        set(
            StateSlot::RenalV2Effect,
            (f.v2_target_pmol_l - s(StateSlot::RenalV2Effect)) / p.v2_response_h,
        );
        set(
            StateSlot::GutWater,
            u.oral_water_l_h + f.thirst_water_l_h - gut_water,
        );
        set(StateSlot::GutNa, u.oral_na_mmol_h - gut_na);
        set(StateSlot::GutK, u.oral_k_mmol_h - gut_k);
        set(StateSlot::GutUrea, u.oral_urea_mmol_h - gut_urea);
        set(StateSlot::GutGlucose, u.oral_glucose_mmol_h - gut_glucose);

        set(
            StateSlot::InWater,
            u.water_in_l_h + u.oral_water_l_h + f.thirst_water_l_h + f.metabolic_water_l_h,
        );
        set(StateSlot::InNa, u.na_in_mmol_h + u.oral_na_mmol_h);
        set(StateSlot::InK, u.k_in_mmol_h + u.oral_k_mmol_h);
        set(
            StateSlot::InUrea,
            u.urea_in_mmol_h + u.oral_urea_mmol_h + f.urea_generation_mmol_h,
        );
        set(
            StateSlot::InGlucose,
            u.glucose_in_mmol_h + u.oral_glucose_mmol_h + f.glucose_production_mmol_h,
        );
        set(StateSlot::InAlbumin, u.albumin_in_g_h);

        set(
            StateSlot::OutWater,
            u.water_out_l_h + f.urine_l_h + f.insensible_l_h + bl_water_p + bl_water_r,
        );
        set(
            StateSlot::OutNa,
            u.na_out_mmol_h + f.urine_na_mmol_h + bl_na,
        );
        set(StateSlot::OutK, u.k_out_mmol_h + f.urine_k_mmol_h + bl_k);
        set(
            StateSlot::OutUrea,
            u.urea_out_mmol_h + f.urine_urea_mmol_h + bl_u_p + bl_u_r,
        );
        set(
            StateSlot::OutGlucose,
            u.glucose_out_mmol_h + f.urine_glucose_mmol_h + f.glucose_disposal_mmol_h + bl_g,
        );
        set(StateSlot::OutAlbumin, u.albumin_out_g_h + bl_alb);
        set(StateSlot::UrineL, f.urine_l_h);
        set(StateSlot::UrineNa, f.urine_na_mmol_h);
        set(StateSlot::UrineK, f.urine_k_mmol_h);
        // Electrolyte-free water clearance, L/h (Rose, Am J Med 1986):
        // urine flow less the water that would carry its sodium and
        // potassium at the plasma sodium concentration.
        set(
            StateSlot::UrineFreeWaterL,
            f.urine_l_h
                - (f.urine_na_mmol_h + f.urine_k_mmol_h) / conc(s(StateSlot::NaPlasma), v_p),
        );
        set(StateSlot::InfusedWaterL, u.water_in_l_h);
        set(StateSlot::InfusedNa, u.na_in_mmol_h);
        set(StateSlot::InfusedK, u.k_in_mmol_h);
    }
}
