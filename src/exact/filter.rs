//! Fast exact evaluation of a cycle's filter `F(b) = sum_m w_m exp(2*pi*i * (b . phi_m))`
//! (phases `phi_m` in turns, weights `w_m` cyclotomic). [`ExactFilter`] puts every phase over
//! one order `L'` (the lcm of the phase denominators and the weight orders) and every weight
//! over one integer denominator once, so that one evaluation is an integer accumulation into a
//! length-`L'` array (a polynomial modulo `x^L' - 1`) and one pass into the product basis of
//! [`super::tensor`]: `O(N + L' * w(L'))` integer operations per value, never a reduction
//! modulo `Phi_L'` (whose cost grows with its number of terms, 5371 for `L' = 30030`).
//! Values are written out exactly only as far as that stays cheap: a Gaussian rational always,
//! the power basis up to [`POWER_BASIS_MAX_DEGREE`] terms, otherwise the collapsed sum of
//! roots of unity the steps contribute.

use std::cell::RefCell;

use num_bigint::BigInt;
use num_complex::Complex64;
use num_integer::Integer;
use num_traits::{One, ToPrimitive, Zero};

use super::cyclo::Cyclo;
use super::cyclotomic::euler_phi;
use super::group_table::GroupTable;
use super::tensor::{TensorBasis, MAX_ABS_SUM};
use super::turns::{common_denominator, reduce_turn, Turns};
use super::{check_order, lcm_order, ExactError};

/// How the weights are stored, as integers over the common denominator.
#[derive(Clone, Debug)]
enum Weights {
    /// Every `w_m = mult_m / den * zeta^shift_m`: one increment per step (the usual
    /// `w = exp(-i t.phi) / N` case).
    Monomial(Vec<(usize, i128)>),
    /// `w_m = (sum_k a_{m,k} zeta^k) / den`, nonzero terms only.
    General(Vec<Vec<(usize, i128)>>),
}

/// A cycle's filter prepared for many exact evaluations. `Sync`: share it between threads and
/// give each thread its own [`Scratch`] (or use [`ExactFilter::is_zero`], which keeps one
/// buffer per thread).
#[derive(Clone, Debug)]
pub struct ExactFilter {
    order: u32,
    fields: usize,
    /// Phase numerators over `order`, row-major `steps x fields`, in `[0, order)`.
    phase_num: Vec<i64>,
    weights: Weights,
    /// Common denominator of the weights' power-basis coefficients.
    den: BigInt,
    /// The product basis of `Q(zeta_order)` for zero tests and Gaussian readings.
    basis: std::sync::Arc<TensorBasis>,
    weights_f: Vec<Complex64>,
    /// The proven group structure of the table, when it has one, and the common weight
    /// multiplier: every value is then decided without summing over the steps.
    group: Option<(GroupTable, i128)>,
}

/// A filter value as a report shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct ShownValue {
    /// Exact text: `re + im i` for a Gaussian rational (`1/2 + 1/2i`, `-i`, `0`); otherwise
    /// the power basis (`c*zL^k`, `zL = exp(2 pi i/L)`) when `phi(L')` is at most
    /// [`POWER_BASIS_MAX_DEGREE`], else the collapsed sum of the roots of unity the steps
    /// contribute, in the same notation (exact, not canonical). `None` when that text would
    /// have more than [`MAX_WRITTEN_TERMS`] terms (the value is still exact; show a float).
    pub text: Option<String>,
    /// The exact real and imaginary parts when the value is a Gaussian rational.
    pub gaussian: Option<(super::Q, super::Q)>,
}

/// Most terms an exact non-Gaussian value is written with (longer text is not read).
pub const MAX_WRITTEN_TERMS: usize = 24;

/// Largest `phi(L')` for which a non-Gaussian value is written in the canonical power basis
/// (at most this many terms, and a cheap reduction); above it the value is written as the
/// collapsed sum of roots of unity, which is exact but not canonical.
pub const POWER_BASIS_MAX_DEGREE: u32 = 64;

