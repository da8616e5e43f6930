//! The range the model was built for: a run that leaves it still runs,
//! but its numbers are extrapolation and the user is told when that began.

use serde::Serialize;

/// Serum sodium the model is built for, mmol/L. Its calibration and the
/// validation dossier span roughly 100 to 180 mmol/L; the cell treated as
/// an ideal osmometer and the linear Starling and kidney laws are untested
/// beyond, and published human survivors of serum sodium below about 95 or
/// above about 190 mmol/L are rare case reports (from memory).
pub const NA_RANGE_MMOL_L: (f64, f64) = (95.0, 190.0);

/// The run left the range the model was built for.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct OutsideRange {
    /// Lowest serum sodium of the range, mmol/L.
    pub low_mmol_l: f64,
    /// Highest serum sodium of the range, mmol/L.
    pub high_mmol_l: f64,
    /// First sample time outside the range, h.
    pub first_time_h: f64,
    /// Serum sodium at that sample, mmol/L.
    pub first_mmol_l: f64,
    /// Serum sodium farthest outside the range, mmol/L.
    pub extreme_mmol_l: f64,
    /// When it was farthest outside, h.
    pub extreme_time_h: f64,
}

/// The first excursion of serum sodium `na` (at `times`) outside
/// [`NA_RANGE_MMOL_L`], and its farthest point; none when it stays inside.
pub fn sodium_outside(times: &[f64], na: &[f64]) -> Option<OutsideRange> {
    let (low, high) = NA_RANGE_MMOL_L;
    let beyond = |v: f64| (low - v).max(v - high);
    let first = na.iter().position(|&v| beyond(v) > 0.0)?;
    let extreme = (first..na.len())
        .max_by(|&a, &b| beyond(na[a]).total_cmp(&beyond(na[b])))
        .unwrap_or(first);
    Some(OutsideRange {
        low_mmol_l: low,
        high_mmol_l: high,
        first_time_h: times[first],
        first_mmol_l: na[first],
        extreme_mmol_l: na[extreme],
        extreme_time_h: times[extreme],
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inside_the_range_gives_nothing() {
        assert!(sodium_outside(&[0.0, 1.0, 2.0], &[110.0, 120.0, 185.0]).is_none());
        // The bounds themselves are inside.
        assert!(sodium_outside(&[0.0, 1.0], &[95.0, 190.0]).is_none());
    }

    #[test]
    fn the_first_sample_outside_and_the_farthest_are_named() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        let na = [140.0, 185.0, 200.0, 240.0, 210.0];
        let w = sodium_outside(&t, &na).expect("outside");
        assert_eq!((w.first_time_h, w.first_mmol_l), (2.0, 200.0));
        assert_eq!((w.extreme_time_h, w.extreme_mmol_l), (3.0, 240.0));
        let low = sodium_outside(&t, &[100.0, 96.0, 90.0, 80.0, 99.0]).expect("outside");
        assert_eq!((low.first_time_h, low.extreme_mmol_l), (2.0, 80.0));
    }
}
