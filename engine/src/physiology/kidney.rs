//! Kidney and antidiuretic hormone (MODEL.md section 4).
//!
//! Vasopressin rises linearly with plasma osmolality above a threshold
//! (Baylis & Robertson 1980); urine osmolality rises with V2 agonism from a
//! minimum to a maximum; solute excretion follows balance at rest, the
//! extracellular volume (sodium), plasma potassium, filtered urea and
//! filtered glucose above threshold. Urine flow is solute excretion divided
//! by urine osmolality.

use super::{power, smooth_positive, smooth_ramp};

/// Osmotically driven plasma vasopressin, pmol/L:
/// `slope · max(0, P_osm − threshold)`, with a 0.5 mOsm/kg smooth corner.
pub fn osmotic_vasopressin_pmol_l(plasma_osm: f64, threshold: f64, slope: f64) -> f64 {
    slope * smooth_positive(plasma_osm - threshold, 0.5)
}

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
    (max_young - decline_per_year * (age_years - 30.0).max(0.0)).max(500.0_f64.min(max_young))
}

/// Vasopressin released by a fall of blood volume (pmol/L): `gain ·
/// max(0, deficit − threshold)` where `deficit` is the fraction of normal
/// blood volume missing (non-osmotic release, steep past ~8–10 % loss).
pub fn volume_vasopressin_pmol_l(deficit_fraction: f64, threshold: f64, gain: f64) -> f64 {
    gain * smooth_ramp(deficit_fraction - threshold, 0.01)
}

/// Range of urine osmolality (min, max) narrowed in proportion to GFR
/// below `ckd_gfr` (the failing kidney drifts toward isosthenuria,
/// ~300 mOsm/kg).
pub fn concentrating_range(min: f64, max: f64, gfr: f64, ckd_gfr: f64) -> (f64, f64) {
    let f = (gfr / ckd_gfr).min(1.0);
    let iso = 300.0;
    (iso + (min - iso) * f, iso + (max - iso) * f)
}

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
    fn vasopressin_threshold_and_urine_range() {
        assert!(osmotic_vasopressin_pmol_l(270.0, 284.0, 0.63) < 1e-6);
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
}
