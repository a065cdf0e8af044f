//! Exact determinants of root-of-unity matrices. A matrix whose entries are all powers of
//! `zeta_L` is stored as its integer exponents; its determinant is then, by the Leibniz
//! formula, a signed sum of `N!` powers of `zeta_L`, i.e. an integer polynomial modulo
//! `x^L - 1` (a vector of `L` integer coefficients). Such a polynomial is zero at `zeta_L`
//! iff it is divisible by the cyclotomic polynomial `Phi_L` (the minimal polynomial of
//! `zeta_L`), which `is_zero_at_zeta` tests exactly.

use num_bigint::BigInt;

use crate::exact::cyclotomic::{cyclotomic_cached, monic_low_terms, reduced_is_zero};
use crate::exact::{Cyclo, ExactError};

/// An element of `Z[x]/(x^L - 1)`: `coeffs[k]` multiplies `x^k`, `coeffs.len() == L`.
///
/// Coefficient bounds: every polynomial built here is a sum of at most `N * N!` monomials
/// with `N <= 8`, so `|coeff| <= 8 * 8! < 2^19` and `i64` cannot overflow.
pub(crate) type RingPoly = Vec<i64>;

/// Determinant of the `n x n` matrix with entries `zeta_L^exps[i * n + j]` (exponents in
/// `[0, L)`), by the Leibniz formula: one signed monomial per permutation, `n!` in all.
/// The empty matrix has determinant 1.
pub(crate) fn leibniz_det(exps: &[u32], n: usize, l: u32) -> RingPoly {
    let mut acc = vec![0i64; l as usize];
    debug_assert_eq!(exps.len(), n * n);
    rec(exps, n, l, 0, 0, 0, 1, &mut acc);
    acc
}

/// Depth-first walk over permutations: `row` rows placed, `used` the bit mask of their
/// columns, `e` the exponent so far, `sign` the parity of the inversions so far.
#[allow(clippy::too_many_arguments)]
fn rec(exps: &[u32], n: usize, l: u32, row: usize, used: u32, e: u32, sign: i64, acc: &mut [i64]) {
    if row == n {
        acc[e as usize] += sign;
        return;
    }
    for c in 0..n {
        let bit = 1u32 << c;
        if used & bit != 0 {
            continue;
        }
        // Columns already used that lie right of `c`: each is one inversion.
        let inv = (used >> (c + 1)).count_ones();
        let s = if inv % 2 == 0 { sign } else { -sign };
        let e2 = (e + exps[row * n + c]) % l;
        rec(exps, n, l, row + 1, used | bit, e2, s, acc);
    }
}

/// `acc += sign * x^shift * p` in `Z[x]/(x^L - 1)`.
pub(crate) fn add_shifted(acc: &mut [i64], p: &[i64], shift: u32, sign: i64) {
    let l = acc.len();
    let s = shift as usize % l.max(1);
    for (k, c) in p.iter().enumerate() {
        if *c != 0 {
            acc[(k + s) % l] += sign * c;
        }
    }
}

/// Exact test `p(zeta_L) == 0`, i.e. `Phi_L` divides `p`. Reduces modulo `Phi_L` in checked
/// `i128`; should an intermediate value overflow, the reduction is redone with big integers.
pub(crate) fn is_zero_at_zeta(p: &[i64], l: u32) -> Result<bool, ExactError> {
    if p.iter().all(|c| *c == 0) {
        return Ok(true);
    }
    let phi = cyclotomic_cached(l)?;
    let (d, low) = monic_low_terms(&phi);
    let mut acc: Vec<i128> = p.iter().map(|c| i128::from(*c)).collect();
    match reduced_is_zero(&mut acc, d, &low) {
        Some(zero) => Ok(zero),
        None => Ok(to_cyclo(p, l)?.is_zero()),
    }
}

/// The value `p(zeta_L)` as an exact element of `Q(zeta_L)`.
pub(crate) fn to_cyclo(p: &[i64], l: u32) -> Result<Cyclo, ExactError> {
    let poly = p.iter().map(|c| BigInt::from(*c)).collect();
    Cyclo::from_int_poly(l, poly, BigInt::from(1))
}

#[cfg(test)]
mod tests {
    use super::*;
    use num_complex::Complex64;
    use proptest::prelude::*;

