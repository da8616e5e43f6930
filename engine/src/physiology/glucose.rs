//! Glucose: endogenous production and disposal (docs/model.md, metabolism and insensible loss).
//!
//! Glucose stays in the extracellular fluid, where it is an effective osmole
//! at cell membranes whose uptake needs insulin. Disposal has an
//! insulin-independent part (brain, red cells; saturating) and an
//! insulin-dependent part that grows with glucose above its set point.
//! Glucose disposed of is oxidised: the water that carried it remains as
//! free water (dextrose solutions act as water once metabolised).

/// Glucose disposal, mmol/h, at extracellular glucose `g_mmol_l`.
///
/// At `g = set_point` with `insulin = 1` it equals `production`:
/// `P·[f·g(Km+G₀)/(G₀(Km+g)) + (1−f)·insulin·(g/G₀)^gain]`.
pub fn disposal_mmol_h(
    g_mmol_l: f64,
    set_point_mmol_l: f64,
    production_mmol_h: f64,
    independent_fraction: f64,
    km_mmol_l: f64,
    insulin: f64,
    gain: f64,
) -> f64 {
    let g = g_mmol_l.max(0.0);
    let independent = independent_fraction * g * (km_mmol_l + set_point_mmol_l)
        / (set_point_mmol_l * (km_mmol_l + g));
    let dependent =
        (1.0 - independent_fraction) * insulin * super::power(g / set_point_mmol_l, gain);
    production_mmol_h * (independent + dependent)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn balanced_at_set_point_and_rising_with_glucose() {
        let d0 = disposal_mmol_h(5.0, 5.0, 46.0, 0.5, 1.5, 1.0, 2.0);
        assert!((d0 - 46.0).abs() < 1e-9);
        assert!(disposal_mmol_h(8.0, 5.0, 46.0, 0.5, 1.5, 1.0, 2.0) > 1.5 * 46.0);
        // Without insulin, disposal saturates below production: glucose
        // accumulates.
        assert!(disposal_mmol_h(50.0, 5.0, 46.0, 0.5, 1.5, 0.0, 2.0) < 46.0);
    }
}
