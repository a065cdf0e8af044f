//! Snapping a value known to its written precision to the simplest exact value a cycle uses:
//! phases to fractions `k/M` of a turn, weights to Gaussian rationals or to `c * zeta_n^k`
//! (a root of unity of small order scaled by a simple rational such as `1/N`). The candidate
//! chosen is the one with the smallest description (denominator, or denominator times order)
//! inside the interval, and it is accepted only when it is much simpler than what a value of
//! that precision would give by chance: denominator `q` with `q^2 * width <= 1/8`
//! ([`SIMPLICITY`]), so a 2-decimal input never snaps to a 3-digit denominator. Whether a snap
//! is right is then decided by the exact check of the snapped table; an unsnapped cell keeps its
//! interval and is bounded rigorously by the checker.

use super::cyclo::{Cyclo, Q};
use super::turns::{snap_to_fraction, Turns};
use num_bigint::BigInt;
use num_complex::Complex64;

/// Largest `q^2 * (interval width)` of an accepted snap (see the module docs): a fraction that
/// simple lands in an interval of that width by chance with probability below about 1 in 8.
pub const SIMPLICITY: f64 = 0.125;

/// Largest order `n` of a root of unity a weight snaps to.
pub const MAX_WEIGHT_ORDER: u64 = 360;

/// Largest denominator of a snapped weight's rational factor.
pub const MAX_WEIGHT_DENOMINATOR: u64 = 10_000;

/// Half-width, relative to one turn (phases) or to the column's largest modulus (weights),
/// below which no float-derived number is trusted: a value that went through a few double
/// operations (e.g. `2*pi/3` computed, then printed with 19 digits) errs by a few ulp.
pub const DOUBLE_FLOOR: f64 = 8.0 * f64::EPSILON;

fn simple_enough(q: u64, half_width: f64, guard: bool) -> bool {
    !guard || (q as f64).powi(2) * 2.0 * half_width <= SIMPLICITY
}

/// The simplest rational within `half_width` of `x` (denominator <= `max_den`), accepted only
/// when simple enough for the width (unless `guard` is false).
pub fn snap_rational(x: f64, half_width: f64, max_den: u64, guard: bool) -> Option<Turns> {
    let r = snap_to_fraction(x, max_den, half_width)?;
    simple_enough(r.denom().unsigned_abs(), half_width, guard).then_some(r)
}

/// Snap a phase (turns, `centre +- half_width`): to a point of the declared grid `k/grid` when
/// one lies in the interval (no simplicity test: the grid says so), else to the simplest
/// fraction with denominator <= `max_den` that passes the simplicity test when `guard` is set.
pub fn snap_phase(
    centre: f64,
    half_width: f64,
    max_den: u64,
    grid: Option<u64>,
    guard: bool,
) -> Option<Turns> {
    if !centre.is_finite() || !half_width.is_finite() || centre.abs() > 1e12 {
        return None;
    }
    if let Some(m) = grid.filter(|&m| (1..=1 << 32).contains(&m)) {
        let k = (centre * m as f64).round();
        if (k / m as f64 - centre).abs() <= half_width {
            return Some(Turns::new(k as i64, m as i64));
        }
    }
    snap_rational(centre, half_width, max_den, guard)
}

fn q_of(t: &Turns) -> Q {
    Q::new(BigInt::from(*t.numer()), BigInt::from(*t.denom()))
}

fn within(c: &Cyclo, z: Complex64, radius: f64) -> bool {
    (c.to_complex() - z).norm() <= radius * (1.0 + 1e-9) + 4.0 * f64::EPSILON * z.norm()
}