/// Reusable accumulation buffer for [`ExactFilter::is_zero_with`] and
/// [`ExactFilter::eval_with`]; one per thread.
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    acc: Vec<i128>,
    coords: Vec<i128>,
}

impl Scratch {
    /// An empty buffer; it grows to the filter's order on first use.
    pub fn new() -> Scratch {
        Scratch::default()
    }
}

thread_local! {
    static SCRATCH: RefCell<Scratch> = RefCell::new(Scratch::new());
}

impl ExactFilter {
    /// Prepare the filter of a cycle: `phases[m][j]` is the phase of field `j` at step `m`,
    /// `weights[m]` the weight of step `m`. All rows must have the same length and there must
    /// be one weight per step. Fails if the common order exceeds the limit or a weight's
    /// coefficients do not fit the `i128` accumulator.
    pub fn new(phases: &[Vec<Turns>], weights: &[Cyclo]) -> Result<ExactFilter, ExactError> {
        if phases.len() != weights.len() {
            return Err(ExactError::LengthMismatch {
                what: "weights (one per step)",
                expected: phases.len(),
                found: weights.len(),
            });
        }
        let fields = phases.first().map_or(0, |r| r.len());
        for row in phases {
            if row.len() != fields {
                return Err(ExactError::LengthMismatch {
                    what: "phases in a step (one per field)",
                    expected: fields,
                    found: row.len(),
                });
            }
        }
        let l = check_order(common_denominator(phases.iter().flatten())?)?;
        let mut order = l;
        for w in weights {
            order = lcm_order(order, w.order())?;
        }
        let mut phase_num = Vec::with_capacity(phases.len() * fields);
        for p in phases.iter().flatten() {
            let r = reduce_turn(*p);
            phase_num.push(r.numer() * (order as i64 / r.denom()));
        }
        let lifted: Vec<Cyclo> = weights
            .iter()
            .map(|w| w.lift(order))
            .collect::<Result<_, _>>()?;
        let weights_f = lifted.iter().map(Cyclo::to_complex).collect();
        let basis = super::tensor::cached(order);
        let (weights, den) = match monomial_form(&lifted, order, &basis) {
            Some(m) => m,
            None => general_form(&lifted)?,
        };
        let group = group_structure(order, fields, &phase_num, &weights);
        Ok(ExactFilter {
            order,
            fields,
            phase_num,
            weights,
            den,
            basis,
            weights_f,
            group,
        })
    }

    /// The common order `L'`: every value `F(b)` lies in `Q(zeta_L')`.
    pub fn order(&self) -> u32 {
        self.order
    }

    /// Number of steps `N`.
    pub fn steps(&self) -> usize {
        self.weights_f.len()
    }

    /// Number of fields (length of a signature).
    pub fn fields(&self) -> usize {
        self.fields
    }

    /// True if every weight is a rational times a root of unity (the counting fast path).
    pub fn is_monomial(&self) -> bool {
        matches!(self.weights, Weights::Monomial(_))
    }

    fn check_len(&self, b: &[i64]) -> Result<(), ExactError> {
        if b.len() != self.fields {
            return Err(ExactError::LengthMismatch {
                what: "phase signature (one entry per field)",
                expected: self.fields,
                found: b.len(),
            });
        }
        Ok(())
    }

    /// Exponent of `zeta_L'` contributed by the phases at step `m`.
    fn exponent(&self, m: usize, b: &[i64]) -> usize {
        let l = self.order as i64;
        let row = &self.phase_num[m * self.fields..(m + 1) * self.fields];
        let mut e = 0i64;
        for (bj, pj) in b.iter().zip(row) {
            // bj mod l < 1e5 and pj < 1e5: the product fits i64 comfortably.
            e = (e + bj.rem_euclid(l) * pj) % l;
        }
        e as usize
    }

