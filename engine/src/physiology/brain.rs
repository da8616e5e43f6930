//! Brain-cell volume regulation (docs/model.md, brain adaptation).
//!
//! Brain cells hold a pool of adaptive osmolytes (electrolytes shed within
//! hours, organic osmolytes over days). The pool relaxes toward the content
//! that would keep brain-cell volume normal at the current tonicity; it is
//! shed faster than it is regained. This is a model index, not a diagnosis.

use super::smooth_positive;

/// Adaptive osmolyte content (mOsm) that keeps the brain at its normal
/// volume when the surrounding effective osmolality is `tonicity_mosm_l`:
/// `T·V_normal − fixed`, never below zero.
pub fn target_osmolytes_mosm(tonicity_mosm_l: f64, v_normal_l: f64, fixed_mosm: f64) -> f64 {
    smooth_positive(tonicity_mosm_l * v_normal_l - fixed_mosm, 0.5)
}

/// Rate of change of the adaptive pool, mOsm/h: first-order toward the
/// target with the loss time constant when above it, the regain time
/// constant when below it.
pub fn osmolyte_rate_mosm_h(
    content_mosm: f64,
    target_mosm: f64,
    loss_h: f64,
    regain_h: f64,
) -> f64 {
    let gap = target_mosm - content_mosm;
    if gap < 0.0 {
        gap / loss_h
    } else {
        gap / regain_h
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sheds_faster_than_it_regains() {
        let lose = osmolyte_rate_mosm_h(100.0, 80.0, 24.0, 96.0);
        let gain = osmolyte_rate_mosm_h(80.0, 100.0, 24.0, 96.0);
        assert!(lose < 0.0 && gain > 0.0 && lose.abs() > gain.abs());
    }

    #[test]
    fn target_keeps_volume_normal() {
        // At normal tonicity the target equals the normal adaptive pool.
        let (t, v) = (290.0, 1.0);
        let fixed = 0.75 * t * v;
        assert!((target_osmolytes_mosm(t, v, fixed) - 0.25 * t * v).abs() < 1e-9);
        assert!(target_osmolytes_mosm(150.0, v, fixed) < 1e-6);
    }
}
