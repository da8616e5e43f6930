//! The gut: what is drunk, taken by tube or swallowed as tablets waits in
//! the gut lumen and is absorbed into plasma with first-order kinetics
//! (docs/model.md, the gut). Water labelled with deuterium appears in
//! plasma within 5 min of drinking and is absorbed with a half-life of
//! about 11-13 min (Péronnet et al. 2012, `gut_absorption_half_life_min`);
//! the solutes a drink carries are absorbed with it, at the same fractional
//! rate, so that an isotonic drink stays isotonic on its way in.

/// First-order absorption rate constant, 1/h, from a half-life in minutes.
pub fn absorption_rate_per_h(half_life_min: f64) -> f64 {
    std::f64::consts::LN_2 / crate::units::min_to_h(half_life_min)
}

/// Amount absorbed per hour from a gut pool holding `amount` (L or mmol).
pub fn absorbed_per_h(amount: f64, rate_per_h: f64) -> f64 {
    rate_per_h * amount.max(0.0)
}

/// Gut content that a constant intake `intake_per_h` holds at steady state
/// (intake equals absorption).
pub fn steady_content(intake_per_h: f64, rate_per_h: f64) -> f64 {
    intake_per_h / rate_per_h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn half_of_a_drink_is_absorbed_in_one_half_life() {
        // First-order kinetics: after one half-life half remains
        // (definition of the half-life).
        let k = absorption_rate_per_h(12.0);
        let remaining = (-k * 12.0 / 60.0).exp();
        assert!((remaining - 0.5).abs() < 1e-12);
    }

    #[test]
    fn a_steady_intake_holds_a_content_that_absorbs_at_the_intake_rate() {
        let k = absorption_rate_per_h(12.0);
        let gut = steady_content(0.1, k);
        assert!((absorbed_per_h(gut, k) - 0.1).abs() < 1e-15);
        // 2.4 L/day is held as ~29 mL in the lumen.
        assert!((gut - 0.1 * 0.2 / std::f64::consts::LN_2).abs() < 1e-12);
    }
}