    /// Fill `acc[0..L']` with the numerators of `F(b) * den` as a polynomial mod `x^L' - 1`.
    /// Cannot overflow: construction bounded the sum of all |coefficients| by
    /// [`MAX_ABS_SUM`], which also keeps the product-basis pass inside `i128`.
    fn accumulate(&self, b: &[i64], acc: &mut Vec<i128>) {
        let l = self.order as usize;
        acc.clear();
        acc.resize(l, 0);
        if let Some((g, mult)) = &self.group {
            if g.passes(b) {
                acc[g.offset] = mult * self.steps() as i128;
            }
            return;
        }
        match &self.weights {
            Weights::Monomial(w) => {
                for (m, &(shift, mult)) in w.iter().enumerate() {
                    let e = (self.exponent(m, b) + shift) % l;
                    acc[e] += mult;
                }
            }
            Weights::General(w) => {
                for (m, terms) in w.iter().enumerate() {
                    let e = self.exponent(m, b);
                    for &(k, a) in terms {
                        acc[(e + k) % l] += a;
                    }
                }
            }
        }
    }

    /// Exact test `F(b) == 0`, using the caller's buffer (no allocation once it has grown).
    pub fn is_zero_with(&self, b: &[i64], scratch: &mut Scratch) -> Result<bool, ExactError> {
        self.check_len(b)?;
        if let Some((g, _)) = &self.group {
            return Ok(!g.passes(b));
        }
        self.accumulate(b, &mut scratch.acc);
        if scratch.acc.iter().all(|c| *c == 0) {
            return Ok(true);
        }
        self.basis.reduce(&scratch.acc, &mut scratch.coords);
        Ok(TensorBasis::is_zero(&scratch.coords))
    }

    /// Exact test `F(b) == 0` with a per-thread buffer (safe to call from rayon workers).
    pub fn is_zero(&self, b: &[i64]) -> Result<bool, ExactError> {
        SCRATCH.with(|s| match s.try_borrow_mut() {
            Ok(mut s) => self.is_zero_with(b, &mut s),
            Err(_) => self.is_zero_with(b, &mut Scratch::new()),
        })
    }

    /// Exact test `F(b) == 1` (the kept-term condition), in the product basis.
    pub fn is_one(&self, b: &[i64]) -> Result<bool, ExactError> {
        // Over the common denominator `F(b) = 1` is `acc = den`; a `den` beyond `i128` cannot
        // be reached by an accumulation bounded by `MAX_ABS_SUM`.
        let Some(den) = self.den.to_i128() else {
            return Ok(false);
        };
        SCRATCH.with(|s| {
            let mut fresh = Scratch::new();
            let mut guard = s.try_borrow_mut();
            let scratch = match guard.as_mut() {
                Ok(s) => &mut **s,
                Err(_) => &mut fresh,
            };
            self.check_len(b)?;
            self.accumulate(b, &mut scratch.acc);
            self.basis.reduce(&scratch.acc, &mut scratch.coords);
            Ok(self.basis.gaussian(&scratch.coords) == Some((den, 0)))
        })
    }

