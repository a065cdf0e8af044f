//! Phases as exact fractions of a turn (1 turn = 2*pi = 360 deg): the [`Turns`] type, reduction
//! into `[0, 1)`, common denominators, and snapping a float to the simplest nearby fraction.

use num_integer::Integer;
use num_rational::Ratio;

use super::ExactError;

/// A phase in turns, as an exact reduced fraction (denominator always positive).
pub type Turns = Ratio<i64>;

/// Reduce a phase into `[0, 1)` turn (the fractional part; exact, cannot overflow).
pub fn reduce_turn(r: Turns) -> Turns {
    let d = *r.denom();
    let n = r.numer().rem_euclid(d);
    // gcd(n mod d, d) = gcd(n, d) = 1, so the result is already reduced.
    Ratio::new_raw(n, d)
}

/// Least common multiple of the denominators of `phases` (1 for an empty list).
///
/// Errors with [`ExactError::Overflow`] if the lcm does not fit a `u64`.
pub fn common_denominator<'a, I>(phases: I) -> Result<u64, ExactError>
where
    I: IntoIterator<Item = &'a Turns>,
{
    let mut l: u64 = 1;
    for p in phases {
        let d = p.denom().unsigned_abs();
        let g = l.gcd(&d);
        l = (l / g).checked_mul(d).ok_or(ExactError::Overflow {
            what: "common denominator of the phases",
        })?;
    }
    Ok(l)
}

/// The fraction with the smallest denominator `q <= max_den` within `tol_turns` of `x_turns`
/// (closed interval), found by a Stern-Brocot descent with run-length steps (the continued
/// fraction of the interval). Among fractions with that denominator the one closest to `x` is
/// returned. `None` if no such fraction exists, or if an argument is not finite, `tol < 0`,
/// `max_den == 0`, or the result would not fit an `i64`.
pub fn snap_to_fraction(x_turns: f64, max_den: u64, tol_turns: f64) -> Option<Turns> {
    if !x_turns.is_finite() || !tol_turns.is_finite() || tol_turns < 0.0 || max_den == 0 {
        return None;
    }
    if x_turns.abs() > 1e15 {
        return None;
    }
    let max_den = max_den.min(i64::MAX as u64 / 4);
    let whole = x_turns.floor();
    let y = x_turns - whole;
    let whole = whole as i64;
    let lo = y - tol_turns;
    let hi = y + tol_turns;
    let (p, q) = if lo <= 0.0 || hi >= 1.0 {
        // An integer lies in the interval: denominator 1. Pick the nearer one.
        if lo <= 0.0 && (hi < 1.0 || y <= 0.5) {
            (0u64, 1u64)
        } else {
            (1, 1)
        }
    } else {
        simplest_in_unit(lo, hi, max_den)?
    };
    let q_i = i64::try_from(q).ok()?;
    let p_i = i64::try_from(p).ok()?;
    let num = whole.checked_mul(q_i)?.checked_add(p_i)?;
    let r = Ratio::new(num, q_i);
    // Closest fraction with this denominator (the simplest one may not be the closest).
    let best = (x_turns * q as f64).round() as i64;
    let alt = Ratio::new(best, q_i);
    let err = |t: &Turns| (*t.numer() as f64 / *t.denom() as f64 - x_turns).abs();
    if err(&alt) <= tol_turns && err(&alt) < err(&r) {
        Some(alt)
    } else {
        Some(r)
    }
}

