//! Capillary wall and lymph: plasma ↔ interstitium (docs/model.md, capillaries and lymph).
//!
//! Fluid filtration follows Starling:
//! `J_v = K_f [(P_c − P_i) − σ (π_plasma − π_interstitium)]`,
//! colloid osmotic pressures follow Landis–Pappenheimer, the interstitial
//! pressure follows a two-slope pressure–volume curve (stiff while negative,
//! compliant once positive), and lymph flow rises with interstitial pressure
//! to a plateau.

use super::smooth_positive;
use serde::Serialize;

/// Landis–Pappenheimer colloid osmotic pressure (mmHg) of a protein
/// solution of `c_g_dl` g/dL: `π = 2.1 C + 0.16 C² + 0.009 C³`
/// (as used by Mullins et al., Am J Clin Pathol 1983).
pub fn landis_pappenheimer_mmhg(c_g_dl: f64) -> f64 {
    let c = c_g_dl.max(0.0);
    2.1 * c + 0.16 * c * c + 0.009 * c * c * c
}

/// Protein concentration (g/dL) that gives colloid pressure `pi_mmhg`
/// (inverse of [`landis_pappenheimer_mmhg`], by Newton's method).
pub fn protein_for_colloid_pressure_g_dl(pi_mmhg: f64) -> f64 {
    let mut c = pi_mmhg / 2.1;
    for _ in 0..50 {
        let f = landis_pappenheimer_mmhg(c) - pi_mmhg;
        let df = 2.1 + 0.32 * c + 0.027 * c * c;
        let step = f / df;
        c -= step;
        if step.abs() < 1e-13 {
            break;
        }
    }
    c
}

/// Factor on the albumin escape rate in a circulation filled beyond
/// normal: 1 up to `threshold` of excess blood volume, then rising by
/// `gain` per unit of further excess (smoothly, over 1 %). An overfilled
/// circulation leaks protein: iso-oncotic colloid given on top of a normal
/// blood volume leaves the vessels far faster than the same colloid given
/// to replace blood loss (context-sensitive volume effect; the shedding of
/// the endothelial glycocalyx by natriuretic peptides is the proposed
/// mechanism).
pub fn overfill_leak_factor(blood_volume_ratio: f64, threshold: f64, gain: f64) -> f64 {
    1.0 + gain * crate::physiology::smooth_ramp(blood_volume_ratio - 1.0 - threshold, 0.01)
}

/// Net Starling filtration from plasma to interstitium, L/h.
pub fn starling_filtration_l_h(
    kf_l_h_mmhg: f64,
    capillary_mmhg: f64,
    interstitial_mmhg: f64,
    sigma_protein: f64,
    plasma_colloid_mmhg: f64,
    interstitial_colloid_mmhg: f64,
) -> f64 {
    kf_l_h_mmhg
        * ((capillary_mmhg - interstitial_mmhg)
            - sigma_protein * (plasma_colloid_mmhg - interstitial_colloid_mmhg))
}

/// The interstitial pressure–volume curve.
///
/// With `x = V − V_zero` (litres beyond the volume at which the pressure
/// would be zero on the compliant branch), the pressure is
/// `E_high·x − (E_low − E_high)·w·ln(1 + exp(−x/w))`: slope `E_low` well
/// below `V_zero`, slope `E_high` above it, smooth in between.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct InterstitialCompliance {
    /// Elastance while the pressure is negative, mmHg/L.
    pub elastance_low_mmhg_l: f64,
    /// Elastance in the oedema range, mmHg/L.
    pub elastance_high_mmhg_l: f64,
    /// Width of the transition, L.
    pub width_l: f64,
    /// Reference volume of the curve, L.
    pub v_zero_l: f64,
}

impl InterstitialCompliance {
    /// Pressure (mmHg) at interstitial water volume `v_l`.
    pub fn pressure_mmhg(&self, v_l: f64) -> f64 {
        let x = v_l - self.v_zero_l;
        self.elastance_high_mmhg_l * x
            - (self.elastance_low_mmhg_l - self.elastance_high_mmhg_l)
                * smooth_positive(-x, self.width_l)
    }

