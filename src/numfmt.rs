//! The one written form of a float in every file pathsieve writes: the shortest decimal that
//! reads back to the identical `f64` (Rust's `Display`, which is correctly rounded), in
//! positional notation, never with an exponent, so spreadsheets and our own readers take it
//! as it is. Non-finite values have no written form: writers check [`finite`] first.

/// The shortest positional decimal that reads back to exactly `x` (`0.1`, `-2`, `0.00000005`).
/// At most 327 characters (the smallest subnormal); non-finite values give `NaN`/`inf`, which
/// callers refuse before writing (see [`finite`]).
pub fn decimal(x: f64) -> String {
    format!("{x}")
}

/// `Ok(x)` for a finite value, else a message naming `what` and the fix.
pub fn finite(x: f64, what: &str) -> Result<f64, String> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(format!(
            "{what} is {x}, which no file can hold; the inputs overflow double precision (check the weights and scale)"
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn no_exponent_even_at_the_extremes() {
        for x in [5e-324, 5e-8, 1e300, f64::MAX, -f64::MIN_POSITIVE, 0.1, -0.0] {
            let s = decimal(x);
            assert!(!s.contains(['e', 'E']), "{s}");
            assert!(s.len() <= 327, "{}", s.len());
            assert_eq!(s.parse::<f64>().unwrap().to_bits(), x.to_bits());
        }
    }

    proptest! {
        #[test]
        fn every_finite_float_round_trips(bits in any::<u64>()) {
            let x = f64::from_bits(bits);
            prop_assume!(x.is_finite());
            let s = decimal(x);
            prop_assert!(!s.contains(['e', 'E']));
            prop_assert_eq!(s.parse::<f64>().unwrap().to_bits(), x.to_bits());
        }
    }
}
