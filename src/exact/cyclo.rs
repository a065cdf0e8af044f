//! Exact numbers in cyclotomic fields: [`Cyclo`] is an element of `Q(zeta_n)`,
//! `zeta_n = exp(2*pi*i/n)`, stored in the power basis `1, zeta_n, .., zeta_n^(phi(n)-1)`
//! (reduced modulo `Phi_n`). Coefficients are arbitrary-precision rationals, kept as one
//! `BigInt` numerator vector over one positive common denominator: no operation can overflow,
//! and equality/zero tests are exact. Binary operations on different orders work in
//! `Q(zeta_lcm)`, and fail only if that order exceeds [`super::MAX_ORDER`].

use std::fmt;

use num_bigint::BigInt;
use num_complex::Complex64;
use num_integer::Integer;
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::cyclotomic::{cyclotomic_cached, euler_phi};
use super::{check_order, lcm_order, ExactError};

/// Exact rational number used for coefficients and scalars.
pub type Q = BigRational;

/// An exact element of the cyclotomic field `Q(zeta_n)`.
///
/// Invariant: `num.len() == phi(n)`, `den > 0`, `gcd(den, num...) == 1`, `den == 1` for zero.
#[derive(Clone, Debug)]
pub struct Cyclo {
    order: u32,
    num: Vec<BigInt>,
    den: BigInt,
}

impl Cyclo {
    /// Zero in `Q(zeta_n)`. Errors if `n` is 0 or above the order limit.
    pub fn zero(n: u32) -> Result<Cyclo, ExactError> {
        let n = check_order(n as u64)?;
        Ok(Cyclo {
            order: n,
            num: vec![BigInt::zero(); euler_phi(n) as usize],
            den: BigInt::one(),
        })
    }

    /// One in `Q(zeta_n)`.
    pub fn one(n: u32) -> Result<Cyclo, ExactError> {
        let mut z = Cyclo::zero(n)?;
        z.num[0] = BigInt::one();
        Ok(z)
    }

    /// A rational number, as an element of `Q = Q(zeta_1)`.
    pub fn from_rational(q: &Q) -> Cyclo {
        Cyclo::from_int_poly_unchecked(1, vec![q.numer().clone()], q.denom().clone())
    }

    /// `re + im*i` as an element of `Q(zeta_4)` (`i = zeta_4`); `lift` it for other orders.
    pub fn from_gaussian(re: &Q, im: &Q) -> Cyclo {
        let den = re.denom().lcm(im.denom());
        let a = re.numer() * (&den / re.denom());
        let b = im.numer() * (&den / im.denom());
        Cyclo::from_int_poly_unchecked(4, vec![a, b], den)
    }

    /// `zeta_n^k` for any integer `k` (taken modulo `n`).
    pub fn root_of_unity(n: u32, k: i64) -> Result<Cyclo, ExactError> {
        let n = check_order(n as u64)?;
        let e = k.rem_euclid(n as i64) as usize;
        let mut poly = vec![BigInt::zero(); e + 1];
        poly[e] = BigInt::one();
        Cyclo::from_int_poly(n, poly, BigInt::one())
    }

    /// `(sum_k coeffs[k] * zeta_n^k)`, any number of coefficients (reduced modulo `Phi_n`).
    pub fn from_coeffs(n: u32, coeffs: &[Q]) -> Result<Cyclo, ExactError> {
        let den = coeffs
            .iter()
            .fold(BigInt::one(), |acc, c| acc.lcm(c.denom()));
        let poly = coeffs
            .iter()
            .map(|c| c.numer() * (&den / c.denom()))
            .collect();
        Cyclo::from_int_poly(n, poly, den)
    }

    /// `(sum_k poly[k] * zeta_n^k) / den` with integer `poly` of any length; `den != 0`.
    pub(crate) fn from_int_poly(
        n: u32,
        poly: Vec<BigInt>,
        den: BigInt,
    ) -> Result<Cyclo, ExactError> {
        let n = check_order(n as u64)?;
        if den.is_zero() {
            return Err(ExactError::DivisionByZero);
        }
        let num = reduce_mod(poly, n)?;
        Ok(Cyclo::normalised(n, num, den))
    }

