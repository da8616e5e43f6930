//! Small numeric helpers shared by several modules (plain arithmetic, no
//! physiology).

/// Greatest common divisor (Euclid); `gcd(a, 0) = a`.
pub(crate) fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        let t = a % b;
        a = b;
        b = t;
    }
    a
}

/// A number as a message shows it: plain when it is of ordinary size,
/// in scientific notation when it is huge or tiny (`1e300` would otherwise
/// print as 301 digits).
pub fn show(x: f64) -> String {
    let a = x.abs();
    if x.is_finite() && a != 0.0 && !(1e-6..1e9).contains(&a) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn show_keeps_ordinary_numbers_plain_and_huge_ones_short() {
        assert_eq!(show(140.0), "140");
        assert_eq!(show(0.5), "0.5");
        assert_eq!(show(0.0), "0");
        assert_eq!(show(-2.5e8), "-250000000");
        assert_eq!(show(1e300), "1e300");
        assert_eq!(show(4294967296e3), "4.294967296e12");
        assert_eq!(show(1e-300), "1e-300");
        assert_eq!(show(f64::NAN), "NaN");
    }

    #[test]
    fn gcd_of_small_pairs() {
        // Worked values (common practice): gcd(48, 18) = 6, gcd(17, 5) = 1.
        assert_eq!(gcd(48, 18), 6);
        assert_eq!(gcd(18, 48), 6);
        assert_eq!(gcd(17, 5), 1);
        assert_eq!(gcd(7, 0), 7);
        assert_eq!(gcd(0, 7), 7);
    }
}
