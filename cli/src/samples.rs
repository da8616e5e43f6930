//! The columns of `samples.csv` and their values: one row per sample,
//! units in the column names, numbers with [`DIGITS`] significant digits.
//! The command's CSV writer and the Python package's `Result.samples`
//! both read them from here.

use crate::format::sig;
use tidewater::{Species, Trajectory};

/// The column names, in order (a contract: tests and users rely on them).
pub const COLUMNS: [&str; 23] = [
    "time_h",
    "na_mmol_l",
    "k_mmol_l",
    "glucose_mmol_l",
    "urea_mmol_l",
    "albumin_g_l",
    "osmolality_mosm_kg",
    "tonicity_mosm_kg",
    "cells_l",
    "red_cells_l",
    "interstitium_l",
    "plasma_l",
    "brain_volume_index",
    "urine_ml_h",
    "urine_osm_mosm_kg",
    "urine_na_mmol_l",
    "efwc_ml_h",
    "hematocrit",
    "na_change_24h_mmol_l",
    // Cumulative since the start, from the mass-balance ledger: water in
    // (given, drunk, thirst, metabolic water) and out (urine, insensible,
    // losses, blood), sodium in (given and eaten) and out (urine, losses).
    "water_in_cum_l",
    "water_out_cum_l",
    "na_in_cum_mmol",
    "na_out_cum_mmol",
];

/// Significant digits of every number.
pub const DIGITS: usize = 7;

/// The values of every sample of a trajectory, in [`COLUMNS`] order.
pub fn values(traj: &Trajectory) -> Vec<[f64; COLUMNS.len()]> {
    traj.samples
        .iter()
        .zip(&traj.na_change_24h)
        .map(|(s, c24)| {
            let o = &s.obs;
            [
                s.time_h,
                o.na_mmol_l,
                o.k_mmol_l,
                o.glucose_mmol_l,
                o.urea_mmol_l,
                o.albumin_g_l,
                o.osmolality_mosm_kg,
                o.tonicity_mosm_kg,
                o.cells_l,
                o.red_cells_l,
                o.interstitium_l,
                o.plasma_l,
                o.brain_volume_index,
                o.urine_ml_h,
                o.urine_osm_mosm_kg,
                o.urine_na_mmol_l,
                o.efwc_ml_h,
                o.hematocrit,
                *c24,
                Species::Water.cumulative_in(&s.y),
                Species::Water.cumulative_out(&s.y),
                Species::Sodium.cumulative_in(&s.y),
                Species::Sodium.cumulative_out(&s.y),
            ]
        })
        .collect()
}

/// One CSV line of values with [`DIGITS`] significant digits.
pub fn line(values: &[f64]) -> String {
    let cells: Vec<String> = values.iter().map(|&v| sig(v, DIGITS)).collect();
    cells.join(",") + "\n"
}