/// Simplest fraction p/q in `[lo, hi]` with `0 < lo < hi < 1`, `q <= max_den`.
fn simplest_in_unit(lo: f64, hi: f64, max_den: u64) -> Option<(u64, u64)> {
    let (mut lp, mut lq) = (0u64, 1u64);
    let (mut rp, mut rq) = (1u64, 1u64);
    let below = |p: u64, q: u64| (p as f64) < lo * q as f64;
    let above = |p: u64, q: u64| (p as f64) > hi * q as f64;
    for _ in 0..10_000 {
        let (mp, mq) = (lp + rp, lq + rq);
        if mq > max_den {
            return None;
        }
        if below(mp, mq) {
            // Move the left bound right by k >= 1 steps: largest k with (lp+k rp)/(lq+k rq) < lo.
            let denom = rp as f64 - lo * rq as f64;
            let mut k = if denom > 0.0 {
                ((lo * lq as f64 - lp as f64) / denom).floor().max(1.0) as u64
            } else {
                1
            };
            k = k.min((max_den - lq) / rq.max(1)).max(1);
            while k > 1 && !below(lp + k * rp, lq + k * rq) {
                k -= 1;
            }
            lp += k * rp;
            lq += k * rq;
        } else if above(mp, mq) {
            let denom = hi * lq as f64 - lp as f64;
            let mut k = if denom > 0.0 {
                ((rp as f64 - hi * rq as f64) / denom).floor().max(1.0) as u64
            } else {
                1
            };
            k = k.min((max_den - rq) / lq.max(1)).max(1);
            while k > 1 && !above(rp + k * lp, rq + k * lq) {
                k -= 1;
            }
            rp += k * lp;
            rq += k * lq;
        } else {
            return Some((mp, mq));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn t(n: i64, d: i64) -> Turns {
        Ratio::new(n, d)
    }

    #[test]
    fn reduce_turn_maps_into_unit_interval() {
        assert_eq!(reduce_turn(t(-1, 4)), t(3, 4));
        assert_eq!(reduce_turn(t(7, 3)), t(1, 3));
        assert_eq!(reduce_turn(t(2, 1)), t(0, 1));
        assert_eq!(reduce_turn(t(i64::MIN, 1)), t(0, 1));
    }

    #[test]
    fn common_denominator_is_lcm() {
        let ps = [t(1, 4), t(1, 6), t(2, 9), t(0, 1)];
        assert_eq!(common_denominator(&ps), Ok(36));
        assert_eq!(common_denominator(&[]), Ok(1));
        let big = [t(1, i64::MAX), t(1, i64::MAX - 1)];
        assert!(common_denominator(&big).is_err());
    }

    #[test]
    fn snap_known_values() {
        // Hand computations.
        assert_eq!(snap_to_fraction(0.3333, 100, 1e-3), Some(t(1, 3)));
        assert_eq!(
            snap_to_fraction(2.0944 / std::f64::consts::TAU, 64, 1e-4),
            Some(t(1, 3))
        );
        assert_eq!(snap_to_fraction(-0.25, 10, 1e-9), Some(t(-1, 4)));
        assert_eq!(snap_to_fraction(0.999_999, 10, 1e-5), Some(t(1, 1)));
        assert_eq!(snap_to_fraction(0.142_857, 6, 1e-4), None);
        assert_eq!(snap_to_fraction(0.142_857, 7, 1e-4), Some(t(1, 7)));
        assert_eq!(snap_to_fraction(f64::NAN, 7, 1e-4), None);
        // pi - 3 = 0.14159..: 1/7 within 2e-3, 16/113 within 1e-6 (continued fraction of pi).
        let x = std::f64::consts::PI;
        assert_eq!(snap_to_fraction(x, 1000, 2e-3), Some(t(22, 7)));
        assert_eq!(snap_to_fraction(x, 1000, 1e-6), Some(t(355, 113)));
    }

    proptest! {
        #[test]
        fn snap_matches_brute_force(x in -3.0f64..3.0, tol in 1e-6f64..0.2, max_den in 1u64..60) {
            let got = snap_to_fraction(x, max_den, tol);
            let mut want_q = None;
            for q in 1..=max_den {
                let p = (x * q as f64).round();
                if (p / q as f64 - x).abs() <= tol {
                    want_q = Some(q);
                    break;
                }
            }
            match (got, want_q) {
                (None, None) => {}
                (Some(r), Some(q)) => {
                    let v = *r.numer() as f64 / *r.denom() as f64;
                    prop_assert!((v - x).abs() <= tol + 1e-12);
                    // Float boundary cases may differ by rounding; allow only exact agreement
                    // unless x sits within 1e-12 of the interval edge.
                    prop_assert_eq!(*r.denom() as u64, q);
                }
                (g, w) => prop_assert!(false, "got {:?}, brute force q {:?}", g, w),
            }
        }
    }
}
