//! What the model is given: the switches that take whole mechanisms out
//! and the piecewise-constant input rates of one stretch of time, with
//! their flat form for the solver.

use serde::Serialize;

/// Mechanisms that can be switched off as a whole.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Switches {
    /// Renal excretion of water and solutes.
    pub kidneys: bool,
    /// Insensible water loss (skin, lungs).
    pub insensible_loss: bool,
    /// Water of oxidation.
    pub metabolic_water: bool,
    /// Urea generation from protein catabolism.
    pub urea_generation: bool,
    /// Habitual intake of water, salt and potassium that keeps a free-living
    /// patient in balance (off for a ward patient who takes only what the
    /// scenario gives).
    pub habitual_intake: bool,
}

impl Default for Switches {
    fn default() -> Self {
        Self {
            kidneys: true,
            insensible_loss: true,
            metabolic_water: true,
            urea_generation: true,
            habitual_intake: true,
        }
    }
}

impl Switches {
    /// A closed system: no urine, no insensible loss, no water of oxidation,
    /// no urea generation, no habitual intake. Glucose metabolism stays on
    /// (dextrose must still become free water). This is the limit in which
    /// closed-body bedside formulas hold.
    pub fn closed() -> Self {
        Self {
            kidneys: false,
            insensible_loss: false,
            metabolic_water: false,
            urea_generation: false,
            habitual_intake: false,
        }
    }
}

/// Number of entries in the input vector (see [`Inputs::to_vec`]).
pub const N_INPUTS: usize = 24;

/// Piecewise-constant inputs during one stretch of time: everything given
/// to and taken from the body by the scenario, as rates. Infusions enter
/// the plasma; drinks, tube feeds and tablets enter the gut lumen (the
/// `oral_*` rates) and reach plasma as they are absorbed; losses of fixed
/// composition leave the plasma; blood loss removes whole blood. (All other
/// exchange with the outside, including insensible loss, water of oxidation
/// and glucose metabolism, is placed at the plasma, so that the resting
/// state has no standing gradients.)
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct Inputs {
    /// Water given, L/h.
    pub water_in_l_h: f64,
    /// Sodium given, mmol/h.
    pub na_in_mmol_h: f64,
    /// Potassium given, mmol/h.
    pub k_in_mmol_h: f64,
    /// Urea given, mmol/h.
    pub urea_in_mmol_h: f64,
    /// Glucose given, mmol/h.
    pub glucose_in_mmol_h: f64,
    /// Albumin given, g/h.
    pub albumin_in_g_h: f64,
    /// Water lost in fluids of fixed composition, L/h.
    pub water_out_l_h: f64,
    /// Sodium lost, mmol/h.
    pub na_out_mmol_h: f64,
    /// Potassium lost, mmol/h.
    pub k_out_mmol_h: f64,
    /// Urea lost, mmol/h.
    pub urea_out_mmol_h: f64,
    /// Glucose lost, mmol/h.
    pub glucose_out_mmol_h: f64,
    /// Albumin lost, g/h.
    pub albumin_out_g_h: f64,
    /// Whole blood lost, L/h.
    pub blood_loss_l_h: f64,
    /// Desmopressin into an absorption depot (under the skin, nose, gut), ug/h.
    pub desmopressin_depot_ug_h: f64,
    /// Desmopressin straight into the circulation, ug/h.
    pub desmopressin_ug_h: f64,
    /// Oral V2 antagonist absorbed, mg/h.
    pub v2_antagonist_mg_h: f64,
    /// Loop diuretic straight into the circulation, mg/h.
    pub loop_diuretic_mg_h: f64,
    /// Thiazide effect, 0 (none) to 1 (full).
    pub thiazide_effect: f64,
    /// Water drunk or given by tube into the gut, L/h.
    pub oral_water_l_h: f64,
    /// Sodium into the gut (drinks, food, tablets), mmol/h.
    pub oral_na_mmol_h: f64,
    /// Potassium into the gut, mmol/h.
    pub oral_k_mmol_h: f64,
    /// Urea into the gut, mmol/h.
    pub oral_urea_mmol_h: f64,
    /// Glucose into the gut, mmol/h.
    pub oral_glucose_mmol_h: f64,
    /// Oral loop diuretic into its absorption depot (the bioavailable
    /// share), mg/h.
    pub loop_diuretic_depot_mg_h: f64,
}

impl Inputs {
    /// Flatten into the solver's parameter vector.
    pub fn to_vec(&self) -> Vec<f64> {
        self.to_array().to_vec()
    }

    /// The rates in the solver's parameter order, without allocating.
    pub fn to_array(&self) -> [f64; N_INPUTS] {
        [
            self.water_in_l_h,
            self.na_in_mmol_h,
            self.k_in_mmol_h,
            self.urea_in_mmol_h,
            self.glucose_in_mmol_h,
            self.albumin_in_g_h,
            self.water_out_l_h,
            self.na_out_mmol_h,
            self.k_out_mmol_h,
            self.urea_out_mmol_h,
            self.glucose_out_mmol_h,
            self.albumin_out_g_h,
            self.blood_loss_l_h,
            self.desmopressin_depot_ug_h,
            self.desmopressin_ug_h,
            self.v2_antagonist_mg_h,
            self.loop_diuretic_mg_h,
            self.thiazide_effect,
            self.oral_water_l_h,
            self.oral_na_mmol_h,
            self.oral_k_mmol_h,
            self.oral_urea_mmol_h,
            self.oral_glucose_mmol_h,
            self.loop_diuretic_depot_mg_h,
        ]
    }

    /// Rebuild from the solver's parameter vector.
    pub fn from_slice(p: &[f64]) -> Self {
        Self {
            water_in_l_h: p[0],
            na_in_mmol_h: p[1],
            k_in_mmol_h: p[2],
            urea_in_mmol_h: p[3],
            glucose_in_mmol_h: p[4],
            albumin_in_g_h: p[5],
            water_out_l_h: p[6],
            na_out_mmol_h: p[7],
            k_out_mmol_h: p[8],
            urea_out_mmol_h: p[9],
            glucose_out_mmol_h: p[10],
            albumin_out_g_h: p[11],
            blood_loss_l_h: p[12],
            desmopressin_depot_ug_h: p[13],
            desmopressin_ug_h: p[14],
            v2_antagonist_mg_h: p[15],
            loop_diuretic_mg_h: p[16],
            thiazide_effect: p[17],
            oral_water_l_h: p[18],
            oral_na_mmol_h: p[19],
            oral_k_mmol_h: p[20],
            oral_urea_mmol_h: p[21],
            oral_glucose_mmol_h: p[22],
            loop_diuretic_depot_mg_h: p[23],
        }
    }

    /// Sum of two sets of inputs.
    pub fn plus(&self, o: &Inputs) -> Inputs {
        let (mut s, b) = (self.to_array(), o.to_array());
        for (x, y) in s.iter_mut().zip(b) {
            *x += y;
        }
        let mut sum = Inputs::from_slice(&s);
        // A daily thiazide does not add beyond full effect.
        sum.thiazide_effect = sum.thiazide_effect.min(1.0);
        sum
    }
}