    /// Build the curve so that volume `v0_l` sits at pressure `p0_mmhg`.
    pub fn through(
        v0_l: f64,
        p0_mmhg: f64,
        elastance_low_mmhg_l: f64,
        elastance_high_mmhg_l: f64,
        width_l: f64,
    ) -> Self {
        let mut curve = Self {
            elastance_low_mmhg_l,
            elastance_high_mmhg_l,
            width_l,
            v_zero_l: v0_l,
        };
        // The pressure is strictly increasing in V: bisect for v_zero.
        let (mut lo, mut hi) = (v0_l - 1e3, v0_l + 1e3);
        for _ in 0..200 {
            curve.v_zero_l = 0.5 * (lo + hi);
            if curve.pressure_mmhg(v0_l) > p0_mmhg {
                lo = curve.v_zero_l;
            } else {
                hi = curve.v_zero_l;
            }
        }
        curve
    }
}

/// Lymph flow (L/h) as a logistic function of interstitial pressure,
/// rising from near zero to `max_l_h` around `half_mmhg` with slope scale
/// `scale_mmhg`.
pub fn lymph_flow_l_h(
    interstitial_mmhg: f64,
    max_l_h: f64,
    half_mmhg: f64,
    scale_mmhg: f64,
) -> f64 {
    max_l_h / (1.0 + (-(interstitial_mmhg - half_mmhg) / scale_mmhg).exp())
}

/// Slope scale (mmHg) of the lymph curve such that at the resting pressure
/// `rest_mmhg` the flow is `1/max_ratio` of its plateau.
pub fn lymph_scale_mmhg(rest_mmhg: f64, half_mmhg: f64, max_ratio: f64) -> f64 {
    (half_mmhg - rest_mmhg) / (max_ratio - 1.0).ln()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overfill_leak_acts_only_beyond_its_threshold() {
        assert_eq!(overfill_leak_factor(1.0, 0.08, 40.0), 1.0);
        assert_eq!(overfill_leak_factor(1.05, 0.08, 40.0), 1.0);
        // 20 % over normal: 12 % beyond the threshold, 40 x 0.12 = 4.8.
        assert!((overfill_leak_factor(1.2, 0.08, 40.0) - 5.8).abs() < 1e-12);
        // A depleted circulation leaks as usual.
        assert_eq!(overfill_leak_factor(0.8, 0.08, 40.0), 1.0);
    }

    #[test]
    fn landis_pappenheimer_inverse() {
        for pi in [1.0, 8.0, 25.0, 40.0] {
            let c = protein_for_colloid_pressure_g_dl(pi);
            assert!((landis_pappenheimer_mmhg(c) - pi).abs() < 1e-10);
        }
    }

    #[test]
    fn interstitial_curve_is_stiff_below_and_compliant_above() {
        let c = InterstitialCompliance::through(10.0, -3.0, 3.0, 0.2, 0.2);
        assert!((c.pressure_mmhg(10.0) + 3.0).abs() < 1e-9);
        let stiff = c.pressure_mmhg(9.5) - c.pressure_mmhg(9.0);
        let soft = c.pressure_mmhg(16.5) - c.pressure_mmhg(16.0);
        assert!((stiff / 0.5 - 3.0).abs() < 0.05, "{stiff}");
        assert!((soft / 0.5 - 0.2).abs() < 0.01, "{soft}");
    }

    #[test]
    fn lymph_curve_hits_rest_and_plateau() {
        let s = lymph_scale_mmhg(-3.0, 0.0, 20.0);
        let max = 20.0 * 0.12;
        assert!((lymph_flow_l_h(-3.0, max, 0.0, s) - 0.12).abs() < 1e-12);
        assert!((lymph_flow_l_h(20.0, max, 0.0, s) - max).abs() < 1e-6);
    }
}