    /// As `from_int_poly` for `poly` already of length `phi(n)` (or shorter) and valid `n`.
    fn from_int_poly_unchecked(n: u32, mut poly: Vec<BigInt>, den: BigInt) -> Cyclo {
        poly.resize(euler_phi(n) as usize, BigInt::zero());
        Cyclo::normalised(n, poly, den)
    }

    fn normalised(order: u32, mut num: Vec<BigInt>, mut den: BigInt) -> Cyclo {
        if den.is_negative() {
            den = -den;
            num.iter_mut().for_each(|c| *c = -&*c);
        }
        let g = num.iter().fold(den.clone(), |g, c| g.gcd(c));
        if num.iter().all(|c| c.is_zero()) {
            den = BigInt::one();
        } else if !g.is_one() {
            num.iter_mut().for_each(|c| *c = &*c / &g);
            den /= g;
        }
        Cyclo { order, num, den }
    }

    /// The order `n` of the field `Q(zeta_n)` this element is stored in.
    pub fn order(&self) -> u32 {
        self.order
    }

    /// Power-basis coefficients `c_k` (length `phi(n)`): the value is `sum_k c_k zeta_n^k`.
    pub fn coeffs(&self) -> Vec<Q> {
        self.num
            .iter()
            .map(|c| Q::new(c.clone(), self.den.clone()))
            .collect()
    }

    /// Integer numerators over the common denominator (see [`Cyclo::denominator`]).
    pub fn numerators(&self) -> &[BigInt] {
        &self.num
    }

    /// The positive common denominator of all coefficients.
    pub fn denominator(&self) -> &BigInt {
        &self.den
    }

    /// The same number in `Q(zeta_m)`; `m` must be a multiple of the current order.
    pub fn lift(&self, m: u32) -> Result<Cyclo, ExactError> {
        let m = check_order(m as u64)?;
        if m % self.order != 0 {
            return Err(ExactError::NotADivisor {
                from: self.order,
                to: m,
            });
        }
        if m == self.order {
            return Ok(self.clone());
        }
        let s = (m / self.order) as usize;
        let mut poly = vec![BigInt::zero(); (self.num.len().saturating_sub(1)) * s + 1];
        for (k, c) in self.num.iter().enumerate() {
            poly[k * s] = c.clone();
        }
        Cyclo::from_int_poly(m, poly, self.den.clone())
    }

    fn common(&self, other: &Cyclo) -> Result<(Cyclo, Cyclo), ExactError> {
        let m = lcm_order(self.order, other.order)?;
        Ok((self.lift(m)?, other.lift(m)?))
    }

    /// Exact sum (in `Q(zeta_lcm)` if the orders differ).
    pub fn add(&self, other: &Cyclo) -> Result<Cyclo, ExactError> {
        let (a, b) = self.common(other)?;
        let num = a
            .num
            .iter()
            .zip(&b.num)
            .map(|(x, y)| x * &b.den + y * &a.den)
            .collect();
        Ok(Cyclo::normalised(a.order, num, &a.den * &b.den))
    }

    /// Exact difference.
    pub fn sub(&self, other: &Cyclo) -> Result<Cyclo, ExactError> {
        self.add(&other.neg())
    }

