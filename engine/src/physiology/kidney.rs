//! The kidney (docs/model.md, the kidney).
//!
//! Urine osmolality rises with V2 agonism (vasopressin, set in
//! [`super::osmoregulation`], plus drugs) from a minimum to a maximum, both
//! of which narrow with age; solute excretion follows balance at rest, the
//! extracellular volume (sodium), plasma potassium, filtered urea and
//! filtered glucose above threshold. Urine flow is solute excretion divided
//! by urine osmolality.

use super::{power, smooth_ramp};

/// Urine osmolality (mOsm/kg) for a V2 agonist level `avp_pmol_l`
/// (endogenous vasopressin plus drug equivalents): a Hill curve between
/// `min` and `max`.
pub fn urine_osmolality(avp_pmol_l: f64, min: f64, max: f64, half_pmol_l: f64, hill: f64) -> f64 {
    let a = power(avp_pmol_l.max(0.0), hill);
    min + (max - min) * a / (a + power(half_pmol_l, hill))
}

/// Maximal urine osmolality at a given age: declines linearly after 30
/// years, never below 500 mOsm/kg.
pub fn max_urine_osmolality_for_age(max_young: f64, decline_per_year: f64, age_years: f64) -> f64 {
    (max_young - decline_per_year * (age_years - YOUNG_ADULT_AGE_YEARS).max(0.0))
        .max(OLD_AGE_MAX_URINE_FLOOR_MOSM_KG.min(max_young))
}

/// Range of urine osmolality (min, max) narrowed in proportion to GFR
/// below `ckd_gfr` (the failing kidney drifts toward isosthenuria,
/// ~300 mOsm/kg).
pub fn concentrating_range(min: f64, max: f64, gfr: f64, ckd_gfr: f64) -> (f64, f64) {
    let f = (gfr / ckd_gfr).min(1.0);
    (
        ISOSTHENURIC_MOSM_KG + (min - ISOSTHENURIC_MOSM_KG) * f,
        ISOSTHENURIC_MOSM_KG + (max - ISOSTHENURIC_MOSM_KG) * f,
    )
}

/// Urine osmolality of a kidney that can neither concentrate nor dilute
/// (isosthenuria: the osmolality of plasma), mOsm/kg. A fact of physiology,
/// not a tunable parameter (common practice: ~300 mOsm/kg).
pub const ISOSTHENURIC_MOSM_KG: f64 = 300.0;

/// Most concentrated urine at a given age can fall no lower than this
/// (mOsm/kg): even old kidneys concentrate above plasma (from memory:
/// healthy octogenarians still reach ~500 mOsm/kg after overnight thirst).
pub const OLD_AGE_MAX_URINE_FLOOR_MOSM_KG: f64 = 500.0;

/// Most dilute urine at a given age (mOsm/kg): rises linearly after 30
/// years, the diluting capacity falling with age, and never above
/// isosthenuria.
pub fn min_urine_osmolality_for_age(min_young: f64, rise_per_year: f64, age_years: f64) -> f64 {
    (min_young + rise_per_year * (age_years - YOUNG_ADULT_AGE_YEARS).max(0.0))
        .min(ISOSTHENURIC_MOSM_KG)
}

/// Age from which the concentrating and diluting range narrows, years
/// (common practice: renal ageing is counted from the fourth decade).
pub const YOUNG_ADULT_AGE_YEARS: f64 = 30.0;

/// Urine flow (L/h) = osmolar excretion (mOsm/h) / urine osmolality
/// (mOsm/kg, ≈ mOsm/L of urine water).
pub fn urine_flow_l_h(solute_mosm_h: f64, urine_osm: f64) -> f64 {
    solute_mosm_h / urine_osm
}

/// Electrolyte-free water clearance: `V · (1 − (U_Na + U_K)/P_Na)`, in the
/// unit of `urine_flow`.
pub fn electrolyte_free_water_clearance(urine_flow: f64, u_na: f64, u_k: f64, p_na: f64) -> f64 {
    urine_flow * (1.0 - (u_na + u_k) / p_na)
}

/// Osmolar clearance `U_osm · V / P_osm`, in the unit of `urine_flow`.
pub fn osmolar_clearance(urine_flow: f64, urine_osm: f64, plasma_osm: f64) -> f64 {
    urine_osm * urine_flow / plasma_osm
}

/// Free-water clearance `V − C_osm`, in the unit of `urine_flow`.
pub fn free_water_clearance(urine_flow: f64, urine_osm: f64, plasma_osm: f64) -> f64 {
    urine_flow - osmolar_clearance(urine_flow, urine_osm, plasma_osm)
}

/// Sodium excretion (mmol/h): the resting rate `base` scaled by
/// `exp(gain·x)` where `x` is the relative change of extracellular volume
/// (volume natriuresis), saturating smoothly at `max`.
pub fn sodium_excretion_mmol_h(base: f64, gain: f64, relative_ecf_change: f64, max: f64) -> f64 {
    let e = (gain * relative_ecf_change).min(50.0).exp();
    base * e / (1.0 + base * (e - 1.0) / max)
}

/// Potassium excretion (mmol/h): the resting rate scaled by
/// `(K/K₀)^exponent`.
pub fn potassium_excretion_mmol_h(base: f64, k: f64, k0: f64, exponent: f64) -> f64 {
    base * power(k.max(0.0) / k0, exponent)
}

/// Glucose excretion (mmol/h): filtered glucose above the renal threshold
/// (`GFR·(P_G − threshold)`, smooth corner of 0.5 mmol/L).
pub fn glucose_excretion_mmol_h(gfr_l_h: f64, glucose: f64, threshold: f64) -> f64 {
    gfr_l_h * smooth_ramp(glucose - threshold, 0.5)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn urine_range_spans_min_to_max() {
        let u_low = urine_osmolality(0.0, 50.0, 1200.0, 1.8, 2.0);
        let u_high = urine_osmolality(50.0, 50.0, 1200.0, 1.8, 2.0);
        assert!((u_low - 50.0).abs() < 1e-12);
        assert!(u_high > 1190.0);
    }

    #[test]
    fn natriuresis_is_resting_at_rest_and_saturates() {
        assert!((sodium_excretion_mmol_h(6.25, 13.0, 0.0, 50.0) - 6.25).abs() < 1e-12);
        assert!(sodium_excretion_mmol_h(6.25, 13.0, 1.0, 50.0) <= 50.0);
        assert!(sodium_excretion_mmol_h(6.25, 13.0, -0.2, 50.0) < 1.0);
    }

    #[test]
    fn age_lowers_concentrating_ability() {
        assert_eq!(max_urine_osmolality_for_age(1200.0, 5.0, 25.0), 1200.0);
        assert_eq!(max_urine_osmolality_for_age(1200.0, 5.0, 80.0), 950.0);
        assert_eq!(max_urine_osmolality_for_age(1200.0, 5.0, 200.0), 500.0);
    }

    #[test]
    fn age_raises_the_most_dilute_urine() {
        // Faull, Holmes & Baylis, Age Ageing 1993 (from memory): ~52 mOsm/kg
        // in the young, ~92 mOsm/kg in healthy elderly after a water load.
        assert_eq!(min_urine_osmolality_for_age(50.0, 0.8, 25.0), 50.0);
        let old = min_urine_osmolality_for_age(50.0, 0.8, 80.0);
        assert!((80.0..=100.0).contains(&old), "{old}");
        assert_eq!(min_urine_osmolality_for_age(50.0, 0.8, 500.0), 300.0);
    }
}
