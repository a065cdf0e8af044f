//! Cyclotomic polynomials `Phi_n` (integer coefficients, low to high) and Euler's totient,
//! memoised. `Phi_n` is the minimal polynomial of `zeta_n = exp(2*pi*i/n)`; everything in
//! [`super::cyclo`] and [`super::filter`] reduces modulo it.

use std::collections::HashMap;
use std::sync::{Arc, Mutex, OnceLock};

use super::{check_order, ExactError};

/// Euler's totient `phi(n)`: how many `1 <= k <= n` are coprime to `n` (`phi(0) = 0`).
pub fn euler_phi(n: u32) -> u32 {
    if n == 0 {
        return 0;
    }
    let mut result = n;
    for p in prime_factors(n) {
        result = result / p * (p - 1);
    }
    result
}

/// Distinct prime factors of `n >= 1`, ascending.
pub(crate) fn prime_factors(mut n: u32) -> Vec<u32> {
    let mut out = Vec::new();
    let mut p = 2u32;
    while (p as u64) * (p as u64) <= n as u64 {
        if n % p == 0 {
            out.push(p);
            while n % p == 0 {
                n /= p;
            }
        }
        p += 1;
    }
    if n > 1 {
        out.push(n);
    }
    out
}

/// The `n`-th cyclotomic polynomial, coefficients from `x^0` up to `x^phi(n)` (monic).
///
/// Computed by exact division: for squarefree `n = m*p` with prime `p` not dividing `m`,
/// `Phi_n(x) = Phi_m(x^p) / Phi_m(x)` (this is `(x^n - 1)` divided by `Phi_d` for the proper
/// divisors `d`, grouped), and `Phi_n(x) = Phi_r(x^(n/r))` with `r` the squarefree kernel of
/// `n`. Arithmetic is in `i128` with checks; results whose coefficients do not fit `i64` give
/// [`ExactError::Overflow`]. Orders outside `1..=MAX_ORDER` are rejected.
pub fn cyclotomic_polynomial(n: u32) -> Result<Vec<i64>, ExactError> {
    Ok(cyclotomic_cached(n)?.as_ref().clone())
}

/// Memoised `Phi_n` shared by the crate.
pub(crate) fn cyclotomic_cached(n: u32) -> Result<Arc<Vec<i64>>, ExactError> {
    check_order(n as u64)?;
    static CACHE: OnceLock<Mutex<HashMap<u32, Arc<Vec<i64>>>>> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    if let Ok(map) = cache.lock() {
        if let Some(p) = map.get(&n) {
            return Ok(Arc::clone(p));
        }
    }
    let poly = Arc::new(compute(n)?);
    if let Ok(mut map) = cache.lock() {
        map.insert(n, Arc::clone(&poly));
    }
    Ok(poly)
}

fn compute(n: u32) -> Result<Vec<i64>, ExactError> {
    let primes = prime_factors(n);
    // Squarefree kernel, built up one prime at a time.
    let mut phi: Vec<i128> = vec![-1, 1]; // Phi_1 = x - 1
    for &p in &primes {
        let p = p as usize;
        // Phi_m(x^p)
        let mut up = vec![0i128; (phi.len() - 1) * p + 1];
        for (k, c) in phi.iter().enumerate() {
            up[k * p] = *c;
        }
        phi = exact_div_monic(&up, &phi)?;
    }
    let r: u32 = primes.iter().product::<u32>().max(1);
    let s = (n / r) as usize;
    let mut out = vec![0i64; (phi.len() - 1) * s + 1];
    for (k, c) in phi.iter().enumerate() {
        out[k * s] = i64::try_from(*c).map_err(|_| ExactError::Overflow {
            what: "cyclotomic polynomial coefficients (beyond i64)",
        })?;
    }
    Ok(out)
}

/// Exact quotient of `a` by the monic (up to sign of leading 1) polynomial `b`.
fn exact_div_monic(a: &[i128], b: &[i128]) -> Result<Vec<i128>, ExactError> {
    let overflow = ExactError::Overflow {
        what: "cyclotomic polynomial division",
    };
    let db = b.len() - 1;
    let lead = b[db];
    let mut rem = a.to_vec();
    let mut q = vec![0i128; a.len() - db];
    let nz: Vec<(usize, i128)> = b[..db]
        .iter()
        .enumerate()
        .filter(|(_, c)| **c != 0)
        .map(|(k, c)| (k, *c))
        .collect();
    for i in (0..q.len()).rev() {
        let c = rem[i + db] / lead; // lead is +-1
        q[i] = c;
        if c == 0 {
            continue;
        }
        rem[i + db] = 0;
        for &(k, bk) in &nz {
            let t = c.checked_mul(bk).ok_or(overflow.clone())?;
            rem[i + k] = rem[i + k].checked_sub(t).ok_or(overflow.clone())?;
        }
    }
    Ok(q)
}

/// The degree of a monic cyclotomic polynomial (coefficients low to high) and its nonzero
/// coefficients below the leading one, as `(power, coefficient)` pairs for fast reduction.
pub fn monic_low_terms(phi: &[i64]) -> (usize, Vec<(usize, i128)>) {
    let d = phi.len().saturating_sub(1);
    let low = phi[..d]
        .iter()
        .enumerate()
        .filter(|(_, c)| **c != 0)
        .map(|(k, c)| (k, i128::from(*c)))
        .collect();
    (d, low)
}

