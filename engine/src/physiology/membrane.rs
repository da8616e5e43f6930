//! Cell membranes: osmotic water flow and permeant-solute exchange.
//!
//! Water flow into a cell compartment follows the van't Hoff relation with
//! reflection coefficients (docs/model.md, cell membranes):
//!
//! `J = L · RT · Σ σ_i (C_i,inside − C_i,outside)`
//!
//! with `L` the hydraulic conductance (L/h/mmHg), `RT` the van't Hoff factor
//! (mmHg per mOsm/L) and concentrations per litre of water. A hydrostatic
//! pressure difference across cell membranes is neglected.

/// Osmotic water flow into a compartment, L/h.
///
/// `effective_gradient_mosm_l` is `Σ σ_i (C_inside − C_outside)`: positive
/// when the inside is more concentrated, which draws water in.
pub fn water_flow_l_h(
    conductance_l_h_mmhg: f64,
    rt_mmhg_per_mosm_l: f64,
    effective_gradient_mosm_l: f64,
) -> f64 {
    conductance_l_h_mmhg * rt_mmhg_per_mosm_l * effective_gradient_mosm_l
}

/// Hydraulic conductance (L/h/mmHg) that gives an osmotic disturbance
/// between two compartments of water volumes `v_in`, `v_out` at tonicity
/// `tonicity_mosm_l` an exponential time constant `tau_h`.
///
/// Linearising `dV/dt = L·RT·(n_in/V − n_out/(V_tot − V))` about equilibrium
/// gives the rate `L·RT·T·(1/v_in + 1/v_out)`.
pub fn conductance_for_time_constant(
    tau_h: f64,
    rt_mmhg_per_mosm_l: f64,
    tonicity_mosm_l: f64,
    v_in: f64,
    v_out: f64,
) -> f64 {
    1.0 / (tau_h * rt_mmhg_per_mosm_l * tonicity_mosm_l * (1.0 / v_in + 1.0 / v_out))
}

/// Diffusive exchange of a permeant solute, mmol/h from `outside` to
/// `inside`: permeability-surface product (L/h) times the concentration
/// difference.
pub fn solute_exchange_mmol_h(ps_l_h: f64, c_outside: f64, c_inside: f64) -> f64 {
    ps_l_h * (c_outside - c_inside)
}

/// Permeability-surface product (L/h) giving a concentration difference
/// between volumes `v_a` and `v_b` a time constant `tau_h`.
pub fn ps_for_time_constant(tau_h: f64, v_a: f64, v_b: f64) -> f64 {
    1.0 / (tau_h * (1.0 / v_a + 1.0 / v_b))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flow_direction_follows_the_gradient() {
        assert!(water_flow_l_h(0.01, 19.34, 5.0) > 0.0);
        assert!(water_flow_l_h(0.01, 19.34, -5.0) < 0.0);
        assert_eq!(water_flow_l_h(0.01, 19.34, 0.0), 0.0);
    }

    #[test]
    fn conductance_gives_requested_time_constant() {
        // Numerical check: relax two compartments with explicit small steps
        // and compare the decay of the gradient after one time constant
        // with exp(-1).
        let (rt, t0) = (19.34, 290.0);
        let (mut v1, mut v2) = (20.0, 10.0);
        let (n1, n2) = (t0 * v1 * 1.01, t0 * v2);
        let l = conductance_for_time_constant(0.1, rt, t0, v1, v2);
        let g0 = n1 / v1 - n2 / v2;
        let dt = 1e-5;
        for _ in 0..10_000 {
            let j = water_flow_l_h(l, rt, n1 / v1 - n2 / v2);
            v1 += j * dt;
            v2 -= j * dt;
        }
        let g = n1 / v1 - n2 / v2;
        assert!((g / g0 - (-1.0f64).exp()).abs() < 0.02, "{}", g / g0);
    }
}