    /// Float determinant by Gaussian elimination with partial pivoting (textbook algorithm,
    /// e.g. Golub & Van Loan, Matrix Computations, 4th ed., 2013, sec. 3.4 (memory)): an
    /// independent route to the same number.
    fn float_det(m: &mut [Complex64], n: usize) -> Complex64 {
        let mut det = Complex64::new(1.0, 0.0);
        for s in 0..n {
            let p = (s..n)
                .max_by(|a, b| m[a * n + s].norm().total_cmp(&m[b * n + s].norm()))
                .unwrap();
            if m[p * n + s].norm() == 0.0 {
                return Complex64::new(0.0, 0.0);
            }
            if p != s {
                for j in 0..n {
                    m.swap(p * n + j, s * n + j);
                }
                det = -det;
            }
            det *= m[s * n + s];
            for i in s + 1..n {
                let f = m[i * n + s] / m[s * n + s];
                for j in s..n {
                    let v = m[s * n + j];
                    m[i * n + j] -= f * v;
                }
            }
        }
        det
    }

    fn poly_value(p: &[i64], l: u32) -> Complex64 {
        p.iter()
            .enumerate()
            .map(|(k, c)| {
                Complex64::from_polar(*c as f64, std::f64::consts::TAU * k as f64 / l as f64)
            })
            .sum()
    }

    #[test]
    fn small_determinants_by_hand() {
        // [[1, 1], [1, -1]] over zeta_2: det = x - 1 (identity: x^(0+1), swap: -x^(0+0)),
        // which is -1 - 1 = -2 at x = -1 (hand computation).
        let p = leibniz_det(&[0, 0, 0, 1], 2, 2);
        assert_eq!(p, vec![-1, 1]);
        assert_eq!(to_cyclo(&p, 2).unwrap().to_string(), "-2");
        // All-ones 3x3 matrix is singular: six monomials x^0 with signs summing to 0.
        let p = leibniz_det(&[0; 9], 3, 5);
        assert!(is_zero_at_zeta(&p, 5).unwrap());
        // Empty matrix: 1.
        assert_eq!(leibniz_det(&[], 0, 3), vec![1, 0, 0]);
        // 3x3 DFT matrix over zeta_3: det = 3*sqrt(3)*i*(-1)... nonzero, |det| = 3^(3/2).
        let p = leibniz_det(&[0, 0, 0, 0, 1, 2, 0, 2, 1], 3, 3);
        assert!(!is_zero_at_zeta(&p, 3).unwrap());
        assert!((poly_value(&p, 3).norm() - 27f64.sqrt()).abs() < 1e-12);
    }

    #[test]
    fn hidden_zeros_need_the_cyclotomic_reduction() {
        // 1 + x^2 + x^4 vanishes at zeta_6 (= zeta_3 + its square + 1), though nonzero as a
        // polynomial mod x^6 - 1: divisible by Phi_6 = x^2 - x + 1 (hand computation).
        let p = vec![1, 0, 1, 0, 1, 0];
        assert!(is_zero_at_zeta(&p, 6).unwrap());
        let q = vec![1, 0, -1, 0, 0, 0]; // 1 - x^2 at zeta_6 is 1 - zeta_3 != 0
        assert!(!is_zero_at_zeta(&q, 6).unwrap());
        let r = vec![1, 0, 0, 1, 0, 0]; // 1 + x^3 = 1 + (-1) = 0 at zeta_6
        assert!(is_zero_at_zeta(&r, 6).unwrap());
    }

    proptest! {
        #[test]
        fn leibniz_matches_float_elimination(
            n in 1usize..6,
            l in 1u32..25,
            raw in proptest::collection::vec(0u32..1000, 36),
        ) {
            let exps: Vec<u32> = raw[..n * n].iter().map(|e| e % l).collect();
            let p = leibniz_det(&exps, n, l);
            let mut m: Vec<Complex64> = exps
                .iter()
                .map(|e| Complex64::from_polar(1.0, std::f64::consts::TAU * *e as f64 / l as f64))
                .collect();
            let want = float_det(&mut m, n);
            let got = poly_value(&p, l);
            prop_assert!((got - want).norm() < 1e-8, "{got} vs {want}");
            // The exact zero test agrees with the float value away from the tolerance edge.
            let zero = is_zero_at_zeta(&p, l).unwrap();
            if want.norm() > 1e-6 { prop_assert!(!zero); }
            if zero { prop_assert!(want.norm() < 1e-8); }
            prop_assert_eq!(to_cyclo(&p, l).unwrap().is_zero(), zero);
        }
    }
}
