//! The physiology: one module per mechanism, each a set of pure functions of
//! concentrations, volumes and parameters. None of them knows the state
//! layout or the solver; `crate::model` wires them together.

pub mod blood_volume;
pub mod brain;
pub mod capillary;
pub mod drugs;
pub mod glucose;
pub mod gut;
pub mod kidney;
pub mod membrane;
pub mod osmoregulation;
pub mod potassium;

/// `x^e`, with the exponents the default parameters use (0, 1, 2) taken
/// without a call to `powf` (the model evaluates several powers per
/// right-hand side; the value is the same to rounding).
#[inline]
pub fn power(x: f64, e: f64) -> f64 {
    if e == 2.0 {
        x * x
    } else if e == 1.0 {
        x
    } else if e == 0.0 {
        1.0
    } else {
        x.powf(e)
    }
}

/// Smooth maximum of `x` and 0 with a transition width `w` (softplus):
/// close to `max(x, 0)` when |x| >> w, and differentiable everywhere, which
/// keeps the implicit solver's Newton iterations well behaved.
pub fn smooth_positive(x: f64, w: f64) -> f64 {
    let z = x / w;
    if z > 30.0 {
        x
    } else if z < -30.0 {
        w * z.exp()
    } else {
        w * z.exp().ln_1p()
    }
}

/// `max(x, 0)` with a quadratic corner of half-width `w`: exactly zero for
/// `x ≤ −w`, exactly `x` for `x ≥ w`, continuously differentiable.
pub fn smooth_ramp(x: f64, w: f64) -> f64 {
    if x <= -w {
        0.0
    } else if x >= w {
        x
    } else {
        (x + w) * (x + w) / (4.0 * w)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn power_agrees_with_powf() {
        for x in [0.0, 0.37, 1.0, 2.5, 140.0] {
            for e in [0.0, 0.5, 1.0, 2.0, 3.7] {
                let (got, want) = (power(x, e), f64::powf(x, e));
                assert!(
                    (got - want).abs() <= 1e-15 * want.abs(),
                    "{x}^{e}: {got} vs {want}"
                );
            }
        }
    }

    #[test]
    fn smooth_ramp_is_exact_outside_its_corner() {
        assert_eq!(smooth_ramp(-1.0, 0.5), 0.0);
        assert_eq!(smooth_ramp(2.0, 0.5), 2.0);
        assert!((smooth_ramp(0.0, 0.5) - 0.125).abs() < 1e-15);
    }

    #[test]
    fn smooth_positive_tends_to_max() {
        assert!((smooth_positive(10.0, 0.1) - 10.0).abs() < 1e-9);
        assert!(smooth_positive(-10.0, 0.1) < 1e-9);
        assert!((smooth_positive(0.0, 1.0) - 2f64.ln()).abs() < 1e-12);
    }
}
