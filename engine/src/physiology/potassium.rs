//! Potassium distribution between extracellular fluid and cells
//! (docs/model.md, metabolism and insensible loss): potassium moves toward the distribution the
//! Na/K pump held at the start, over hours.

/// Potassium flux into cells, mmol/h: `rate_l_h · (ratio · [K]_out − [K]_cell)`.
///
/// `ratio` is the cell-to-interstitium concentration ratio at equilibrium;
/// `rate_l_h` a clearance-like constant (L/h of cell water per hour).
pub fn flux_into_cells_mmol_h(
    rate_l_h: f64,
    ratio: f64,
    k_out_mmol_l: f64,
    k_cell_mmol_l: f64,
) -> f64 {
    rate_l_h * (ratio * k_out_mmol_l - k_cell_mmol_l)
}

/// The clearance-like constant (L/h) that makes extracellular potassium
/// approach equilibrium with time constant `tau_h`: linearising the flux
/// gives the rate `rate·(ratio/V_ecf + 1/V_cell)`.
pub fn rate_for_time_constant(tau_h: f64, ratio: f64, v_ecf_l: f64, v_cell_l: f64) -> f64 {
    1.0 / (tau_h * (ratio / v_ecf_l + 1.0 / v_cell_l))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flux_vanishes_at_equilibrium_and_moves_potassium_in_when_outside_is_high() {
        let ratio = 140.0 / 4.2;
        assert!(flux_into_cells_mmol_h(1.0, ratio, 4.2, 140.0).abs() < 1e-12);
        assert!(flux_into_cells_mmol_h(1.0, ratio, 6.0, 140.0) > 0.0);
    }
}
