//! Unit conversions at the edges of the engine.
//!
//! Inside the engine: volumes in litres (L), amounts in mmol (albumin in
//! grams), time in hours (h), pressures in mmHg, concentrations in mmol per
//! litre of *water* (the dilute-solution approximation: osmolality in
//! mOsm/kg of water is taken equal to mOsm per litre of water).

/// Molar mass of glucose, g/mol.
pub const GLUCOSE_G_PER_MOL: f64 = 180.16;
/// Grams of urea nitrogen per mole of urea (two nitrogen atoms, 2 x 14.007).
pub const UREA_N_G_PER_MOL: f64 = 28.014;
/// Molar mass of urea, g/mol.
pub const UREA_G_PER_MOL: f64 = 60.06;
/// Gas constant, L·atm/(mol·K).
pub const GAS_CONSTANT_L_ATM: f64 = 0.082057;
/// mmHg per atmosphere.
pub const MMHG_PER_ATM: f64 = 760.0;

/// Glucose mg/dL to mmol/L (90 mg/dL = 5.0 mmol/L).
pub fn glucose_mg_dl_to_mmol_l(mg_dl: f64) -> f64 {
    mg_dl * 10.0 / GLUCOSE_G_PER_MOL
}

/// Glucose mmol/L to mg/dL.
pub fn glucose_mmol_l_to_mg_dl(mmol_l: f64) -> f64 {
    mmol_l * GLUCOSE_G_PER_MOL / 10.0
}

/// Blood urea nitrogen mg/dL to urea mmol/L (14 mg/dL = 5.0 mmol/L).
pub fn bun_mg_dl_to_urea_mmol_l(mg_dl: f64) -> f64 {
    mg_dl * 10.0 / UREA_N_G_PER_MOL
}

/// Urea mmol/L to blood urea nitrogen mg/dL.
pub fn urea_mmol_l_to_bun_mg_dl(mmol_l: f64) -> f64 {
    mmol_l * UREA_N_G_PER_MOL / 10.0
}

/// Millilitres to litres.
pub fn ml_to_l(ml: f64) -> f64 {
    ml / 1000.0
}

/// Litres to millilitres.
pub fn l_to_ml(l: f64) -> f64 {
    l * 1000.0
}

/// Minutes to hours.
pub fn min_to_h(min: f64) -> f64 {
    min / 60.0
}

/// Seconds to hours.
pub fn s_to_h(s: f64) -> f64 {
    s / 3600.0
}

/// Per-minute rate to per-hour rate.
pub fn per_min_to_per_h(x: f64) -> f64 {
    x * 60.0
}

/// Per-day rate to per-hour rate.
pub fn per_day_to_per_h(x: f64) -> f64 {
    x / 24.0
}

/// Per hour to per day.
pub fn per_h_to_per_day(x: f64) -> f64 {
    x * 24.0
}

/// van't Hoff factor RT in mmHg per mOsm/L at a temperature in °C:
/// an osmolality difference of 1 mOsm/L across an ideal semipermeable
/// membrane balances this hydrostatic pressure (19.34 mmHg at 37 °C).
pub fn van_t_hoff_mmhg_per_mosm_l(temperature_c: f64) -> f64 {
    // R [L·atm/(mol·K)] · T [K] gives atm per mol/L = atm per 1000 mOsm/L.
    GAS_CONSTANT_L_ATM * (temperature_c + 273.15) * MMHG_PER_ATM / 1000.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips() {
        for x in [0.0, 1.0, 5.5, 33.3] {
            assert!((glucose_mmol_l_to_mg_dl(glucose_mg_dl_to_mmol_l(x)) - x).abs() < 1e-12);
            assert!((urea_mmol_l_to_bun_mg_dl(bun_mg_dl_to_urea_mmol_l(x)) - x).abs() < 1e-12);
            assert!((l_to_ml(ml_to_l(x)) - x).abs() < 1e-12);
        }
        assert!((min_to_h(90.0) - 1.5).abs() < 1e-12);
        assert!((per_day_to_per_h(24.0) - 1.0).abs() < 1e-12);
    }
}
