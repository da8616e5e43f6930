//! Osmoregulation: vasopressin secretion and thirst (docs/model.md, the
//! start and the kidney).
//!
//! Plasma vasopressin rises linearly with plasma osmolality above an
//! individual threshold (Baylis & Robertson, J R Soc Med 1980), rises
//! steeply with a loss of blood volume beyond ~8-10 %, and in inappropriate
//! antidiuresis never falls below a floor. Thirst begins at a higher
//! osmolality. Each person's threshold follows their usual osmolality
//! (thresholds differ between healthy people and are stable within one):
//! [`solve_threshold`] finds the threshold at which the start is steady
//! with the patient's habitual intake.

use super::{smooth_positive, smooth_ramp};

/// Width of the smooth corner of osmotic release at the threshold, mOsm/kg
/// (numerical smoothing; well below the assay's resolution).
pub const OSMOTIC_CORNER_MOSM_KG: f64 = 0.5;
/// Width of the smooth corner of volume-driven release, fraction of blood
/// volume (numerical smoothing).
pub const VOLUME_CORNER_FRACTION: f64 = 0.01;
/// Width of the smooth corner where stimulated release rises above the
/// floor, pmol/L (numerical smoothing).
pub const FLOOR_CORNER_PMOL_L: f64 = 0.2;
/// Width of the smooth corner of thirst at its threshold, mOsm/kg.
pub const THIRST_CORNER_MOSM_KG: f64 = 0.5;

/// Osmotically driven plasma vasopressin, pmol/L:
/// `slope · max(0, P_osm − threshold)`, with a smooth corner.
pub fn osmotic_vasopressin_pmol_l(plasma_osm: f64, threshold: f64, slope: f64) -> f64 {
    slope * smooth_positive(plasma_osm - threshold, OSMOTIC_CORNER_MOSM_KG)
}

/// Vasopressin released by a fall of blood volume (pmol/L): `gain ·
/// max(0, deficit − threshold)` where `deficit` is the fraction of normal
/// blood volume missing (non-osmotic release, steep past ~8–10 % loss).
pub fn volume_vasopressin_pmol_l(deficit_fraction: f64, threshold: f64, gain: f64) -> f64 {
    gain * smooth_ramp(deficit_fraction - threshold, VOLUME_CORNER_FRACTION)
}

/// Plasma vasopressin from the stimulated release (osmotic plus volume)
/// and an unsuppressible floor (0 when secretion is appropriate), pmol/L.
pub fn plasma_vasopressin_pmol_l(stimulated: f64, floor: f64) -> f64 {
    if floor > 0.0 {
        floor + smooth_positive(stimulated - floor, FLOOR_CORNER_PMOL_L)
    } else {
        stimulated
    }
}

/// Drinking driven by thirst, L/h: `gain · max(0, P_osm − threshold)`, no
/// more than `max_l_h`.
pub fn thirst_drinking_l_h(plasma_osm: f64, threshold: f64, gain: f64, max_l_h: f64) -> f64 {
    max_l_h.min(gain * smooth_ramp(plasma_osm - threshold, THIRST_CORNER_MOSM_KG))
}

/// The plasma osmolality at which thirst begins, mOsm/kg: the threshold
/// given, or (`given` 0) the person's own vasopressin threshold plus
/// `offset` (the two thresholds lie close together: Thompson et al., Clin
/// Sci 1986), raised by `raise` where the start needs it (see
/// [`onset_for_drinking`]).
pub fn thirst_onset_mosm_kg(given: f64, own_avp_threshold: f64, offset: f64, raise: f64) -> f64 {
    if given > 0.0 {
        given
    } else {
        own_avp_threshold + offset + raise
    }
}

/// The thirst onset at which thirst drinking at `plasma_osm` is exactly
/// `drinking_l_h` (below the cap): the inverse of
/// [`thirst_drinking_l_h`] in its threshold.
pub fn onset_for_drinking(plasma_osm: f64, drinking_l_h: f64, gain: f64) -> f64 {
    let w = THIRST_CORNER_MOSM_KG;
    let r = (drinking_l_h / gain).max(0.0);
    let x = if r >= w { r } else { 2.0 * (r * w).sqrt() - w };
    plasma_osm - x
}

