//! Phase signatures: the integer vector `b` with which a term depends on the field phases,
//! `exp(i * sum_j b_j * phi_j)`, and the phase-matching direction it implies.

use serde::{Deserialize, Serialize};
use std::fmt;

/// The phase signature of a term: one integer per field, in the experiment's field order
/// (pulses in time order, then the local oscillator or receiver if there is one).
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(transparent)]
pub struct Signature(pub Vec<i64>);

impl Signature {
    /// The all-zero signature over `n` fields (the LO alone, or a pure population background).
    pub fn zero(n: usize) -> Self {
        Signature(vec![0; n])
    }

    /// The unit vector `e_j` over `n` fields.
    pub fn unit(n: usize, j: usize) -> Self {
        let mut v = vec![0; n];
        v[j] = 1;
        Signature(v)
    }

    /// Number of fields.
    pub fn len(&self) -> usize {
        self.0.len()
    }

    /// True when the signature has no fields.
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// The components.
    pub fn as_slice(&self) -> &[i64] {
        &self.0
    }

    /// `sum_j b_j`; zero for every detected term once the LO or receiver is included.
    pub fn sum(&self) -> i64 {
        self.0.iter().sum()
    }

    /// `sum_j |b_j|`: the number of field interactions the term needs at the least.
    pub fn weight(&self) -> i64 {
        self.0.iter().map(|b| b.abs()).sum()
    }

    /// The conjugate term's signature, `-b`.
    pub fn conjugate(&self) -> Self {
        Signature(self.0.iter().map(|b| -b).collect())
    }

    /// Component-wise difference `self - other`.
    pub fn minus(&self, other: &Signature) -> Signature {
        Signature(self.0.iter().zip(&other.0).map(|(a, b)| a - b).collect())
    }

    /// True when every component is zero.
    pub fn is_zero(&self) -> bool {
        self.0.iter().all(|&b| b == 0)
    }

    /// The wavevector expression `-k1+k2+k3` over the given field labels, skipping zeros.
    /// Returns `"0"` for the zero vector.
    pub fn direction(&self, labels: &[String]) -> String {
        let mut out = String::new();
        for (b, label) in self.0.iter().zip(labels) {
            if *b == 0 {
                continue;
            }
            let sign = if *b > 0 { "+" } else { "-" };
            if out.is_empty() && *b > 0 {
                // no leading plus
            } else {
                out.push_str(sign);
            }
            if b.abs() != 1 {
                out.push_str(&b.abs().to_string());
            }
            out.push_str(label);
        }
        if out.is_empty() {
            "0".to_string()
        } else {
            out
        }
    }
}

impl fmt::Display for Signature {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "(")?;
        for (i, b) in self.0.iter().enumerate() {
            if i > 0 {
                write!(f, ",")?;
            }
            if *b > 0 {
                write!(f, "+{b}")?;
            } else {
                write!(f, "{b}")?;
            }
        }
        write!(f, ")")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_and_direction_follow_the_sign_convention() {
        let r = Signature(vec![-1, 1, 1, -1]);
        assert_eq!(r.to_string(), "(-1,+1,+1,-1)");
        let labels: Vec<String> = ["k1", "k2", "k3", "kLO"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        assert_eq!(r.direction(&labels[..3]), "-k1+k2+k3");
        assert_eq!(Signature(vec![2, 0, -1]).direction(&labels[..3]), "2k1-k3");
        assert_eq!(Signature::zero(3).direction(&labels), "0");
        assert_eq!(r.conjugate().conjugate(), r);
        assert_eq!(r.sum(), 0);
        assert_eq!(r.weight(), 4);
    }
}
