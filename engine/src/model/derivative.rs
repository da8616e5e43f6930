//! The right-hand side of the ODE system: the flows of [`Model::fluxes`]
//! placed into the pools they leave and enter, and into the ledger of what
//! came in and went out.

use super::{conc, Inputs, Model};
use crate::body::S;
use crate::physiology::{drugs, gut};

impl Model {
    /// The right-hand side: `dy = f(y, inputs)`. Every transfer is added to
    /// one pool and subtracted from another as the same number, and every
    /// exchange with the outside is mirrored in the ledger, so water and
    /// each solute balance to rounding.
    pub fn derivative(&self, y: &[f64], u: &Inputs, dy: &mut [f64]) {
        let f = self.fluxes(y, u);
        let s = |i: S| y[i as usize];
        let (v_p, v_i) = (s(S::PlasmaL), s(S::InterstitiumL));
        let bl = f.blood_loss_per_h;

        // Transcapillary flow of a small solute, plasma → interstitium:
        // convection with filtration (reflection 0), return with lymph,
        // diffusion.
        let ps = self.calibration.small_solute_ps;
        let transcap = |amount_p: f64, amount_i: f64| {
            let (cp, ci) = (conc(amount_p, v_p), conc(amount_i, v_i));
            f.filtration_l_h * cp - f.lymph_l_h * ci + ps * (cp - ci)
        };
        let t_na = transcap(s(S::NaPlasma), s(S::NaInterstitium));
        let t_k = transcap(s(S::KPlasma), s(S::KInterstitium));
        let t_g = transcap(s(S::GlucosePlasma), s(S::GlucoseInterstitium));
        let t_u = transcap(s(S::UreaPlasma), s(S::UreaInterstitium));

        let bl_water_p = bl * v_p;
        let bl_water_r = bl * s(S::RedCellsL);
        let bl_na = bl * s(S::NaPlasma);
        let bl_k = bl * s(S::KPlasma);
        let bl_g = bl * s(S::GlucosePlasma);
        let bl_u_p = bl * s(S::UreaPlasma);
        let bl_u_r = bl * s(S::UreaRedCells);
        let bl_alb = bl * s(S::AlbuminPlasma);

        // The gut lumen: what is swallowed waits there and is absorbed
        // into plasma, each pool at the same fractional rate.
        let k_gut = self.calibration.gut_absorption_per_h;
        let gut_water = gut::absorbed_per_h(s(S::GutWater), k_gut);
        let gut_na = gut::absorbed_per_h(s(S::GutNa), k_gut);
        let gut_k = gut::absorbed_per_h(s(S::GutK), k_gut);
        let gut_urea = gut::absorbed_per_h(s(S::GutUrea), k_gut);
        let gut_glucose = gut::absorbed_per_h(s(S::GutGlucose), k_gut);

        let mut set = |i: S, v: f64| dy[i as usize] = v;
        set(S::CellsL, f.cell_water_l_h);
        set(S::BrainL, f.brain_water_l_h);
        set(S::RedCellsL, f.red_cell_water_l_h - bl_water_r);
        set(
            S::InterstitiumL,
            f.filtration_l_h - f.lymph_l_h - f.cell_water_l_h - f.brain_water_l_h,
        );
        set(
            S::PlasmaL,
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
            S::NaPlasma,
            -t_na + u.na_in_mmol_h + gut_na - u.na_out_mmol_h - f.urine_na_mmol_h - bl_na,
        );
        set(S::NaInterstitium, t_na);
        set(
            S::KPlasma,
            -t_k + u.k_in_mmol_h + gut_k - u.k_out_mmol_h - f.urine_k_mmol_h - bl_k,
        );
        set(S::KInterstitium, t_k - f.k_into_cells_mmol_h);
        set(S::KCells, f.k_into_cells_mmol_h);
        set(
            S::GlucosePlasma,
            -t_g + u.glucose_in_mmol_h + gut_glucose + f.glucose_production_mmol_h
                - f.glucose_disposal_mmol_h
                - u.glucose_out_mmol_h
                - f.urine_glucose_mmol_h
                - bl_g,
        );
        set(S::GlucoseInterstitium, t_g);
        set(
            S::UreaPlasma,
            -t_u - f.urea_into_red_cells_mmol_h
                + u.urea_in_mmol_h
                + gut_urea
                + f.urea_generation_mmol_h
                - u.urea_out_mmol_h
                - f.urine_urea_mmol_h
                - bl_u_p,
        );
        set(S::UreaInterstitium, t_u - f.urea_into_cells_mmol_h);
        set(S::UreaCells, f.urea_into_cells_mmol_h);
        set(S::UreaRedCells, f.urea_into_red_cells_mmol_h - bl_u_r);
        set(
            S::AlbuminPlasma,
            -f.albumin_escape_g_h + f.albumin_return_g_h + u.albumin_in_g_h
                - u.albumin_out_g_h
                - bl_alb,
        );
        set(
            S::AlbuminInterstitium,
            f.albumin_escape_g_h - f.albumin_return_g_h,
        );
        set(S::GlobulinPlasma, -bl * s(S::GlobulinPlasma));
        set(S::RedCellOsmoles, -bl * s(S::RedCellOsmoles));
        set(S::BrainOsmolytes, f.brain_osmolyte_mosm_h);
        let p = &self.params;
        let absorbed = drugs::absorbed_per_h(s(S::DesmopressinDepot), p.desmopressin_absorption_h);
        set(S::DesmopressinDepot, u.desmopressin_depot_ug_h - absorbed);
        set(
            S::Desmopressin,
            u.desmopressin_ug_h + absorbed
                - drugs::eliminated_per_h(s(S::Desmopressin), p.desmopressin_half_life_h),
        );
        set(
            S::V2Antagonist,
            u.v2_antagonist_mg_h
                - drugs::eliminated_per_h(s(S::V2Antagonist), p.v2_antagonist_half_life_h),
        );
        let loop_absorbed =
            drugs::absorbed_per_h(s(S::LoopDiureticDepot), p.loop_diuretic_absorption_h);
        set(
            S::LoopDiureticDepot,
            u.loop_diuretic_depot_mg_h - loop_absorbed,
        );
        set(
            S::LoopDiuretic,
            u.loop_diuretic_mg_h + loop_absorbed
                - drugs::eliminated_per_h(s(S::LoopDiuretic), p.loop_diuretic_half_life_h),
        );
        set(
            S::LoopDiureticEffectSite,
            drugs::toward_effect_site(
                s(S::LoopDiuretic),
                s(S::LoopDiureticEffectSite),
                p.loop_diuretic_effect_delay_h,
            ),
        );
        set(
            S::RenalV2Effect,
            (f.v2_target_pmol_l - s(S::RenalV2Effect)) / p.v2_response_h,
        );
        set(
            S::GutWater,
            u.oral_water_l_h + f.thirst_water_l_h - gut_water,
        );
        set(S::GutNa, u.oral_na_mmol_h - gut_na);
        set(S::GutK, u.oral_k_mmol_h - gut_k);
        set(S::GutUrea, u.oral_urea_mmol_h - gut_urea);
        set(S::GutGlucose, u.oral_glucose_mmol_h - gut_glucose);

        set(
            S::InWater,
            u.water_in_l_h + u.oral_water_l_h + f.thirst_water_l_h + f.metabolic_water_l_h,
        );
        set(S::InNa, u.na_in_mmol_h + u.oral_na_mmol_h);
        set(S::InK, u.k_in_mmol_h + u.oral_k_mmol_h);
        set(
            S::InUrea,
            u.urea_in_mmol_h + u.oral_urea_mmol_h + f.urea_generation_mmol_h,
        );
        set(
            S::InGlucose,
            u.glucose_in_mmol_h + u.oral_glucose_mmol_h + f.glucose_production_mmol_h,
        );
        set(S::InAlbumin, u.albumin_in_g_h);

        set(
            S::OutWater,
            u.water_out_l_h + f.urine_l_h + f.insensible_l_h + bl_water_p + bl_water_r,
        );
        set(S::OutNa, u.na_out_mmol_h + f.urine_na_mmol_h + bl_na);
        set(S::OutK, u.k_out_mmol_h + f.urine_k_mmol_h + bl_k);
        set(
            S::OutUrea,
            u.urea_out_mmol_h + f.urine_urea_mmol_h + bl_u_p + bl_u_r,
        );
        set(
            S::OutGlucose,
            u.glucose_out_mmol_h + f.urine_glucose_mmol_h + f.glucose_disposal_mmol_h + bl_g,
        );
        set(S::OutAlbumin, u.albumin_out_g_h + bl_alb);
        set(S::UrineL, f.urine_l_h);
        set(S::UrineNa, f.urine_na_mmol_h);
        set(S::UrineK, f.urine_k_mmol_h);
        // Electrolyte-free water clearance, L/h (Rose, Am J Med 1986):
        // urine flow less the water that would carry its sodium and
        // potassium at the plasma sodium concentration.
        set(
            S::UrineFreeWaterL,
            f.urine_l_h - (f.urine_na_mmol_h + f.urine_k_mmol_h) / conc(s(S::NaPlasma), v_p),
        );
        set(S::InfusedWaterL, u.water_in_l_h);
        set(S::InfusedNa, u.na_in_mmol_h);
        set(S::InfusedK, u.k_in_mmol_h);
    }
}