    /// Exact product: schoolbook convolution on the integer numerators (cost `O(phi(n)^2)`
    /// big-integer products; a single-term factor costs only a shift) and a reduction.
    pub fn mul(&self, other: &Cyclo) -> Result<Cyclo, ExactError> {
        let (a, b) = self.common(other)?;
        if a.is_zero() || b.is_zero() {
            return Cyclo::zero(a.order);
        }
        // A single-term factor c*zeta^k: shift and scale instead of a full convolution.
        for (x, y) in [(&a, &b), (&b, &a)] {
            if let Some((k, c)) = x.single_term() {
                let q = Q::new(c.clone(), x.den.clone());
                return Ok(y.mul_root_of_unity(k as i64).scale(&q));
            }
        }
        let mut poly = vec![BigInt::zero(); a.num.len() + b.num.len() - 1];
        for (i, x) in a.num.iter().enumerate() {
            if x.is_zero() {
                continue;
            }
            for (j, y) in b.num.iter().enumerate() {
                if !y.is_zero() {
                    poly[i + j] += x * y;
                }
            }
        }
        Cyclo::from_int_poly(a.order, poly, &a.den * &b.den)
    }

    /// `Some((k, c))` if the numerator has exactly one nonzero entry `c` at index `k`.
    pub(crate) fn single_term(&self) -> Option<(usize, &BigInt)> {
        let mut it = self.num.iter().enumerate().filter(|(_, c)| !c.is_zero());
        let first = it.next()?;
        it.next().is_none().then_some(first)
    }

    /// Multiply by `zeta_n^k` (`n` the current order): an index shift and a reduction.
    pub fn mul_root_of_unity(&self, k: i64) -> Cyclo {
        let n = self.order as i64;
        let mut poly = vec![BigInt::zero(); self.order as usize];
        for (j, c) in self.num.iter().enumerate() {
            let e = (j as i64 + k.rem_euclid(n)).rem_euclid(n) as usize;
            poly[e] += c;
        }
        match reduce_mod(poly, self.order) {
            Ok(p) => Cyclo::normalised(self.order, p, self.den.clone()),
            // Unreachable: `self.order` was validated on construction.
            Err(_) => self.clone(),
        }
    }

    /// Multiply by a rational number.
    pub fn scale(&self, q: &Q) -> Cyclo {
        let num = self.num.iter().map(|c| c * q.numer()).collect();
        Cyclo::normalised(self.order, num, &self.den * q.denom())
    }

    /// Negation.
    pub fn neg(&self) -> Cyclo {
        Cyclo {
            order: self.order,
            num: self.num.iter().map(|c| -c).collect(),
            den: self.den.clone(),
        }
    }

    /// Complex conjugate (`zeta_n^k -> zeta_n^-k`).
    pub fn conj(&self) -> Cyclo {
        let n = self.order as usize;
        let mut poly = vec![BigInt::zero(); n];
        for (k, c) in self.num.iter().enumerate() {
            poly[(n - k) % n] += c;
        }
        match reduce_mod(poly, self.order) {
            Ok(p) => Cyclo::normalised(self.order, p, self.den.clone()),
            Err(_) => self.clone(),
        }
    }

    /// Exact test for zero.
    pub fn is_zero(&self) -> bool {
        self.num.iter().all(|c| c.is_zero())
    }

    /// `Some(q)` if the number is rational.
    pub fn as_rational(&self) -> Option<Q> {
        if self.num.iter().skip(1).all(|c| c.is_zero()) {
            let c0 = self.num.first().cloned().unwrap_or_default();
            Some(Q::new(c0, self.den.clone()))
        } else {
            None
        }
    }

    /// `Some((re, im))` if the number is a Gaussian rational `re + im*i`.
    pub fn gaussian_parts(&self) -> Option<(Q, Q)> {
        if self.order == 4 {
            let c = self.coeffs();
            return Some((c[0].clone(), c[1].clone()));
        }
        if let Some(q) = self.as_rational() {
            return Some((q, Q::zero()));
        }
        if let Some(parts) = self.gaussian_by_product_basis() {
            return parts;
        }
        let m = lcm_order(self.order, 4).ok()?;
        let x = self.lift(m).ok()?;
        let c = x.conj();
        let half = Q::new(BigInt::one(), BigInt::from(2));
        let re = x.add(&c).ok()?.scale(&half).as_rational()?;
        // (x - conj x) / (2i) = (x - conj x) * zeta_m^(-m/4) / 2
        let im = x
            .sub(&c)
            .ok()?
            .mul_root_of_unity(-((m / 4) as i64))
            .scale(&half)
            .as_rational()?;
        Some((re, im))
    }

