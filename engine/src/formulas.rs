//! Bedside formulas of the trade, for comparison with the full model and
//! for reports. Each function names its published source.
//!
//! These formulas assume a closed body (no urine, no insensible loss) and
//! instant equilibration; the simulation does not use them to compute
//! anything, only to show where a bedside estimate would land.

/// Watson total body water (L) for men:
/// `2.447 − 0.09516·age + 0.1074·height_cm + 0.3362·weight_kg`
/// (Watson, Watson & Batt, Am J Clin Nutr 1980;33:27; the abstract's age
/// coefficient 0.09516, which some secondary copies misprint as 0.09156).
pub fn watson_tbw_man_l(age_years: f64, height_cm: f64, weight_kg: f64) -> f64 {
    2.447 - 0.09516 * age_years + 0.1074 * height_cm + 0.3362 * weight_kg
}

/// Watson total body water (L) for women:
/// `−2.097 + 0.1069·height_cm + 0.2466·weight_kg` (Watson et al. 1980).
pub fn watson_tbw_woman_l(height_cm: f64, weight_kg: f64) -> f64 {
    -2.097 + 0.1069 * height_cm + 0.2466 * weight_kg
}

/// Calculated plasma osmolality (mOsm/kg) from mmol/L values:
/// `2·Na + glucose + urea` (common practice).
pub fn calculated_osmolality(na: f64, glucose_mmol_l: f64, urea_mmol_l: f64) -> f64 {
    2.0 * na + glucose_mmol_l + urea_mmol_l
}

/// Calculated plasma osmolality (mOsm/kg) from conventional US units:
/// `2·Na + glucose/18 + BUN/2.8` (common practice).
pub fn calculated_osmolality_mg_dl(na: f64, glucose_mg_dl: f64, bun_mg_dl: f64) -> f64 {
    2.0 * na + glucose_mg_dl / 18.0 + bun_mg_dl / 2.8
}

/// Effective plasma osmolality (tonicity, mOsm/kg): `2·Na + glucose`
/// (urea left out as an ineffective osmole; common practice).
pub fn effective_osmolality(na: f64, glucose_mmol_l: f64) -> f64 {
    2.0 * na + glucose_mmol_l
}

/// Effective osmolality from conventional units: `2·Na + glucose/18`.
pub fn effective_osmolality_mg_dl(na: f64, glucose_mg_dl: f64) -> f64 {
    2.0 * na + glucose_mg_dl / 18.0
}

/// Free-water deficit (L) of hypernatremia: `TBW·(Na/140 − 1)`
/// (common practice).
pub fn free_water_deficit_l(tbw_l: f64, na: f64) -> f64 {
    tbw_l * (na / 140.0 - 1.0)
}

/// Sodium corrected for hyperglycemia: `Na + factor·(glucose_mg_dl − 100)/100`,
/// with factor 1.6 (Katz, NEJM 1973) or 2.4 (Hillier et al., Am J Med 1999).
pub fn corrected_sodium(na: f64, glucose_mg_dl: f64, factor_per_100_mg_dl: f64) -> f64 {
    na + factor_per_100_mg_dl * (glucose_mg_dl - 100.0) / 100.0
}

/// Katz's factor: 1.6 mmol/L of sodium per 100 mg/dL of glucose (NEJM 1973).
pub const KATZ_FACTOR: f64 = 1.6;
/// Hillier's factor: 2.4 mmol/L per 100 mg/dL (Am J Med 1999).
pub const HILLIER_FACTOR: f64 = 2.4;

/// Adrogué–Madias: change of serum sodium (mmol/L) after one litre of an
/// infusate, `(infusate Na + K − serum Na)/(TBW + 1)` (Adrogué & Madias,
/// NEJM 2000).
pub fn adrogue_madias_change(infusate_na_plus_k: f64, serum_na: f64, tbw_l: f64) -> f64 {
    (infusate_na_plus_k - serum_na) / (tbw_l + 1.0)
}

/// Edelman: serum sodium from exchangeable sodium and potassium (mmol) and
/// total body water (L): `1.11·(Na_e + K_e)/TBW − 25.6` (Edelman et al.,
/// J Clin Invest 1958).
pub fn edelman_sodium(na_e_mmol: f64, k_e_mmol: f64, tbw_l: f64) -> f64 {
    1.11 * (na_e_mmol + k_e_mmol) / tbw_l - 25.6
}
