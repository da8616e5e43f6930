//! Drug kinetics and effects (docs/model.md, drugs): one-compartment
//! kinetics with first-order absorption from a depot (under the skin, nose,
//! gut) and first-order elimination, and the effect each drug has at the
//! amount in the body. Amounts are in the drug's own unit (µg, mg).

/// Amount leaving a depot per hour, with absorption time constant
/// `time_constant_h` (first order).
pub fn absorbed_per_h(depot: f64, time_constant_h: f64) -> f64 {
    depot.max(0.0) / time_constant_h
}

/// Amount eliminated per hour from the body with half-life `half_life_h`.
pub fn eliminated_per_h(amount: f64, half_life_h: f64) -> f64 {
    std::f64::consts::LN_2 / half_life_h * amount.max(0.0)
}

/// Fraction of V2 agonism left by a competitive antagonist: agonism is
/// divided by `1 + amount/ki` (Gaddum's law for a competitive antagonist).
pub fn v2_agonism_left(antagonist_mg: f64, ki_mg: f64) -> f64 {
    1.0 / (1.0 + antagonist_mg.max(0.0) / ki_mg)
}

/// Rate of change of the amount at a drug's site of action, which follows
/// the amount in the body with time constant `delay_h` (an effect
/// compartment: the drug acts where it is delivered, not where it is
/// measured).
pub fn toward_effect_site(in_body: f64, at_site: f64, delay_h: f64) -> f64 {
    (in_body.max(0.0) - at_site) / delay_h
}

/// Effect of a loop diuretic (0 to 1) at `amount_mg` in the body: a
/// sigmoid (Hill) dose-response with half effect at `ec50_mg`, the steep,
/// saturating natriuretic response of loop diuretics.
pub fn loop_effect(amount_mg: f64, ec50_mg: f64, hill: f64) -> f64 {
    let a = crate::physiology::power(amount_mg.max(0.0) / ec50_mg, hill);
    a / (1.0 + a)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn elimination_halves_in_one_half_life() {
        // Definition of the half-life: d/dt A = -ln2/t½ · A.
        let (a, t_half) = (40.0, 1.0);
        let k = eliminated_per_h(a, t_half) / a;
        assert!(((-k * t_half).exp() - 0.5).abs() < 1e-12);
    }

    #[test]
    fn a_competitive_antagonist_at_ki_halves_agonism() {
        assert!((v2_agonism_left(10.0, 10.0) - 0.5).abs() < 1e-12);
        assert_eq!(v2_agonism_left(0.0, 10.0), 1.0);
    }

    #[test]
    fn the_effect_site_of_an_iv_bolus_peaks_after_the_injection() {
        // Bolus 40 mg, elimination half-life 1 h, effect-site delay 0.25 h:
        // the site peaks at ln(ke0/k)/(ke0 - k) = 0.53 h (the textbook
        // solution of the two first-order steps).
        let (k, ke0) = (std::f64::consts::LN_2, 4.0);
        let t_peak = (ke0 / k).ln() / (ke0 - k);
        let (mut a, mut e, dt) = (40.0_f64, 0.0_f64, 1e-4);
        let (mut best, mut t_best) = (0.0, 0.0);
        for i in 0..20_000 {
            let t = i as f64 * dt;
            if e > best {
                best = e;
                t_best = t;
            }
            let de = toward_effect_site(a, e, 1.0 / ke0);
            a -= eliminated_per_h(a, 1.0) * dt;
            e += de * dt;
        }
        assert!((t_best - t_peak).abs() < 0.01, "{t_best} vs {t_peak}");
    }

    #[test]
    fn loop_effect_is_half_at_ec50_and_saturates() {
        assert!((loop_effect(10.0, 10.0, 2.0) - 0.5).abs() < 1e-12);
        assert!(loop_effect(100.0, 10.0, 2.0) > 0.99);
        assert_eq!(loop_effect(0.0, 10.0, 2.0), 0.0);
    }
}