    /// `F(b)` exactly, as far as that stays cheap: cost `O(N + L' * w(L'))` plus the length
    /// of the text. See [`ShownValue`].
    pub fn shown_value(&self, b: &[i64]) -> Result<ShownValue, ExactError> {
        let mut scratch = Scratch::new();
        self.check_len(b)?;
        self.accumulate(b, &mut scratch.acc);
        self.basis.reduce(&scratch.acc, &mut scratch.coords);
        if let Some((re, im)) = self.basis.gaussian(&scratch.coords) {
            let re = super::Q::new(BigInt::from(re), self.den.clone());
            let im = super::Q::new(BigInt::from(im), self.den.clone());
            return Ok(ShownValue {
                text: Some(super::cyclo::fmt_gaussian(&re, &im)),
                gaussian: Some((re, im)),
            });
        }
        let text = if euler_phi(self.order) <= POWER_BASIS_MAX_DEGREE {
            let c = self.eval_with(b, &mut scratch)?;
            let terms = c.numerators().iter().filter(|c| !c.is_zero()).count();
            (terms <= MAX_WRITTEN_TERMS).then(|| c.power_basis_text())
        } else {
            // For even L', zeta^(e + L'/2) = -zeta^e: fold the upper half (still exact).
            let acc = &mut scratch.acc;
            let l = acc.len();
            if l % 2 == 0 {
                for e in l / 2..l {
                    acc[e - l / 2] -= std::mem::take(&mut acc[e]);
                }
            }
            let terms: Vec<(usize, super::Q)> = acc
                .iter()
                .enumerate()
                .filter(|(_, c)| **c != 0)
                .map(|(k, c)| (k, super::Q::new(BigInt::from(*c), self.den.clone())))
                .collect();
            (terms.len() <= MAX_WRITTEN_TERMS).then(|| super::cyclo::fmt_terms(self.order, &terms))
        };
        Ok(ShownValue {
            text,
            gaussian: None,
        })
    }

    /// Exact value `F(b)` in `Q(zeta_L')` in the power basis, using the caller's buffer for
    /// the accumulation. Costs a reduction modulo `Phi_L'` (up to `(L' - phi(L'))` times the
    /// number of terms of `Phi_L'` big-integer operations): use [`ExactFilter::is_zero`],
    /// [`ExactFilter::is_one`] or [`ExactFilter::exact_text`] where they suffice.
    pub fn eval_with(&self, b: &[i64], scratch: &mut Scratch) -> Result<Cyclo, ExactError> {
        self.check_len(b)?;
        self.accumulate(b, &mut scratch.acc);
        let poly = scratch.acc.iter().map(|c| BigInt::from(*c)).collect();
        Cyclo::from_int_poly(self.order, poly, self.den.clone())
    }

    /// Exact value `F(b)` in `Q(zeta_L')`.
    pub fn eval(&self, b: &[i64]) -> Result<Cyclo, ExactError> {
        self.eval_with(b, &mut Scratch::new())
    }

    /// Floating-point `F(b)` (display and tolerance work only; not a leak decision).
    pub fn approx(&self, b: &[i64]) -> Result<Complex64, ExactError> {
        self.check_len(b)?;
        let l = self.order as f64;
        if let Some((g, mult)) = &self.group {
            if !g.passes(b) {
                return Ok(Complex64::new(0.0, 0.0));
            }
            let modulus =
                (*mult as f64 / self.den.to_f64().unwrap_or(f64::NAN)) * self.steps() as f64;
            return Ok(Complex64::from_polar(
                modulus,
                std::f64::consts::TAU * g.offset as f64 / l,
            ));
        }
        let mut s = Complex64::new(0.0, 0.0);
        for (m, w) in self.weights_f.iter().enumerate() {
            let e = self.exponent(m, b) as f64;
            s += w * Complex64::from_polar(1.0, std::f64::consts::TAU * e / l);
        }
        Ok(s)
    }
}

/// Bound check: the sum of all |coefficients| must stay below [`MAX_ABS_SUM`] so neither the
/// accumulation nor the product-basis pass can overflow `i128`.
fn check_total<'a>(coeffs: impl Iterator<Item = &'a i128>) -> Result<(), ExactError> {
    let mut total: i128 = 0;
    for c in coeffs {
        total = c
            .checked_abs()
            .and_then(|a| total.checked_add(a))
            .filter(|t| *t <= MAX_ABS_SUM)
            .ok_or(ExactError::Overflow {
                what: "sum of the weights' integer coefficients (above 2^120)",
            })?;
    }
    Ok(())
}

fn to_i128(x: &BigInt) -> Result<i128, ExactError> {
    x.to_i128().ok_or(ExactError::Overflow {
        what: "a weight coefficient over the common denominator (beyond i128)",
    })
}

