//! Tests for [`super::ExactFilter`]: hand-derived selection rules and agreement with a
//! straightforward floating-point evaluation on random cycles.

use super::*;
use crate::exact::cyclo::Q;
use num_rational::Ratio;
use num_traits::Pow;
use proptest::prelude::*;

fn t(n: i64, d: i64) -> Turns {
    Ratio::new(n, d)
}

fn q(n: i64, d: i64) -> Q {
    Q::new(BigInt::from(n), BigInt::from(d))
}

/// Nested cycle: every field steps through k/M turns; weights exp(-2 pi i t.phi)/N.
fn nested(m: i64, fields: usize, target: &[i64]) -> (Vec<Vec<Turns>>, Vec<Cyclo>) {
    let n = (m as usize).pow(fields as u32);
    let mut phases = Vec::new();
    let mut weights = Vec::new();
    for idx in 0..n {
        let mut row = Vec::new();
        let mut rest = idx;
        let mut e = 0i64;
        for tj in target.iter().take(fields) {
            let k = (rest % m as usize) as i64;
            rest /= m as usize;
            row.push(t(k, m));
            e += tj * k;
        }
        phases.push(row);
        let w = Cyclo::root_of_unity(m as u32, -e)
            .unwrap()
            .scale(&q(1, n as i64));
        weights.push(w);
    }
    (phases, weights)
}

#[test]
fn nested_cycle_selects_signature_modulo_grid() {
    // Common practice (nested phase cycling): an M-step cycle per field with weights
    // exp(-i t.phi)/N passes b with F = 1 iff b = t (mod M) componentwise, else F = 0.
    let target = [-1i64, 1, 1];
    let (p, w) = nested(3, 3, &target);
    let f = ExactFilter::new(&p, &w).unwrap();
    assert_eq!(f.order(), 3);
    assert_eq!(f.steps(), 27);
    assert!(f.is_monomial());
    let mut s = Scratch::new();
    for b0 in -3..=3 {
        for b1 in -3..=3 {
            for b2 in -3..=3 {
                let b = [b0, b1, b2];
                let pass = b
                    .iter()
                    .zip(&target)
                    .all(|(x, y)| (x - y).rem_euclid(3) == 0);
                let v = f.eval(&b).unwrap();
                if pass {
                    assert_eq!(v, Cyclo::one(1).unwrap(), "b = {b:?}");
                } else {
                    assert!(v.is_zero(), "b = {b:?}: {v}");
                }
                assert_eq!(f.is_zero_with(&b, &mut s).unwrap(), !pass);
                assert_eq!(f.is_zero(&b).unwrap(), !pass);
            }
        }
    }
}

#[test]
fn two_by_two_pump_cycle() {
    // Common practice (shaper-based pump-probe 2D): phases {0, 1/2} on both pump pulses,
    // weights +-1 (product of signs). Passes b = (+-1, -+1) (R and NR), cancels b = (0, 0)
    // (pump-probe background) and (+-1, 0), (0, +-1) (pump-scatter-probe).
    let mut phases = Vec::new();
    let mut weights = Vec::new();
    for (a, b) in [(0, 0), (0, 1), (1, 0), (1, 1)] {
        phases.push(vec![t(a, 2), t(b, 2)]);
        let sign = if (a + b) % 2 == 0 { 1 } else { -1 };
        weights.push(Cyclo::from_rational(&q(sign, 1)));
    }
    let f = ExactFilter::new(&phases, &weights).unwrap();
    for b in [[0, 0], [1, 0], [0, 1], [-1, 0], [2, 0]] {
        assert!(f.is_zero(&b).unwrap(), "{b:?}");
    }
    for b in [[-1, 1], [1, -1]] {
        assert_eq!(f.eval(&b).unwrap().as_rational(), Some(q(4, 1)));
    }
}

#[test]
fn general_weights_path() {
    // Weights (1 + i)/2 and -(1 + i)/2 * zeta_3: (1 + i)/2 = zeta_8 / sqrt 2 is not a
    // rational times a root of unity, so the general (multi-term) path is used.
    let w0 = Cyclo::from_gaussian(&q(1, 2), &q(1, 2));
    let w1 = w0.mul(&Cyclo::root_of_unity(3, 1).unwrap()).unwrap().neg();
    let phases = vec![vec![t(0, 1)], vec![t(1, 3)]];
    let f = ExactFilter::new(&phases, &[w0, w1]).unwrap();
    assert!(!f.is_monomial());
    assert_eq!(f.order(), 12);
    // F(b) = w0 (1 - zeta_3^(1 + b)): zero iff b = 2 mod 3.
    for b in -6..6i64 {
        assert_eq!(f.is_zero(&[b]).unwrap(), b.rem_euclid(3) == 2, "b = {b}");
    }
}