    /// `gaussian_parts` in `O(n * w(n))` through [`super::tensor`] (`Q(i)` lies in
    /// `Q(zeta_n)` only when `4 | n`, which the basis knows); `None` when the numerators are
    /// too large for it, and the caller takes the slow route.
    fn gaussian_by_product_basis(&self) -> Option<Option<(Q, Q)>> {
        let acc: Vec<i128> = self
            .num
            .iter()
            .map(|c| c.to_i128())
            .collect::<Option<_>>()?;
        let mut total: i128 = 0;
        for c in &acc {
            total = total.checked_add(c.checked_abs()?)?;
        }
        if total > super::tensor::MAX_ABS_SUM {
            return None;
        }
        let basis = super::tensor::cached(self.order);
        let mut coords = Vec::new();
        basis.reduce(&acc, &mut coords);
        let den = &self.den;
        Some(basis.gaussian(&coords).map(|(re, im)| {
            (
                Q::new(BigInt::from(re), den.clone()),
                Q::new(BigInt::from(im), den.clone()),
            )
        }))
    }

    /// Floating-point value (for display and tolerance work only).
    pub fn to_complex(&self) -> Complex64 {
        let n = self.order as f64;
        let mut z = Complex64::new(0.0, 0.0);
        for (k, c) in self.num.iter().enumerate() {
            if c.is_zero() {
                continue;
            }
            let v = Q::new(c.clone(), self.den.clone())
                .to_f64()
                .unwrap_or(f64::NAN);
            // Quarter turns exactly (1, i, -1, -i): from_polar would put cos(pi/2) = 6e-17
            // into the real part of `-i`.
            z += match (
                4 * k as u64 % u64::from(self.order),
                4 * k as u64 / u64::from(self.order),
            ) {
                (0, 0) => Complex64::new(v, 0.0),
                (0, 1) => Complex64::new(0.0, v),
                (0, 2) => Complex64::new(-v, 0.0),
                (0, _) => Complex64::new(0.0, -v),
                _ => Complex64::from_polar(v, std::f64::consts::TAU * k as f64 / n),
            };
        }
        z
    }

    /// Floating-point modulus.
    pub fn abs_f64(&self) -> f64 {
        self.to_complex().norm()
    }
}

/// Reduce an integer polynomial modulo `Phi_n`; result has length `phi(n)`. Long division
/// costs one pass over the terms of `Phi_n` per coefficient above the degree; unless that is
/// surely cheaper than the binomial route of [`super::binomial_reduce`] (`O(n 2^w(n))`,
/// whatever the number of terms of `Phi_n`, 5371 for 30030), the latter is used and `Phi_n`
/// is not even built.
pub(crate) fn reduce_mod(poly: Vec<BigInt>, n: u32) -> Result<Vec<BigInt>, ExactError> {
    let d = euler_phi(n) as usize;
    let rows = poly.len().saturating_sub(d) as u64;
    if rows.saturating_mul(d as u64 + 1) > super::binomial_reduce::cost(n) {
        return Ok(super::binomial_reduce::reduce(&poly, n));
    }
    let phi = cyclotomic_cached(n)?;
    Ok(reduce_mod_long(poly, &phi))
}

/// Long division by the monic `phi`; result has length `deg(phi)`.
pub(crate) fn reduce_mod_long(mut poly: Vec<BigInt>, phi: &[i64]) -> Vec<BigInt> {
    let d = phi.len() - 1;
    let nz: Vec<(usize, i64)> = phi[..d]
        .iter()
        .enumerate()
        .filter(|(_, c)| **c != 0)
        .map(|(k, c)| (k, *c))
        .collect();
    let mut i = poly.len();
    while i > d {
        i -= 1;
        if poly[i].is_zero() {
            continue;
        }
        let c = std::mem::take(&mut poly[i]);
        for &(k, pk) in &nz {
            poly[i - d + k] -= &c * pk;
        }
    }
    poly.resize(d, BigInt::zero());
    poly
}

