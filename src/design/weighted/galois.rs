//! Galois automorphisms of `Q(zeta_n)` and exact division through the field norm.
//!
//! For `k` coprime to `n`, `sigma_k` is the field automorphism fixing `Q` with
//! `sigma_k(zeta_n) = zeta_n^k`; the `sigma_k`, `k in (Z/n)^*`, are all of `Gal(Q(zeta_n)/Q)`.
//! The norm `Norm(a) = prod_k sigma_k(a)` is fixed by every automorphism, hence rational, and
//! nonzero for `a != 0` (each factor is nonzero). So
//! `1/a = (prod_{k != 1} sigma_k(a)) / Norm(a)`, with only ring operations and one rational
//! division. Cost: `phi(n) - 1` products in `Q(zeta_n)`; meant for the few divisions a design
//! needs, not for inner loops.

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Zero};

use super::BeyondError;
use crate::exact::{Cyclo, ExactError, Q};

/// `sigma_k(a)`: replace `zeta_n` by `zeta_n^k` in `a` (`n = a.order()`, `k` taken mod `n`).
/// `k` must be coprime to `n`, otherwise the map is not a field automorphism:
/// [`BeyondError::NotCoprime`].
pub fn sigma(a: &Cyclo, k: i64) -> Result<Cyclo, BeyondError> {
    let n = a.order() as i64;
    let k = k.rem_euclid(n);
    if k.gcd(&n) != 1 {
        return Err(BeyondError::NotCoprime { k, n });
    }
    let mut poly = vec![BigInt::zero(); n as usize];
    for (j, c) in a.numerators().iter().enumerate() {
        if !c.is_zero() {
            poly[((j as i64 * k) % n) as usize] += c;
        }
    }
    Ok(Cyclo::from_int_poly(
        a.order(),
        poly,
        a.denominator().clone(),
    )?)
}

/// The units `k in [1, n)` coprime to `n` (just `[1]` for `n = 1`), ascending.
pub fn units(n: u32) -> Vec<i64> {
    let n = n as i64;
    (1..n.max(2)).filter(|k| k.gcd(&n) == 1).collect()
}

/// The field norm `N(a) = prod_{k in (Z/n)^*} sigma_k(a)`, a rational number.
pub fn norm(a: &Cyclo) -> Result<Q, BeyondError> {
    let mut prod = a.clone();
    for k in units(a.order()).into_iter().skip(1) {
        prod = prod.mul(&sigma(a, k)?)?;
    }
    // Fixed by the whole Galois group, so rational; anything else is an internal error.
    prod.as_rational().ok_or(BeyondError::Internal {
        what: "field norm was not rational",
    })
}

/// Exact inverse `1/a` in `Q(zeta_n)`, `n = a.order()`, via the norm (see the module doc).
/// Errors with [`ExactError::DivisionByZero`] (wrapped) for `a == 0`.
pub fn inverse(a: &Cyclo) -> Result<Cyclo, BeyondError> {
    if a.is_zero() {
        return Err(ExactError::DivisionByZero.into());
    }
    if let Some(q) = a.as_rational() {
        return Ok(Cyclo::one(a.order())?.scale(&(Q::one() / q)));
    }
    let mut co = Cyclo::one(a.order())?;
    for k in units(a.order()).into_iter().skip(1) {
        co = co.mul(&sigma(a, k)?)?;
    }
    let nrm = a.mul(&co)?.as_rational().ok_or(BeyondError::Internal {
        what: "field norm was not rational",
    })?;
    if nrm.is_zero() {
        return Err(ExactError::DivisionByZero.into());
    }
    Ok(co.scale(&(Q::one() / nrm)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn q(n: i64) -> Q {
        Q::from_integer(BigInt::from(n))
    }

    #[test]
    fn sigma_by_hand() {
        // sigma_{-1} is complex conjugation; sigma_3 on Q(zeta_4) maps i to -i.
        let i = Cyclo::root_of_unity(4, 1).unwrap();
        assert_eq!(sigma(&i, 3).unwrap(), Cyclo::root_of_unity(4, 3).unwrap());
        let z = Cyclo::from_coeffs(12, &[q(1), q(2), q(-3), q(5)]).unwrap();
        assert_eq!(sigma(&z, -1).unwrap(), z.conj());
        assert_eq!(sigma(&z, 1).unwrap(), z);
        assert!(sigma(&z, 2).is_err());
        // Norm of 1 + i is (1 + i)(1 - i) = 2; norm of 1 - zeta_p is p for prime p
        // (standard, e.g. Washington, Introduction to Cyclotomic Fields, 1997, ch. 1 (memory)).
        let one_plus_i = Cyclo::from_coeffs(4, &[q(1), q(1)]).unwrap();
        assert_eq!(norm(&one_plus_i).unwrap(), q(2));
        let one_minus_z7 = Cyclo::from_coeffs(7, &[q(1), q(-1)]).unwrap();
        assert_eq!(norm(&one_minus_z7).unwrap(), q(7));
        assert_eq!(units(12), vec![1, 5, 7, 11]);
        assert_eq!(units(1), vec![1]);
    }

    #[test]
    fn inverse_of_zero_is_an_error() {
        assert_eq!(
            inverse(&Cyclo::zero(5).unwrap()),
            Err(BeyondError::Exact(ExactError::DivisionByZero))
        );
        let half = inverse(&Cyclo::from_rational(&q(2))).unwrap();
        assert_eq!(
            half.as_rational(),
            Some(Q::new(BigInt::from(1), BigInt::from(2)))
        );
    }

    proptest! {
        #[test]
        fn sigma_is_a_ring_homomorphism(
            n in 1u32..25,
            a in proptest::collection::vec(-4i64..5, 1..10),
            b in proptest::collection::vec(-4i64..5, 1..10),
            kk in 0usize..8,
        ) {
            let x = Cyclo::from_coeffs(n, &a.iter().map(|c| q(*c)).collect::<Vec<_>>()).unwrap();
            let y = Cyclo::from_coeffs(n, &b.iter().map(|c| q(*c)).collect::<Vec<_>>()).unwrap();
            let us = units(n);
            let k = us[kk % us.len()];
            let sx = sigma(&x, k).unwrap();
            let sy = sigma(&y, k).unwrap();
            prop_assert_eq!(sigma(&x.mul(&y).unwrap(), k).unwrap(), sx.mul(&sy).unwrap());
            prop_assert_eq!(sigma(&x.add(&y).unwrap(), k).unwrap(), sx.add(&sy).unwrap());
        }

        #[test]
        fn inverse_times_element_is_one(
            n in 1u32..25,
            a in proptest::collection::vec(-5i64..6, 1..12),
            d in 1i64..7,
        ) {
            let coeffs: Vec<Q> = a.iter().map(|c| Q::new(BigInt::from(*c), BigInt::from(d))).collect();
            let x = Cyclo::from_coeffs(n, &coeffs).unwrap();
            prop_assume!(!x.is_zero());
            let inv = inverse(&x).unwrap();
            prop_assert_eq!(x.mul(&inv).unwrap(), Cyclo::one(n).unwrap());
            // Independent float check of the same fact.
            let p = x.to_complex() * inv.to_complex();
            prop_assert!((p - num_complex::Complex64::new(1.0, 0.0)).norm() < 1e-6);
        }
    }
}