#[test]
fn input_errors() {
    let p = vec![vec![t(0, 1), t(1, 2)], vec![t(1, 2)]];
    let w = vec![Cyclo::one(1).unwrap(), Cyclo::one(1).unwrap()];
    assert!(matches!(
        ExactFilter::new(&p, &w),
        Err(ExactError::LengthMismatch { .. })
    ));
    assert!(matches!(
        ExactFilter::new(&p[..1], &w),
        Err(ExactError::LengthMismatch { .. })
    ));
    let f = ExactFilter::new(&p[..1], &w[..1]).unwrap();
    assert!(f.is_zero(&[1]).is_err());
    let big = vec![vec![t(1, 100_003)]];
    assert!(matches!(
        ExactFilter::new(&big, &w[..1]),
        Err(ExactError::OrderTooLarge { .. })
    ));
}

#[test]
fn large_coefficients_stay_exact_or_are_refused_before_work() {
    // Phi_105 has coefficients -2 (Migotti 1883), so 2^110 * zeta_105^104 has power-basis
    // coefficients near 2^111: still inside the product-basis bound (absolute sum <= 2^120).
    let w = Cyclo::root_of_unity(105, 104)
        .unwrap()
        .scale(&Q::from_integer(BigInt::from(2).pow(110u32)));
    let f = ExactFilter::new(&[vec![t(0, 1)]], std::slice::from_ref(&w)).unwrap();
    assert!(!f.is_zero(&[0]).unwrap());
    assert_eq!(f.eval(&[0]).unwrap(), w);
    // 2^126 cannot be reduced inside i128: refused when the filter is built, not mid-check.
    let w = w.scale(&Q::from_integer(BigInt::from(2).pow(16u32)));
    assert!(matches!(
        ExactFilter::new(&[vec![t(0, 1)]], std::slice::from_ref(&w)),
        Err(ExactError::Overflow { .. })
    ));
}

/// Random cycle on an M grid; weights either exp(-i t.phi)/N (monomial) or random sums.
fn arb_cycle() -> impl Strategy<Value = (Vec<Vec<Turns>>, Vec<Cyclo>, Vec<Vec<i64>>)> {
    (
        prop::sample::select(vec![2i64, 3, 4, 5, 6, 8, 12]),
        1usize..=3,
        1usize..=8,
        any::<bool>(),
    )
        .prop_flat_map(|(m, fields, steps, monomial)| {
            (
                prop::collection::vec(prop::collection::vec(0..m, fields), steps),
                prop::collection::vec(-3i64..=3, fields),
                prop::collection::vec((-3i64..=3, 0i64..12, -2i64..=2, 0i64..4), steps),
                prop::collection::vec(prop::collection::vec(-4i64..=4, fields), 12),
            )
                .prop_map(move |(ks, target, wparts, bs)| {
                    let phases: Vec<Vec<Turns>> = ks
                        .iter()
                        .map(|row| row.iter().map(|k| t(*k, m)).collect())
                        .collect();
                    let weights = ks
                        .iter()
                        .zip(&wparts)
                        .map(|(row, &(a, k, c, j))| {
                            let e: i64 = row.iter().zip(&target).map(|(x, y)| x * y).sum();
                            let base = Cyclo::root_of_unity(m as u32, -e).unwrap();
                            if monomial {
                                base.scale(&q(1, ks.len() as i64))
                            } else {
                                let extra = Cyclo::root_of_unity(12, k).unwrap().scale(&q(a, 2));
                                let i_part = Cyclo::root_of_unity(4, j).unwrap().scale(&q(c, 3));
                                base.add(&extra).unwrap().add(&i_part).unwrap()
                            }
                        })
                        .collect();
                    let mut bs = bs;
                    bs.push(target.clone());
                    (phases, weights, bs)
                })
        })
}

proptest! {
    #[test]
    fn exact_zero_iff_float_is_tiny((phases, weights, bs) in arb_cycle()) {
        let f = ExactFilter::new(&phases, &weights).unwrap();
        let mut s = Scratch::new();
        for b in &bs {
            // Straightforward float evaluation, independent of the filter's integer exponents.
            let mut fl = Complex64::new(0.0, 0.0);
            for (row, w) in phases.iter().zip(&weights) {
                let ph: f64 = row
                    .iter()
                    .zip(b)
                    .map(|(p, bj)| *bj as f64 * (*p.numer() as f64 / *p.denom() as f64))
                    .sum();
                fl += w.to_complex() * Complex64::from_polar(1.0, std::f64::consts::TAU * ph);
            }
            let zero = f.is_zero_with(b, &mut s).unwrap();
            prop_assert_eq!(zero, fl.norm() < 1e-9, "b = {:?}, |F| = {}", b, fl.norm());
            let v = f.eval(b).unwrap();
            prop_assert_eq!(v.is_zero(), zero);
            prop_assert!((v.to_complex() - fl).norm() < 1e-9);
            prop_assert!((f.approx(b).unwrap() - fl).norm() < 1e-9);
        }
    }
}
