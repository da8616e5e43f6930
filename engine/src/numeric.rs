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

#[cfg(test)]
mod tests {
    use super::*;

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
