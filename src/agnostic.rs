//! The agnostic rejection set (domain.md section 4): every signature a cycle must reject
//! through order K whatever the level scheme, i.e. all integer `b` with `sum b = 0` and
//! `sum |b| <= K (+1 with a reference field)`.

use crate::error::ModelError;
use crate::limits::{MAX_AGNOSTIC_BYTES, MAX_AGNOSTIC_TERMS};
use crate::model::Experiment;
use crate::signature::Signature;

/// Number of integer vectors in `Z^n` with `sum |b| <= r` and `sum b = 0`, counted exactly by
/// dynamic programming over the components (used to refuse oversize requests before work).
pub fn agnostic_count(n: usize, r: u32) -> u64 {
    let r = r as i64;
    // dp[(used, sum)] over components so far; sum in [-r, r], used in [0, r].
    let width = (2 * r + 1) as usize;
    let mut dp = vec![vec![0u64; width]; (r + 1) as usize];
    dp[0][r as usize] = 1;
    for _ in 0..n {
        let mut next = vec![vec![0u64; width]; (r + 1) as usize];
        for used in 0..=r {
            for s in -r..=r {
                let c = dp[used as usize][(s + r) as usize];
                if c == 0 {
                    continue;
                }
                for b in -(r - used)..=(r - used) {
                    let (u2, s2) = (used + b.abs(), s + b);
                    if s2.abs() <= r {
                        let cell = &mut next[u2 as usize][(s2 + r) as usize];
                        *cell = cell.saturating_add(c);
                    }
                }
            }
        }
        dp = next;
    }
    (0..=r)
        .map(|u| dp[u as usize][r as usize])
        .fold(0u64, u64::saturating_add)
}

/// Every `b` in `Z^n` with `sum b = 0` and `sum |b| <= radius`, in order of increasing
/// `sum |b|`, zero vector first.
pub fn sum_zero_ball(n: usize, radius: u32) -> Vec<Signature> {
    let mut out = Vec::new();
    for_each_in_ball(n, radius, |b| out.push(Signature(b.to_vec())));
    out
}

/// Call `visit` for every `b` of [`sum_zero_ball`], in the same order, without storing them.
fn for_each_in_ball(n: usize, radius: u32, mut visit: impl FnMut(&[i64])) {
    if n == 0 {
        visit(&[]);
        return;
    }
    let mut cur = vec![0i64; n];
    for w in (0..=i64::from(radius)).step_by(2) {
        fill(&mut cur, 0, w, 0, &mut visit);
    }
}

fn fill(cur: &mut [i64], j: usize, left: i64, sum: i64, visit: &mut impl FnMut(&[i64])) {
    let n = cur.len();
    if j + 1 == n {
        let b = -sum;
        if b.abs() == left {
            cur[j] = b;
            visit(cur);
            cur[j] = 0;
        }
        return;
    }
    for b in -left..=left {
        cur[j] = b;
        fill(cur, j + 1, left - b.abs(), sum + b, visit);
    }
    cur[j] = 0;
}

/// Estimated memory of `count` signatures over `n` fields: the vector header, its entries
/// and the allocator's bookkeeping per signature.
fn set_bytes(count: u64, n: usize) -> u64 {
    let per_term = std::mem::size_of::<Signature>() + 8 * n + 16;
    count.saturating_mul(per_term as u64)
}

/// Refuse an agnostic set over `n` fields of `sum |b| <= radius` (order `k`) whose exact size
/// or estimated memory is above the limits, before anything is built.
pub fn check_agnostic_size(n: usize, k: u32, radius: u32) -> Result<u64, ModelError> {
    let count = agnostic_count(n, radius);
    let hint = "lower the order, hold fewer fields (merge collinear pulses), or use the enumerated set from the level scheme (--from-pathways)";
    if count > MAX_AGNOSTIC_TERMS {
        return Err(ModelError::TooLarge {
            what: format!("the agnostic set over {n} fields through order {k}"),
            value: count,
            limit: MAX_AGNOSTIC_TERMS,
            hint: hint.into(),
        });
    }
    let bytes = set_bytes(count, n);
    if bytes > MAX_AGNOSTIC_BYTES {
        return Err(ModelError::TooLarge {
            what: format!(
                "the memory (bytes) of the agnostic set over {n} fields through order {k} ({count} terms)"
            ),
            value: bytes,
            limit: MAX_AGNOSTIC_BYTES,
            hint: hint.into(),
        });
    }
    Ok(count)
}

/// The agnostic set of `exp` through order `k`, less the `wanted` signatures. With
/// `phase_matched_only`, coherent terms (`sum |b| > 2`) that the beam geometry does not let
/// through are dropped; pair terms (scatter, linear) are always kept since scatter ignores
/// phase matching. The size is checked ([`check_agnostic_size`]) before anything is built,
/// and only the terms kept are stored.
pub fn agnostic_set(
    exp: &Experiment,
    k: u32,
    wanted: &[Signature],
    phase_matched_only: bool,
) -> Result<Vec<Signature>, ModelError> {
    let radius = k + u32::from(exp.has_reference());
    let n = exp.fields.len();
    let count = check_agnostic_size(n, k, radius)?;
    let mut out = Vec::with_capacity(count as usize);
    let mut refused = None;
    for_each_in_ball(n, radius, |b| {
        if refused.is_some() {
            return;
        }
        let b = Signature(b.to_vec());
        // The selection's rule ([`Experiment::passes_geometry`]).
        let matched = if phase_matched_only {
            match exp.passes_geometry(&b) {
                Ok(m) => m,
                Err(e) => {
                    refused = Some(e);
                    false
                }
            }
        } else {
            true
        };
        if matched && !wanted.contains(&b) {
            out.push(b);
        }
    });
    match refused {
        Some(e) => Err(e),
        None => Ok(out),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ball_matches_the_counting_formula() {
        for n in 1..=5 {
            for r in 0..=6 {
                let v = sum_zero_ball(n, r);
                assert_eq!(v.len() as u64, agnostic_count(n, r), "n={n} r={r}");
                assert!(v.iter().all(|b| b.sum() == 0 && b.weight() <= r as i64));
                let mut sorted = v.clone();
                sorted.sort();
                sorted.dedup();
                assert_eq!(sorted.len(), v.len());
            }
        }
        // Hand count: in Z^2, sum 0 and |b1|+|b2| <= 2 gives 0, (1,-1), (-1,1).
        assert_eq!(agnostic_count(2, 2), 3);
    }
}
