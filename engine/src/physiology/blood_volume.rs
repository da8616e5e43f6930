//! Blood volume and hematocrit (docs/model.md, compartments).
//!
//! The start's blood volume comes from a standard published prediction
//! (Nadler, Hidalgo & Bloch, Surgery 1962) when the height is known, else
//! from the per-kilogram rule of thumb; plasma volume is its non-red-cell
//! share. During a run blood volume is plasma plus red cells, each with
//! their solids.

use crate::patient::Sex;

/// Nadler's blood volume, L, from sex, height (m) and weight (kg):
/// men `0.3669·H³ + 0.03219·W + 0.6041`, women `0.3561·H³ + 0.03308·W +
/// 0.1833` (Nadler, Hidalgo & Bloch, Surgery 1962;51:224).
pub fn nadler_l(sex: Sex, height_m: f64, weight_kg: f64) -> f64 {
    let h3 = height_m * height_m * height_m;
    match sex {
        Sex::Male => 0.3669 * h3 + 0.03219 * weight_kg + 0.6041,
        Sex::Female => 0.3561 * h3 + 0.03308 * weight_kg + 0.1833,
    }
}

/// Blood volume, L, from a per-kilogram figure (mL/kg).
pub fn per_kg_l(ml_per_kg: f64, weight_kg: f64) -> f64 {
    ml_per_kg * weight_kg / 1000.0
}

/// Plasma and red-cell volumes (L) of a blood volume at a hematocrit.
pub fn split(blood_volume_l: f64, hematocrit: f64) -> (f64, f64) {
    let red = blood_volume_l * hematocrit;
    (blood_volume_l - red, red)
}

/// Hematocrit and blood volume from red-cell and plasma volumes (L).
pub fn hematocrit(red_cell_volume_l: f64, plasma_volume_l: f64) -> (f64, f64) {
    let blood = red_cell_volume_l + plasma_volume_l;
    (red_cell_volume_l / blood.max(1e-9), blood)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nadler_gives_about_five_litres_for_an_average_man() {
        // Nadler 1962: a 1.75 m, 70 kg man ~4.9 L; a 1.63 m, 60 kg woman ~3.7 L
        // (values computed from the published equations).
        let man = nadler_l(Sex::Male, 1.75, 70.0);
        assert!((man - 4.824).abs() < 0.01, "{man}");
        let woman = nadler_l(Sex::Female, 1.63, 60.0);
        assert!((3.6..=3.8).contains(&woman), "{woman}");
    }

    #[test]
    fn split_and_hematocrit_are_inverse() {
        let (p, r) = split(5.0, 0.44);
        let (h, b) = hematocrit(r, p);
        assert!((h - 0.44).abs() < 1e-12 && (b - 5.0).abs() < 1e-12);
    }
}