/// Exact equality of values (orders may differ). Returns `false` if the common order would
/// exceed the limit, which cannot happen for values built from one cycle.
impl PartialEq for Cyclo {
    fn eq(&self, other: &Cyclo) -> bool {
        if self.order == other.order {
            return self.num == other.num && self.den == other.den;
        }
        self.sub(other).map(|d| d.is_zero()).unwrap_or(false)
    }
}

impl Eq for Cyclo {}

/// `re + im i` as text: `1/2 + 1/2i`, `-i`, `0`.
pub(crate) fn fmt_gaussian(re: &Q, im: &Q) -> String {
    let im_text = |q: &Q| -> String {
        if q.is_one() {
            "i".to_string()
        } else {
            format!("{q}i")
        }
    };
    match (re.is_zero(), im.is_zero()) {
        (_, true) => format!("{re}"),
        (true, false) => {
            if *im == -Q::one() {
                "-i".to_string()
            } else {
                im_text(im)
            }
        }
        (false, false) => {
            let sign = if im.is_negative() { '-' } else { '+' };
            format!("{re} {sign} {}", im_text(&im.abs()))
        }
    }
}

/// Readable exact form. A Gaussian rational prints as `re + im i` (e.g. `1/2 + 1/2i`, `-i`,
/// `0`); any other number prints as a sum of `c*zN^k` terms in the power basis, where
/// `zN = exp(2*pi*i/N)` and `N` is the order, e.g. `1 + 2/3*z5^2 - z5^3`.
impl fmt::Display for Cyclo {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some((re, im)) = self.gaussian_parts() {
            return f.write_str(&fmt_gaussian(&re, &im));
        }
        f.write_str(&self.power_basis_text())
    }
}

impl Cyclo {
    /// The power-basis text `c0 + c1*zN + ..` without the Gaussian reading of `Display`.
    pub(crate) fn power_basis_text(&self) -> String {
        let terms: Vec<(usize, Q)> = self
            .coeffs()
            .into_iter()
            .enumerate()
            .filter(|(_, c)| !c.is_zero())
            .collect();
        fmt_terms(self.order, &terms)
    }
}

/// `sum_k c_k zN^k` as text (`1 + 2/3*z5^2 - z5^3`), terms in the given order; `0` if empty.
pub(crate) fn fmt_terms(n: u32, terms: &[(usize, Q)]) -> String {
    let mut s = String::new();
    for (k, c) in terms {
        let mag = c.abs();
        if s.is_empty() {
            if c.is_negative() {
                s.push('-');
            }
        } else {
            s.push_str(if c.is_negative() { " - " } else { " + " });
        }
        let power = match k {
            0 => String::new(),
            1 => format!("z{n}"),
            _ => format!("z{n}^{k}"),
        };
        match (k, mag.is_one()) {
            (0, _) => s.push_str(&mag.to_string()),
            (_, true) => s.push_str(&power),
            (_, false) => s.push_str(&format!("{mag}*{power}")),
        }
    }
    if s.is_empty() {
        s.push('0');
    }
    s
}

/// Serialised as `{"order": n, "coeffs": ["p/q", ...], "text": "..."}`: power-basis
/// coefficients as reduced fraction strings (an integer prints without `/1`) and the
/// [`Display`](fmt::Display) text.
impl serde::Serialize for Cyclo {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        let coeffs: Vec<String> = self.coeffs().iter().map(|c| c.to_string()).collect();
        let mut st = s.serialize_struct("Cyclo", 3)?;
        st.serialize_field("order", &self.order)?;
        st.serialize_field("coeffs", &coeffs)?;
        st.serialize_field("text", &self.to_string())?;
        st.end()
    }
}

#[cfg(test)]
mod tests;
