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

/// A float in a report (a table cell, a note, a value in `--json` text), never a file cell:
/// six decimals for `1e-4 <= |x| < 1e6` and for 0 (`0.500000`), otherwise four significant
/// digits with an exponent (`1.000e100`, `2.500e-9`), so a huge or tiny value never prints as
/// a hundred digits of fixed-point text.
pub fn short(x: f64) -> String {
    if x == 0.0 || (1e-4..1e6).contains(&x.abs()) || !x.is_finite() {
        format!("{x:.6}")
    } else {
        format!("{x:.3e}")
    }
}

/// The shortest decimal that reads back to exactly `x`, for report text: positional for
/// `1e-4 <= |x| < 1e16` and for 0 (`0.0925`), with an exponent outside (`1e-100`,
/// `2.5e20`), the way Python's `repr` writes a float.
pub fn compact(x: f64) -> String {
    if x == 0.0 || (1e-4..1e16).contains(&x.abs()) || !x.is_finite() {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
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

    #[test]
    fn report_forms_are_short_at_the_extremes() {
        assert_eq!(short(0.5), "0.500000");
        assert_eq!(short(0.0), "0.000000");
        assert_eq!(short(1e100), "1.000e100");
        assert_eq!(short(-2.5e-9), "-2.500e-9");
        assert_eq!(compact(0.0925), "0.0925");
        assert_eq!(compact(1e-100), "1e-100");
        assert_eq!(compact(5e-324), "5e-324");
        for x in [1e100, 5e-324, 0.1, 123456.0, -1e-7] {
            assert!(short(x).len() <= 14, "{}", short(x));
            assert_eq!(compact(x).parse::<f64>().unwrap(), x);
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
