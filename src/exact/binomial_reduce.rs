//! Reducing an integer polynomial modulo `Phi_n` in `O(n * 2^w(n))` operations (`w(n)` distinct
//! primes, at most 6 below the order limit) whatever the number of terms of `Phi_n`, so that
//! building roots of unity, lifting and conjugating stay fast for orders such as 30030 (where
//! long division by `Phi_30030`, 5371 terms, costs about `10^8` operations).
//!
//! With `r` the squarefree kernel of `n` and `s = n / r`, `Phi_n(x) = Phi_r(x^s)`, so the
//! residues of the exponents modulo `s` reduce separately modulo `Phi_r(y)`, `y = x^s`. For
//! squarefree `r`, Moebius inversion writes `Phi_r = N / D` with `N`, `D` products of binomials
//! `y^a - 1` (`N` over divisors `d` with `mu(d) = 1`, including `y^r - 1`, `D` over
//! `mu(d) = -1`), and `Psi = (y^r - 1) / Phi_r = D / N'` (`N = (y^r - 1) N'`). For
//! `P = q Phi_r + R` with `deg R < phi(r)`: `P Psi = q (y^r - 1) + R Psi` and
//! `deg(R Psi) < r`, so `W = (P Psi mod (y^r - 1))` equals `R Psi`, and
//! `R = W N' / D`, read as a power series modulo `y^phi(r)` (`D(0) = +-1` is a unit).
//! Every step multiplies or divides by a binomial, `O(length)` each.
//!
//! Integer sizes: the work runs in checked `i128` and reports overflow; the caller then redoes
//! it with big integers through the same steps.

use num_bigint::BigInt;
use num_traits::{CheckedAdd, CheckedSub, ToPrimitive, Zero};

use super::cyclotomic::{euler_phi, prime_factors};

/// Coefficient arithmetic the reduction needs: checked where overflow is possible.
trait Coef: Clone + Zero {
    fn csub(&self, other: &Self) -> Option<Self>;
    fn cadd(&self, other: &Self) -> Option<Self>;
}

impl Coef for i128 {
    fn csub(&self, other: &Self) -> Option<Self> {
        self.checked_sub(other)
    }
    fn cadd(&self, other: &Self) -> Option<Self> {
        self.checked_add(other)
    }
}

impl Coef for BigInt {
    fn csub(&self, other: &Self) -> Option<Self> {
        CheckedSub::checked_sub(self, other)
    }
    fn cadd(&self, other: &Self) -> Option<Self> {
        CheckedAdd::checked_add(self, other)
    }
}

/// Estimated operation count of [`reduce`] for order `n`, for choosing between it and long
/// division.
pub(crate) fn cost(n: u32) -> u64 {
    let k = prime_factors(n).len() as u32;
    // Four passes over about 2n entries, 2^(k-1) binomials each way.
    8 * n as u64 * (1u64 << k.saturating_sub(1))
}

/// `poly mod Phi_n` (coefficients low to high, any length), length `phi(n)`.
pub(crate) fn reduce(poly: &[BigInt], n: u32) -> Vec<BigInt> {
    let small: Option<Vec<i128>> = poly.iter().map(ToPrimitive::to_i128).collect();
    if let Some(out) = small.and_then(|p| reduce_with(&p, n)) {
        return out.into_iter().map(BigInt::from).collect();
    }
    // Big integers never overflow.
    reduce_with(poly, n).unwrap_or_default()
}

fn reduce_with<T: Coef>(poly: &[T], n: u32) -> Option<Vec<T>> {
    let primes = prime_factors(n);
    let r: u32 = primes.iter().product::<u32>().max(1);
    let s = (n / r) as usize;
    let r = r as usize;
    let phi_r = euler_phi(r as u32) as usize;
    let (plus, minus) = binomial_degrees(&primes);
    let mut out = vec![T::zero(); s * phi_r];
    for c in 0..s {
        // P_c(y) = sum_j poly[c + s j] y^j, folded modulo y^r - 1 (x^n = 1 modulo Phi_n).
        let mut pc = vec![T::zero(); r];
        for (j, v) in poly.iter().skip(c).step_by(s).enumerate() {
            pc[j % r] = pc[j % r].cadd(v)?;
        }
        let rc = reduce_squarefree(pc, r, phi_r, &plus, &minus)?;
        for (i, v) in rc.into_iter().enumerate() {
            out[c + s * i] = v;
        }
    }
    Some(out)
}

