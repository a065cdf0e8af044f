//! Phase matching with beam directions written as rounded decimals. A component such as `0.707`
//! stands for the interval of half a unit in its last digit; the reader snaps it to a simple
//! rational inside that interval when one is simple enough (`0.333` -> 1/3) and otherwise
//! records it here. Equal written magnitudes are taken as one unknown value (a lab writing
//! `0.707` twice means one direction cosine twice), so `sum_j b_j k_j` is a rational part plus
//! an integer combination of those unknowns. The decision "phase matched" is then exact when
//! every unknown cancels, and otherwise must hold for every value inside the intervals: when
//! the interval of the sum contains 0 the decision depends on the rounding, and
//! [`rounding_dependence`] says so (the selection refuses rather than guess). All arithmetic is
//! in big rationals: no overflow, no float margin.

use crate::signature::Signature;
use num_bigint::BigInt;
use num_rational::{BigRational, Ratio};
use num_traits::{Signed, Zero};
use serde::Serialize;

/// One beam component kept at its written, rounded value.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RoundedComponent {
    /// Index of the field.
    pub field: usize,
    /// Index of the transverse component.
    pub dim: usize,
    /// The text as written, e.g. `0.707`.
    pub text: String,
    /// The written value, exactly.
    pub value: Ratio<i64>,
    /// Half a unit in the last written digit, exactly.
    pub half: Ratio<i64>,
    /// Where it was written, e.g. `box.toml line 14`.
    pub location: String,
}

fn big(r: &Ratio<i64>) -> BigRational {
    BigRational::new(BigInt::from(*r.numer()), BigInt::from(*r.denom()))
}

/// `sum_j b_j beam_j[d]` with every beam component exact (big rationals: no overflow).
pub fn exact_sum(beams: &[Option<&[Ratio<i64>]>], b: &Signature, d: usize) -> BigRational {
    beams
        .iter()
        .zip(b.as_slice())
        .filter_map(|(v, &bj)| {
            v.map(|v| big(&v.get(d).copied().unwrap_or_default()) * BigInt::from(bj))
        })
        .fold(BigRational::zero(), |a, x| a + x)
}

/// When the phase-matching decision for `b` depends on how the rounded components in `rounded`
/// are read, a sentence saying which term, which components and where they were written;
/// `None` when the decision is the same for every value within the written precision.
pub fn rounding_dependence(
    beams: &[Option<&[Ratio<i64>]>],
    rounded: &[RoundedComponent],
    b: &Signature,
) -> Option<String> {
    let dims = beams.iter().flatten().map(|v| v.len()).max().unwrap_or(0);
    for d in 0..dims {
        // Unknowns: (|written value|, half) -> (coefficient, the components).
        let mut unknowns: Vec<(BigRational, BigRational, i64, Vec<&RoundedComponent>)> = Vec::new();
        let mut rational = BigRational::zero();
        for (j, v) in beams.iter().enumerate() {
            let (Some(v), Some(&bj)) = (v, b.0.get(j)) else {
                continue;
            };
            if bj == 0 {
                continue;
            }
            let c = v.get(d).copied().unwrap_or_default();
            match rounded.iter().find(|r| r.field == j && r.dim == d) {
                None => rational += big(&c) * BigInt::from(bj),
                Some(r) => {
                    let (mag, half) = (big(&r.value).abs(), big(&r.half));
                    let sign = if r.value < Ratio::from_integer(0) {
                        -bj
                    } else {
                        bj
                    };
                    match unknowns.iter_mut().find(|u| u.0 == mag && u.1 == half) {
                        Some(u) => {
                            u.2 += sign;
                            u.3.push(r);
                        }
                        None => unknowns.push((mag, half, sign, vec![r])),
                    }
                }
            }
        }
        unknowns.retain(|u| u.2 != 0);
        if unknowns.is_empty() {
            continue; // decided exactly by the rational part
        }
        let (mut lo, mut hi) = (rational.clone(), rational.clone());
        for (mag, half, c, _) in &unknowns {
            let c = BigRational::from_integer(BigInt::from(*c));
            let (a, z) = (&c * (mag - half), &c * (mag + half));
            if a <= z {
                lo += a;
                hi += z;
            } else {
                lo += z;
                hi += a;
            }
        }
        if lo <= BigRational::zero() && hi >= BigRational::zero() {
            let written: Vec<String> = unknowns
                .iter()
                .flat_map(|u| u.3.iter())
                .map(|r| format!("`{}` ({})", r.text, r.location))
                .collect();
            let f = |x: &BigRational| {
                let n: f64 = x.numer().to_string().parse().unwrap_or(f64::NAN);
                let q: f64 = x.denom().to_string().parse().unwrap_or(f64::NAN);
                n / q
            };
            return Some(format!(
                "whether {b} is phase matched depends on the rounding of the beam components {}: component {} of sum_j b_j k_j lies in [{:.3e}, {:.3e}] within their written precision, which holds 0",
                written.join(", "),
                d + 1,
                f(&lo),
                f(&hi)
            ));
        }
    }
    None
}