/// How the start's water balance was closed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ThresholdFit {
    /// A threshold inside the window balances the habitual intake.
    Found(f64),
    /// Even the highest threshold in the window leaves the urine too
    /// concentrated for the intake (vasopressin from another stimulus).
    TooConcentrated(f64),
    /// Even the lowest threshold leaves more urine than the intake
    /// replaces (too little vasopressin can be called on, or too much
    /// solute).
    TooDilute(f64),
}

/// The osmotic threshold in `[low, high]` at which `urine_l_h(threshold)`
/// equals `target_l_h`. Urine flow rises with the threshold (a higher
/// threshold means less vasopressin); bisection to 1e-9 mOsm/kg.
pub fn solve_threshold(
    mut urine_l_h: impl FnMut(f64) -> f64,
    target_l_h: f64,
    low: f64,
    high: f64,
) -> ThresholdFit {
    let (at_low, at_high) = (urine_l_h(low), urine_l_h(high));
    if target_l_h > at_high {
        return ThresholdFit::TooConcentrated(high);
    }
    if target_l_h < at_low {
        return ThresholdFit::TooDilute(low);
    }
    let (mut a, mut b) = (low, high);
    while b - a > 1e-9 {
        let m = 0.5 * (a + b);
        if urine_l_h(m) < target_l_h {
            a = m;
        } else {
            b = m;
        }
    }
    ThresholdFit::Found(0.5 * (a + b))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn osmotic_release_starts_at_the_threshold() {
        // Baylis & Robertson, J R Soc Med 1980: ~0.4-1 pmol/L per mOsm/kg
        // above a threshold near 284 mOsm/kg.
        assert!(osmotic_vasopressin_pmol_l(270.0, 284.0, 0.63) < 1e-6);
        let v = osmotic_vasopressin_pmol_l(294.0, 284.0, 0.63);
        assert!((v - 6.3).abs() < 1e-6, "{v}");
    }

    #[test]
    fn floor_holds_secretion_up() {
        assert_eq!(plasma_vasopressin_pmol_l(0.5, 0.0), 0.5);
        let floored = plasma_vasopressin_pmol_l(0.0, 1.5);
        assert!((floored - 1.5).abs() < 1e-3);
        assert!((plasma_vasopressin_pmol_l(10.0, 1.5) - 10.0).abs() < 1e-9);
    }

    #[test]
    fn thirst_is_capped() {
        assert_eq!(thirst_drinking_l_h(290.0, 298.0, 0.1, 1.0), 0.0);
        assert_eq!(thirst_drinking_l_h(400.0, 298.0, 0.1, 1.0), 1.0);
    }

    #[test]
    fn thirst_onset_follows_the_own_vasopressin_threshold_unless_given() {
        assert_eq!(thirst_onset_mosm_kg(298.0, 284.0, 0.9, 0.0), 298.0);
        assert!((thirst_onset_mosm_kg(0.0, 286.0, 0.9, 0.25) - 287.15).abs() < 1e-12);
    }

    #[test]
    fn the_onset_for_a_drinking_rate_inverts_thirst() {
        for drinking in [0.0, 0.01, 0.03, 0.05, 0.075, 0.2] {
            let onset = onset_for_drinking(290.0, drinking, 0.1);
            let back = thirst_drinking_l_h(290.0, onset, 0.1, 1.0);
            assert!((back - drinking).abs() < 1e-12, "{drinking}: {back}");
        }
    }

    #[test]
    fn threshold_solves_or_says_which_side_fails() {
        // Urine flow rising linearly with the threshold.
        let flow = |t: f64| 0.05 * (t - 270.0);
        match solve_threshold(flow, 0.5, 274.0, 294.0) {
            ThresholdFit::Found(t) => assert!((t - 280.0).abs() < 1e-6),
            other => panic!("{other:?}"),
        }
        assert_eq!(
            solve_threshold(flow, 5.0, 274.0, 294.0),
            ThresholdFit::TooConcentrated(294.0)
        );
        assert_eq!(
            solve_threshold(flow, 0.01, 274.0, 294.0),
            ThresholdFit::TooDilute(274.0)
        );
    }
}