/// `Some` if every weight is `r_m * zeta^s_m` with rational `r_m`. A weight with one
/// power-basis term is read directly; others are tried at the root of unity nearest their
/// argument (and its opposite), tested exactly in the product basis (`O(L' * w(L'))` each).
fn monomial_form(lifted: &[Cyclo], order: u32, basis: &TensorBasis) -> Option<(Weights, BigInt)> {
    let l = order as f64;
    let mut parts = Vec::with_capacity(lifted.len());
    let (mut acc, mut coords) = (Vec::new(), Vec::new());
    for w in lifted {
        if w.is_zero() {
            parts.push((0usize, super::Q::zero()));
            continue;
        }
        if let Some((k, c)) = w.single_term() {
            parts.push((k, super::Q::new(c.clone(), w.denominator().clone())));
            continue;
        }
        let arg = w.to_complex().arg();
        let mut found = None;
        for offset in [0.0, std::f64::consts::PI] {
            let s = ((arg - offset) * l / std::f64::consts::TAU).round() as i64;
            let s = s.rem_euclid(order as i64) as usize;
            // w * zeta^-s as a polynomial modulo x^L - 1, then rational iff only the
            // coordinate of 1 is left.
            acc.clear();
            acc.resize(order as usize, 0i128);
            for (k, c) in w.numerators().iter().enumerate() {
                acc[(k + order as usize - s) % order as usize] = c.to_i128()?;
            }
            check_total(acc.iter()).ok()?;
            basis.reduce(&acc, &mut coords);
            if coords.iter().skip(1).all(|c| *c == 0) {
                let r = super::Q::new(BigInt::from(coords[0]), w.denominator().clone());
                found = Some((s, r));
                break;
            }
        }
        parts.push(found?);
    }
    let den = parts
        .iter()
        .fold(BigInt::one(), |acc, (_, r)| acc.lcm(r.denom()));
    let mut out = Vec::with_capacity(parts.len());
    for (s, r) in parts {
        let mult = r.numer() * (&den / r.denom());
        out.push((s, mult.to_i128()?));
    }
    check_total(out.iter().map(|(_, c)| c)).ok()?;
    Some((Weights::Monomial(out), den))
}

/// The table's group structure ([`GroupTable`]) when its weights are one positive rational
/// times roots of unity: proven on the table, never assumed.
fn group_structure(
    order: u32,
    fields: usize,
    phase_num: &[i64],
    weights: &Weights,
) -> Option<(GroupTable, i128)> {
    let Weights::Monomial(w) = weights else {
        return None;
    };
    // One modulus c for every weight; a negative multiplier is zeta^(L/2) (even L only).
    let mult = w.first()?.1.abs();
    let half = (order % 2 == 0).then_some(order as usize / 2);
    if mult == 0 || fields == 0 || w.iter().any(|&(_, m)| m.abs() != mult) {
        return None;
    }
    let shifts: Vec<usize> = w
        .iter()
        .map(|&(s, m)| {
            if m > 0 {
                Some(s)
            } else {
                half.map(|h| (s + h) % order as usize)
            }
        })
        .collect::<Option<_>>()?;
    let rows: Vec<&[i64]> = phase_num.chunks(fields).collect();
    GroupTable::detect(order, &rows, &shifts).map(|g| (g, mult))
}

fn general_form(lifted: &[Cyclo]) -> Result<(Weights, BigInt), ExactError> {
    let den = lifted
        .iter()
        .fold(BigInt::one(), |acc, w| acc.lcm(w.denominator()));
    let mut out = Vec::with_capacity(lifted.len());
    for w in lifted {
        let f = &den / w.denominator();
        let mut terms = Vec::new();
        for (k, c) in w.numerators().iter().enumerate() {
            if !c.is_zero() {
                terms.push((k, to_i128(&(c * &f))?));
            }
        }
        out.push(terms);
    }
    check_total(out.iter().flatten().map(|(_, c)| c))?;
    Ok((Weights::General(out), den))
}

#[cfg(test)]
mod tests;