/// Degrees `r/d` of the binomials of `N'` (`mu(d) = 1`, `d > 1`) and `D` (`mu(d) = -1`) for
/// squarefree `r` with the given primes.
fn binomial_degrees(primes: &[u32]) -> (Vec<usize>, Vec<usize>) {
    let r: usize = primes.iter().map(|p| *p as usize).product::<usize>().max(1);
    let (mut plus, mut minus) = (Vec::new(), Vec::new());
    for mask in 1u32..(1 << primes.len()) {
        let d: usize = (0..primes.len())
            .filter(|i| mask & (1 << i) != 0)
            .map(|i| primes[i] as usize)
            .product();
        if mask.count_ones() % 2 == 0 {
            plus.push(r / d);
        } else {
            minus.push(r / d);
        }
    }
    (plus, minus)
}

/// `p mod Phi_r` for squarefree `r`, `p` of length `r`.
fn reduce_squarefree<T: Coef>(
    p: Vec<T>,
    r: usize,
    phi_r: usize,
    plus: &[usize],
    minus: &[usize],
) -> Option<Vec<T>> {
    if r == 1 {
        // Phi_1 = y - 1: the remainder is P(1).
        let mut sum = T::zero();
        for v in &p {
            sum = sum.cadd(v)?;
        }
        return Some(vec![sum]);
    }
    // V = P * D / N' exactly (a polynomial: P Psi), then W = V mod (y^r - 1).
    let mut v = p;
    for &a in minus {
        v = mul_binomial(&v, a, None)?;
    }
    for &a in plus {
        div_binomial(&mut v, a)?;
        v.truncate(v.len() - a);
    }
    let mut w = vec![T::zero(); r];
    for (j, c) in v.iter().enumerate() {
        w[j % r] = w[j % r].cadd(c)?;
    }
    // R = W N' / D modulo y^phi(r).
    w.truncate(phi_r);
    for &a in plus {
        w = mul_binomial(&w, a, Some(phi_r))?;
    }
    for &a in minus {
        div_binomial(&mut w, a)?;
    }
    Some(w)
}

/// `c * (y^a - 1)`, truncated to `limit` terms if given.
fn mul_binomial<T: Coef>(c: &[T], a: usize, limit: Option<usize>) -> Option<Vec<T>> {
    let len = limit.unwrap_or(c.len() + a);
    let mut out = vec![T::zero(); len];
    for (j, o) in out.iter_mut().enumerate() {
        let hi = if j >= a { c.get(j - a) } else { None };
        let lo = c.get(j);
        *o = match (hi, lo) {
            (Some(h), Some(l)) => h.csub(l)?,
            (Some(h), None) => h.clone(),
            (None, Some(l)) => T::zero().csub(l)?,
            (None, None) => T::zero(),
        };
    }
    Some(out)
}

/// In place, `c / (y^a - 1)` as a power series of the same length: from
/// `e_j = c_(j-a) - c_j`, `c_j = c_(j-a) - e_j`. For an exact polynomial division the top `a`
/// entries of the result are zero and the caller drops them.
fn div_binomial<T: Coef>(c: &mut [T], a: usize) -> Option<()> {
    for j in 0..c.len() {
        let prev = if j >= a { c[j - a].clone() } else { T::zero() };
        c[j] = prev.csub(&c[j])?;
    }
    Some(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::cyclo::reduce_mod_long;
    use crate::exact::cyclotomic::cyclotomic_polynomial;
    use proptest::prelude::*;

    fn big(v: &[i64]) -> Vec<BigInt> {
        v.iter().map(|c| BigInt::from(*c)).collect()
    }

    #[test]
    fn monomials_match_long_division() {
        for n in [1u32, 2, 3, 4, 6, 9, 12, 30, 36, 60, 105, 210, 360, 1155] {
            let phi = cyclotomic_polynomial(n).unwrap();
            for e in [0usize, 1, 2, n as usize / 2, n as usize - 1, n as usize + 3] {
                let mut p = vec![0i64; e + 1];
                p[e] = 1;
                assert_eq!(
                    reduce(&big(&p), n),
                    reduce_mod_long(big(&p), &phi),
                    "n={n} e={e}"
                );
            }
        }
    }

    #[test]
    fn big_integers_take_the_same_route() {
        let n = 30u32;
        let phi = cyclotomic_polynomial(n).unwrap();
        let huge: BigInt = BigInt::from(i128::MAX) * 7;
        let mut p = vec![BigInt::zero(); 40];
        p[37] = huge.clone();
        p[3] = -huge;
        assert_eq!(reduce(&p, n), reduce_mod_long(p.clone(), &phi));
    }

    proptest! {
        /// Two routes, one answer: binomial steps against long division by `Phi_n`.
        #[test]
        fn matches_long_division(
            n in 1u32..400,
            terms in prop::collection::vec((0usize..900, -50i64..=50), 0..20),
        ) {
            let mut p = vec![0i64; 900];
            for (e, c) in terms {
                p[e] += c;
            }
            let phi = cyclotomic_polynomial(n).unwrap();
            prop_assert_eq!(reduce(&big(&p), n), reduce_mod_long(big(&p), &phi));
        }
    }
}