/// Reduce the integer polynomial `acc` (low to high) modulo the monic polynomial of degree
/// `deg` with low terms `low` (see [`monic_low_terms`]), in place and in checked `i128`.
/// Returns whether the remainder is zero, or `None` if an intermediate value overflowed (the
/// caller then redoes the test with big integers).
pub fn reduced_is_zero(acc: &mut [i128], deg: usize, low: &[(usize, i128)]) -> Option<bool> {
    let mut i = acc.len();
    while i > deg {
        i -= 1;
        let c = acc[i];
        if c == 0 {
            continue;
        }
        acc[i] = 0;
        for &(k, pk) in low {
            acc[i - deg + k] = c
                .checked_mul(pk)
                .and_then(|t| acc[i - deg + k].checked_sub(t))?;
        }
    }
    Some(acc[..deg.min(acc.len())].iter().all(|c| *c == 0))
}

#[cfg(test)]
mod tests {
    use super::*;
    use num_bigint::BigInt;

    /// Moebius function, by trial division (independent of the code above).
    fn mobius(mut n: u32) -> i32 {
        let mut k = 0;
        let mut p = 2;
        while p * p <= n {
            if n % p == 0 {
                n /= p;
                if n % p == 0 {
                    return 0;
                }
                k += 1;
            }
            p += 1;
        }
        if n > 1 {
            k += 1;
        }
        if k % 2 == 0 {
            1
        } else {
            -1
        }
    }

    fn mul(a: &[BigInt], b: &[BigInt]) -> Vec<BigInt> {
        let mut out = vec![BigInt::from(0); a.len() + b.len() - 1];
        for (i, x) in a.iter().enumerate() {
            for (j, y) in b.iter().enumerate() {
                out[i + j] += x * y;
            }
        }
        out
    }

    /// Long division by a monic polynomial, asserting no remainder.
    fn div(a: &[BigInt], b: &[BigInt]) -> Vec<BigInt> {
        let mut rem = a.to_vec();
        let db = b.len() - 1;
        let mut q = vec![BigInt::from(0); a.len() - db];
        for i in (0..q.len()).rev() {
            let c = rem[i + db].clone();
            for (k, bk) in b.iter().enumerate() {
                rem[i + k] -= &c * bk;
            }
            q[i] = c;
        }
        assert!(rem.iter().all(|c| *c == BigInt::from(0)));
        q
    }

    /// Phi_n = prod_{d | n} (x^d - 1)^{mu(n/d)} (Moebius inversion of x^n - 1 = prod Phi_d;
    /// standard, e.g. Lang, Algebra, 2002, ch. VI sec. 3 (memory)).
    fn by_moebius(n: u32) -> Vec<BigInt> {
        let xd1 = |d: u32| {
            let mut v = vec![BigInt::from(0); d as usize + 1];
            v[0] = BigInt::from(-1);
            v[d as usize] = BigInt::from(1);
            v
        };
        let mut num = vec![BigInt::from(1)];
        let mut den = vec![BigInt::from(1)];
        for d in (1..=n).filter(|d| n % d == 0) {
            match mobius(n / d) {
                1 => num = mul(&num, &xd1(d)),
                -1 => den = mul(&den, &xd1(d)),
                _ => {}
            }
        }
        // Normalise signs: den is monic up to sign (-1)^k, so is num.
        let lead = den.last().cloned().unwrap_or_default();
        if lead < BigInt::from(0) {
            den.iter_mut().for_each(|c| *c = -c.clone());
            num.iter_mut().for_each(|c| *c = -c.clone());
        }
        div(&num, &den)
    }

    #[test]
    fn matches_moebius_product_up_to_200() {
        for n in 1..=200 {
            let got = cyclotomic_polynomial(n).unwrap();
            let want: Vec<i64> = by_moebius(n)
                .iter()
                .map(|c| i64::try_from(c).unwrap())
                .collect();
            assert_eq!(got, want, "Phi_{n}");
            assert_eq!(got.len() as u32 - 1, euler_phi(n), "degree of Phi_{n}");
        }
    }

    #[test]
    fn small_values_by_hand() {
        assert_eq!(cyclotomic_polynomial(1).unwrap(), vec![-1, 1]);
        assert_eq!(cyclotomic_polynomial(2).unwrap(), vec![1, 1]);
        assert_eq!(cyclotomic_polynomial(4).unwrap(), vec![1, 0, 1]);
        assert_eq!(cyclotomic_polynomial(12).unwrap(), vec![1, 0, -1, 0, 1]);
        assert_eq!(euler_phi(1), 1);
        assert_eq!(euler_phi(36), 12);
        assert_eq!(euler_phi(97), 96);
        assert_eq!(euler_phi(0), 0);
    }

    #[test]
    fn phi_105_has_coefficient_minus_two() {
        // Common knowledge in number theory (Migotti 1883): 105 = 3*5*7 is the smallest order
        // with a coefficient outside {-1, 0, 1}; the coefficient -2 appears at x^7 and x^41
        // (positions from memory, confirmed by the Moebius-product test above).
        let p = cyclotomic_polynomial(105).unwrap();
        assert!(p.contains(&-2));
        assert_eq!(p[7], -2);
        assert_eq!(p[41], -2);
        for n in 1..105 {
            assert!(cyclotomic_polynomial(n)
                .unwrap()
                .iter()
                .all(|c| c.abs() <= 1));
        }
    }

    #[test]
    fn limits_are_checked() {
        assert_eq!(cyclotomic_polynomial(0), Err(ExactError::ZeroOrder));
        assert!(matches!(
            cyclotomic_polynomial(super::super::MAX_ORDER + 1),
            Err(ExactError::OrderTooLarge { .. })
        ));
        // Larger orders stay fast: 30030 = 2*3*5*7*11*13, 3600 = 30 * 120.
        assert_eq!(cyclotomic_polynomial(3600).unwrap().len(), 961);
        assert_eq!(
            cyclotomic_polynomial(30030).unwrap().len() as u32,
            euler_phi(30030) + 1
        );
    }
}
