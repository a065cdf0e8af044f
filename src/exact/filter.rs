//! Fast exact evaluation of a cycle's filter `F(b) = sum_m w_m exp(2*pi*i * (b . phi_m))`
//! (phases `phi_m` in turns, weights `w_m` cyclotomic). [`ExactFilter`] puts every phase over
//! one order `L'` (the lcm of the phase denominators and the weight orders) and every weight
//! over one integer denominator once, so that one evaluation is an integer accumulation into a
//! length-`L'` array and an exact reduction modulo the monic integer `Phi_L'`.

use std::cell::RefCell;

use num_bigint::BigInt;
use num_complex::Complex64;
use num_integer::Integer;
use num_traits::{One, ToPrimitive, Zero};

use super::cyclo::Cyclo;
use super::cyclotomic::{cyclotomic_cached, euler_phi, monic_low_terms, reduced_is_zero};
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
    /// Nonzero coefficients of `Phi_order` below the leading term.
    phi_low: Vec<(usize, i128)>,
    phi_deg: usize,
    weights_f: Vec<Complex64>,
}

/// Reusable accumulation buffer for [`ExactFilter::is_zero_with`] and
/// [`ExactFilter::eval_with`]; one per thread.
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    acc: Vec<i128>,
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
        let (weights, den) = match monomial_form(&lifted, order) {
            Some(m) => m,
            None => general_form(&lifted)?,
        };
        let phi = cyclotomic_cached(order)?;
        let (phi_deg, phi_low) = monic_low_terms(&phi);
        debug_assert_eq!(phi_deg as u32, euler_phi(order));
        Ok(ExactFilter {
            order,
            fields,
            phase_num,
            weights,
            den,
            phi_low,
            phi_deg,
            weights_f,
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
    /// Cannot overflow: construction bounded the sum of all |coefficients| by `i128::MAX`.
    fn accumulate(&self, b: &[i64], acc: &mut Vec<i128>) {
        let l = self.order as usize;
        acc.clear();
        acc.resize(l, 0);
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
        self.accumulate(b, &mut scratch.acc);
        let acc = &mut scratch.acc;
        if acc.iter().all(|c| *c == 0) {
            return Ok(true);
        }
        // Reduce modulo Phi_L' in checked i128; on overflow redo it with big integers.
        match reduced_is_zero(acc, self.phi_deg, &self.phi_low) {
            Some(zero) => Ok(zero),
            None => Ok(self.eval(b)?.is_zero()),
        }
    }

    /// Exact test `F(b) == 0` with a per-thread buffer (safe to call from rayon workers).
    pub fn is_zero(&self, b: &[i64]) -> Result<bool, ExactError> {
        SCRATCH.with(|s| match s.try_borrow_mut() {
            Ok(mut s) => self.is_zero_with(b, &mut s),
            Err(_) => self.is_zero_with(b, &mut Scratch::new()),
        })
    }

    /// Exact value `F(b)` in `Q(zeta_L')`, using the caller's buffer for the accumulation.
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
        let mut s = Complex64::new(0.0, 0.0);
        for (m, w) in self.weights_f.iter().enumerate() {
            let e = self.exponent(m, b) as f64;
            s += w * Complex64::from_polar(1.0, std::f64::consts::TAU * e / l);
        }
        Ok(s)
    }
}

/// Bound check: the sum of all |coefficients| must fit i128 so accumulation cannot overflow.
fn check_total<'a>(coeffs: impl Iterator<Item = &'a i128>) -> Result<(), ExactError> {
    let mut total: i128 = 0;
    for c in coeffs {
        total = c
            .checked_abs()
            .and_then(|a| total.checked_add(a))
            .ok_or(ExactError::Overflow {
                what: "sum of the weights' integer coefficients (i128 accumulator)",
            })?;
    }
    Ok(())
}

fn to_i128(x: &BigInt) -> Result<i128, ExactError> {
    x.to_i128().ok_or(ExactError::Overflow {
        what: "a weight coefficient over the common denominator (beyond i128)",
    })
}

/// `Some` if every weight is `r_m * zeta^s_m` with rational `r_m`.
fn monomial_form(lifted: &[Cyclo], order: u32) -> Option<(Weights, BigInt)> {
    let l = order as f64;
    let mut parts = Vec::with_capacity(lifted.len());
    for w in lifted {
        if w.is_zero() {
            parts.push((0usize, super::Q::zero()));
            continue;
        }
        let arg = w.to_complex().arg();
        let mut found = None;
        for offset in [0.0, std::f64::consts::PI] {
            let s = ((arg - offset) * l / std::f64::consts::TAU).round() as i64;
            let s = s.rem_euclid(order as i64);
            if let Some(r) = w.mul_root_of_unity(-s).as_rational() {
                found = Some((s as usize, r));
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