/// Snap a weight (`z +- radius`, a disc): the candidate with the smallest description among a
/// Gaussian rational (size: the lcm of the two denominators) and `c * zeta_n^k` (size: the
/// denominator of `c` times `n`), each found as the simplest value in its interval and kept
/// only when it lies in the disc and passes the simplicity test. Returns the snapped value and
/// its size; `None` when no candidate qualifies. A disc holding 0 snaps to 0.
pub fn snap_weight(z: Complex64, radius: f64) -> Option<(Cyclo, u64)> {
    if !z.re.is_finite() || !z.im.is_finite() || !radius.is_finite() {
        return None;
    }
    let m = z.norm();
    if m <= radius {
        return Some((Cyclo::from_rational(&Q::from_integer(0.into())), 1));
    }
    let mut best: Option<(Cyclo, u64)> = None;
    let mut consider = |c: Cyclo, size: u64| {
        if within(&c, z, radius) && best.as_ref().is_none_or(|(_, s)| size < *s) {
            best = Some((c, size));
        }
    };
    // Gaussian rational.
    if let (Some(re), Some(im)) = (
        snap_rational(z.re, radius, MAX_WEIGHT_DENOMINATOR, true),
        snap_rational(z.im, radius, MAX_WEIGHT_DENOMINATOR, true),
    ) {
        let size = num_integer::lcm(re.denom().unsigned_abs(), im.denom().unsigned_abs());
        consider(Cyclo::from_gaussian(&q_of(&re), &q_of(&im)), size);
    }
    // Polar: a simple rational modulus times a root of unity of small order.
    let modulus = snap_rational(m, radius, MAX_WEIGHT_DENOMINATOR, true);
    let half_angle = (radius / m).min(1.0).asin() / std::f64::consts::TAU;
    let turn = z.arg() / std::f64::consts::TAU;
    let angle = snap_rational(turn, half_angle, MAX_WEIGHT_ORDER, true);
    if let (Some(c), Some(a)) = (modulus, angle) {
        let a = super::reduce_turn(a);
        let n = a.denom().unsigned_abs();
        if let Ok(root) = Cyclo::root_of_unity(n as u32, *a.numer()) {
            consider(root.scale(&q_of(&c)), c.denom().unsigned_abs() * n);
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn t(n: i64, d: i64) -> Turns {
        Turns::new(n, d)
    }

    // The cases (common practice: 2.09 rad is a rounded 2 pi/3).
    #[test]
    fn two_decimal_radians_snap_to_thirds_not_to_big_denominators() {
        let tau = std::f64::consts::TAU;
        let h = 0.005 / tau;
        assert_eq!(snap_phase(2.09 / tau, h, 3600, None, true), Some(t(1, 3)));
        assert_eq!(snap_phase(4.19 / tau, h, 3600, None, true), Some(t(2, 3)));
        // 151 deg in radians with 6 decimals (2.635447) snaps to 151/360 turn.
        let h6 = 5e-7 / tau;
        assert_eq!(
            snap_phase(2.635447 / tau, h6, 3600, None, true),
            Some(t(151, 360))
        );
        // With 2 decimals the simplest fraction near 151 deg is not simple enough: no snap.
        assert_eq!(snap_phase(2.64 / tau, h, 3600, None, true), None);
    }

    #[test]
    fn a_declared_grid_wins_without_the_simplicity_test() {
        // 33.3 deg on a 0.1-degree grid (3600 steps per turn).
        let h = 0.05 / 360.0;
        assert_eq!(snap_phase(33.3 / 360.0, h, 3600, None, true), None);
        assert_eq!(
            snap_phase(33.3 / 360.0, h, 3600, Some(3600), true),
            Some(t(333, 3600))
        );
    }

    // Weights of the 27-step nested cycle as a spreadsheet writes them (6 decimals): cube
    // roots of unity, scaled by 1/27 or not (Tan 2008, weights exp(-2 pi i t.phi)/N (memory)).
    #[test]
    #[allow(clippy::approx_constant)] // rounded inputs on purpose
    fn rounded_roots_of_unity_snap_to_the_exact_root() {
        let r = 5e-7 * std::f64::consts::SQRT_2;
        let (c, size) = snap_weight(Complex64::new(-0.5, 0.866025), r).unwrap();
        assert_eq!(c, Cyclo::root_of_unity(3, 1).unwrap());
        assert_eq!(size, 3);
        let z = Complex64::new(-0.018519, -0.032075);
        let (c, _) = snap_weight(z, r).unwrap();
        let want = Cyclo::root_of_unity(3, 2)
            .unwrap()
            .scale(&Q::new(1.into(), 27.into()));
        assert_eq!(c, want);
        // A Gaussian rational beats the polar form when simpler.
        let (c, _) = snap_weight(Complex64::new(0.5, 0.5), 5e-4).unwrap();
        assert_eq!(c.to_string(), "1/2 + 1/2i");
        // 0.7071 alone is a rounded 1/sqrt 2, not 70/99: no snap at 4 decimals.
        assert!(snap_weight(Complex64::new(0.7071, 0.0), 5e-5).is_none());
        // ... but exp(i pi/4) written as 0.7071+0.7071i snaps to zeta_8.
        let (c, _) = snap_weight(Complex64::new(0.7071, 0.7071), 7.1e-5).unwrap();
        assert_eq!(c, Cyclo::root_of_unity(8, 1).unwrap());
    }

    #[test]
    fn a_disc_holding_zero_snaps_to_zero_and_bad_input_to_nothing() {
        assert!(snap_weight(Complex64::new(-9.07e-18, 0.0), 1e-16)
            .unwrap()
            .0
            .is_zero());
        assert!(snap_weight(Complex64::new(f64::NAN, 0.0), 1e-3).is_none());
        assert!(snap_phase(f64::INFINITY, 1e-3, 10, None, true).is_none());
    }
}
