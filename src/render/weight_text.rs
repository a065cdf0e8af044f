//! Compact weight notation for terminal tables: a step weight `w` of an N-step cycle written
//! as `N w` over `N`, with `e(x) = exp(2 pi i x)` (x in turns): `1/27`, `-i/8`, `e(-1/3)/27`,
//! `2e(1/6)/9`. The form is found exactly (a rational multiple of a root of unity in the
//! weight's own cyclotomic field); a weight of any other form is shown in polar form
//! `~0.577e(0.0833)/N`, marked approximate by the `~`. Ten to fifteen characters instead of the
//! twenty of a rectangular float pair, so a step table fits 80 columns.

use crate::cycle::Weight;
use crate::exact::{Cyclo, Q};
use num_traits::{One, Zero};

/// The legend to print under a table that uses [`compact_weight`].
pub const LEGEND: &str = "e(x) = exp(2 pi i x), x in turns; ~ marks a float (polar form)";

/// `w` written compactly over the step count `n` (see the module notes).
pub fn compact_weight(w: &Weight, n: usize) -> String {
    let over = if n == 1 {
        String::new()
    } else {
        format!("/{n}")
    };
    match w {
        Weight::Exact(c) if c.is_zero() => "0".into(),
        Weight::Exact(c) => match exact_polar(c, n) {
            Some((q, k, m)) => format!("{}{over}", polar_text(&q, k, m)),
            None => approx_text(c.to_complex() * n as f64, &over),
        },
        Weight::Approx(z) => approx_text(*z * n as f64, &over),
    }
}

/// `c * n = q * exp(2 pi i k/m)` with `q >= 0` rational and `k/m` in lowest terms,
/// `-1/2 < k/m <= 1/2`, when `c * n` has that form.
fn exact_polar(c: &Cyclo, n: usize) -> Option<(Q, i64, i64)> {
    let z = c.scale(&Q::from_integer(n.into()));
    let (q, x) = crate::exact::polar::exact_polar(&z)?;
    Some((q, *x.numer(), *x.denom()))
}

fn polar_text(q: &Q, k: i64, m: i64) -> String {
    if q.is_zero() {
        return "0".into();
    }
    let mag = if q.is_one() {
        String::new()
    } else if q.is_integer() {
        q.to_string()
    } else {
        format!("({q})")
    };
    let one = if mag.is_empty() { "1" } else { mag.as_str() };
    match (k, m) {
        (0, _) => one.to_string(),
        (1, 2) => format!("-{one}"),
        (1, 4) => format!("{mag}i"),
        (-1, 4) => format!("-{mag}i"),
        _ => format!("{mag}e({k}/{m})"),
    }
}

fn approx_text(z: num_complex::Complex64, over: &str) -> String {
    let r = z.norm();
    let x = z.arg() / std::f64::consts::TAU;
    if r == 0.0 {
        return "0".into();
    }
    format!("~{}e({}){over}", sig4(r), sig4(x))
}

/// Four significant digits, positional.
fn sig4(x: f64) -> String {
    if x == 0.0 {
        return "0".into();
    }
    let digits = (3 - x.abs().log10().floor() as i32).clamp(0, 12) as usize;
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn w(c: Cyclo, n: i64) -> Weight {
        Weight::Exact(c.scale(&Q::new(1.into(), n.into())))
    }

    #[test]
    fn roots_of_unity_over_n_are_written_exactly() {
        // exp(-2 pi i/3)/27: the weight of a 27-step three-field cycle (common practice).
        let c = Cyclo::root_of_unity(3, -1).unwrap();
        assert_eq!(compact_weight(&w(c, 27), 27), "e(-1/3)/27");
        assert_eq!(compact_weight(&w(Cyclo::one(1).unwrap(), 8), 8), "1/8");
        assert_eq!(
            compact_weight(&w(Cyclo::root_of_unity(4, 1).unwrap(), 8), 8),
            "i/8"
        );
        assert_eq!(
            compact_weight(&w(Cyclo::root_of_unity(4, 3).unwrap(), 8), 8),
            "-i/8"
        );
        assert_eq!(
            compact_weight(&w(Cyclo::root_of_unity(2, 1).unwrap(), 4), 4),
            "-1/4"
        );
        // -zeta_3 = exp(i pi/3 + i pi) = e(-1/6) lives in Q(zeta_3): the 2o-th roots are needed.
        let minus = Cyclo::root_of_unity(3, 1).unwrap().neg();
        assert_eq!(compact_weight(&w(minus, 6), 6), "e(-1/6)/6");
    }

    #[test]
    fn rational_magnitudes_and_other_numbers() {
        let two = Q::from_integer(2.into());
        let c = Cyclo::root_of_unity(6, 1).unwrap().scale(&two);
        assert_eq!(compact_weight(&w(c, 9), 9), "2e(1/6)/9");
        let half = Q::new(1.into(), 2.into());
        let c = Cyclo::root_of_unity(6, 1).unwrap().scale(&half);
        assert_eq!(compact_weight(&w(c, 9), 9), "(1/2)e(1/6)/9");
        // 1 + i is sqrt(2) e(1/8): no rational magnitude, so the polar float form.
        let c = Cyclo::from_gaussian(&Q::one(), &Q::one());
        assert_eq!(compact_weight(&w(c, 4), 4), "~1.414e(0.125)/4");
        assert_eq!(
            compact_weight(&Weight::Exact(Cyclo::zero(1).unwrap()), 4),
            "0"
        );
    }
}
