//! Formula checks F1–F11 of REFERENCES.md: the engine's helper functions
//! reproduce published formulas exactly (to the rounding of the source).
//! Each check names its source.

use tidewater::formulas::*;
use tidewater::physiology::{capillary, kidney};
use tidewater::units;

fn close(got: f64, want: f64, tol: f64) {
    assert!((got - want).abs() <= tol, "got {got}, want {want} ± {tol}");
}

#[test]
fn f1_watson_total_body_water_man() {
    // Watson, Watson & Batt, Am J Clin Nutr 1980;33:27 (age coefficient
    // 0.09516 as in the original abstract): 30 y, 175 cm, 75 kg -> 43.60 L.
    close(watson_tbw_man_l(30.0, 175.0, 75.0), 43.60, 0.005);
}

#[test]
fn f2_watson_total_body_water_woman() {
    // Watson et al. 1980: woman 165 cm, 65 kg -> 31.57 L.
    close(watson_tbw_woman_l(165.0, 65.0), 31.57, 0.005);
}

#[test]
fn f3_calculated_and_effective_osmolality() {
    // Standard formula (common practice): Na 140, glucose 90 mg/dL, BUN
    // 14 mg/dL -> calculated 290, effective 285 mOsm/kg.
    close(calculated_osmolality_mg_dl(140.0, 90.0, 14.0), 290.0, 1e-9);
    close(effective_osmolality_mg_dl(140.0, 90.0), 285.0, 1e-9);
    // The same in SI units after conversion (90 mg/dL = 5.0 mmol/L glucose,
    // BUN 14 mg/dL = 5.0 mmol/L urea).
    let g = units::glucose_mg_dl_to_mmol_l(90.0);
    let u = units::bun_mg_dl_to_urea_mmol_l(14.0);
    close(calculated_osmolality(140.0, g, u), 290.0, 0.05);
    close(effective_osmolality(140.0, g), 285.0, 0.01);
}

#[test]
fn f4_van_t_hoff_pressure() {
    // van't Hoff with R = 0.082057 L·atm/(mol·K) at 37 °C: 1 mOsm/L ->
    // 19.34 mmHg.
    close(units::van_t_hoff_mmhg_per_mosm_l(37.0), 19.34, 0.005);
}

#[test]
fn f5_landis_pappenheimer() {
    // Landis–Pappenheimer as used by Mullins et al., Am J Clin Pathol 1983:
    // total protein 7 and 5 g/dL -> 25.63 and 15.63 mmHg.
    close(capillary::landis_pappenheimer_mmhg(7.0), 25.63, 0.005);
    close(capillary::landis_pappenheimer_mmhg(5.0), 15.63, 0.0051); // 15.625 rounds to 15.63
}

#[test]
fn f6_electrolyte_free_water_clearance() {
    // EFWC formula (common practice): urine 2 L, U_Na + U_K 100, P_Na 130
    // -> 0.46 L.
    close(
        kidney::electrolyte_free_water_clearance(2.0, 60.0, 40.0, 130.0),
        0.46,
        0.005,
    );
}

#[test]
fn f7_free_water_deficit() {
    // TBW·(Na/140 − 1) (common practice): 70 kg man, TBW 0.6, Na 160 -> 6.00 L.
    close(free_water_deficit_l(0.6 * 70.0, 160.0), 6.00, 1e-9);
}

#[test]
fn f8_sodium_corrected_for_glucose() {
    // Katz, NEJM 1973 (1.6 per 100 mg/dL) and Hillier et al., Am J Med 1999
    // (2.4 per 100 mg/dL): Na 130, glucose 600 mg/dL -> 138.0 and 142.0.
    close(corrected_sodium(130.0, 600.0, KATZ_FACTOR), 138.0, 1e-9);
    close(corrected_sodium(130.0, 600.0, HILLIER_FACTOR), 142.0, 1e-9);
}

#[test]
fn f9_adrogue_madias_hypertonic_saline() {
    // Adrogué & Madias, NEJM 2000: 1 L of 3 % saline (513 mmol/L) into Na
    // 112, TBW 30 L -> +12.94 mmol/L.
    close(adrogue_madias_change(513.0, 112.0, 30.0), 12.94, 0.005);
}

#[test]
fn f10_adrogue_madias_dextrose() {
    // Adrogué & Madias, NEJM 2000: 1 L of 5 % dextrose into Na 168, TBW 34 L
    // -> −4.80 mmol/L.
    close(adrogue_madias_change(0.0, 168.0, 34.0), -4.80, 0.005);
}

#[test]
fn f11_urine_flow_from_solute_and_osmolality() {
    // Guyton & Hall textbook; common practice: 600 mOsm/day at 1200 mOsm/kg
    // -> 0.5 L/day; 900 mOsm/day at 50 mOsm/kg -> 18 L/day.
    close(kidney::urine_flow_l_h(600.0, 1200.0), 0.5, 1e-12);
    close(kidney::urine_flow_l_h(900.0, 50.0), 18.0, 1e-12);
}

#[test]
fn edelman_relation_is_implemented_as_published() {
    // Edelman et al., J Clin Invest 1958: Na = 1.11·(Na_e + K_e)/TBW − 25.6.
    // Worked example (arithmetic of the formula): Na_e 2800, K_e 3200,
    // TBW 42 -> 1.11·6000/42 − 25.6 = 132.97.
    close(edelman_sodium(2800.0, 3200.0, 42.0), 132.971, 0.001);
}
