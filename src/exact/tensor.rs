//! Exact coordinates of `sum_e c_e zeta_L^e` in a basis of `Q(zeta_L)` that costs
//! `O(L * w(L))` integer operations to reach (`w(L)` distinct primes, at most 6 below the
//! order limit), whatever `Phi_L` looks like. Used for every exact zero test and for reading a
//! value as a Gaussian rational, so the cost of a check never depends on how many terms
//! `Phi_L` has (`Phi_30030` has 5371, and reducing modulo it costs `(L - phi(L)) * 5371`).
//!
//! The basis: write `L = q_1 .. q_k` with coprime prime powers `q_i = p_i^a_i`. By the Chinese
//! remainder theorem `zeta_L^e = prod_i zeta_{q_i}^(e u_i mod q_i)` with
//! `u_i = (L/q_i)^-1 mod q_i` (because `sum_i u_i L/q_i = 1 mod L`), so `Z[x]/(x^L - 1)` is
//! the tensor product of the `Z[x_i]/(x_i^q_i - 1)` and `Z[zeta_L]` is the tensor product of
//! the `Z[zeta_q_i]`, which are free with the power bases `zeta_q_i^j`, `j < phi(q_i)`
//! (Washington, *Introduction to Cyclotomic Fields*, 1997, prop. 1.2 and thm. 2.6 (memory)).
//! Reducing axis `i` modulo `Phi_q_i(x) = sum_{t < p} x^(t q/p)` only moves the top digit
//! block: `x^((p-1) q/p + r) = -sum_{t < p-1} x^(t q/p + r)`. After all axes the coordinates
//! with every digit below `phi(q_i)` are the coordinates in the product basis; the value is
//! zero iff all of them are. Each axis pass at most doubles the largest magnitude, so an
//! input whose absolute sum is below `2^120` cannot overflow `i128`.

use std::collections::HashMap;
use std::sync::{Arc, Mutex, OnceLock};

use super::cyclotomic::prime_factors;

/// The basis for order `l`, memoised (building one costs `O(l * w(l))` and `4 l` bytes).
pub fn cached(l: u32) -> Arc<TensorBasis> {
    static CACHE: OnceLock<Mutex<HashMap<u32, Arc<TensorBasis>>>> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    if let Some(b) = cache.lock().ok().and_then(|m| m.get(&l).cloned()) {
        return b;
    }
    let b = Arc::new(TensorBasis::new(l));
    if let Ok(mut m) = cache.lock() {
        m.insert(l, Arc::clone(&b));
    }
    b
}

/// Largest absolute sum of input coefficients the reduction accepts (`2^120`): with at most
/// six axes the coordinates stay below `2^126`.
pub const MAX_ABS_SUM: i128 = 1 << 120;

/// One prime-power axis of the product basis.
#[derive(Clone, Debug)]
struct Axis {
    /// The prime `p`.
    p: usize,
    /// `q = p^a`.
    q: usize,
    /// Distance between flat indices of neighbouring digits on this axis.
    stride: usize,
}

/// The product basis of `Q(zeta_L)` for one order `L`: the exponent-to-coordinate map and the
/// axes. Build once per order and reuse.
#[derive(Clone, Debug)]
pub struct TensorBasis {
    order: usize,
    axes: Vec<Axis>,
    /// `slot[e]`: flat coordinate of `zeta_L^e` before reduction.
    slot: Vec<u32>,
    /// Flat coordinate of `i = zeta_4` when `4 | L`.
    imag_slot: Option<usize>,
}

impl TensorBasis {
    /// The basis for order `l` (`1 <= l`, and `l` fits the limits of the exact layer).
    pub fn new(l: u32) -> TensorBasis {
        let order = l.max(1) as usize;
        let mut axes = Vec::new();
        let mut stride = 1usize;
        for p in prime_factors(order as u32) {
            let p = p as usize;
            let mut q = 1usize;
            while order % (q * p) == 0 {
                q *= p;
            }
            axes.push(Axis { p, q, stride });
            stride *= q;
        }
        let units: Vec<usize> = axes
            .iter()
            .map(|a| inverse_mod(order / a.q % a.q, a.q))
            .collect();
        let slot = (0..order)
            .map(|e| {
                axes.iter()
                    .zip(&units)
                    .map(|(a, u)| (e % a.q) * u % a.q * a.stride)
                    .sum::<usize>() as u32
            })
            .collect();
        let imag_slot = axes
            .iter()
            .find(|a| a.p == 2 && a.q >= 4)
            .map(|a| a.q / 4 * a.stride);
        TensorBasis {
            order,
            axes,
            slot,
            imag_slot,
        }
    }

    /// The order `L`.
    pub fn order(&self) -> usize {
        self.order
    }

    /// Rough count of integer operations of one [`TensorBasis::reduce`]: `L` per axis.
    pub fn cost(&self) -> usize {
        self.order * self.axes.len().max(1)
    }

    /// Move `acc` (coefficients of `x^0 .. x^(L-1)`, i.e. a polynomial modulo `x^L - 1`) into
    /// `out` in product-basis coordinates. The caller guarantees that the absolute sum of
    /// `acc` is at most [`MAX_ABS_SUM`].
    pub fn reduce(&self, acc: &[i128], out: &mut Vec<i128>) {
        out.clear();
        out.resize(self.order, 0);
        for (e, &c) in acc.iter().enumerate().take(self.order) {
            if c != 0 {
                out[self.slot[e] as usize] += c;
            }
        }
        for a in &self.axes {
            reduce_axis(out, a);
        }
    }

    /// True if reduced coordinates (from [`TensorBasis::reduce`]) are all zero.
    pub fn is_zero(coords: &[i128]) -> bool {
        coords.iter().all(|c| *c == 0)
    }

    /// `Some((re, im))` numerators when the reduced coordinates are a Gaussian integer
    /// combination `re + im*i` (rational when `4` does not divide `L`), else `None`.
    pub fn gaussian(&self, coords: &[i128]) -> Option<(i128, i128)> {
        let im_slot = self.imag_slot;
        let others_zero = coords
            .iter()
            .enumerate()
            .skip(1)
            .all(|(k, c)| *c == 0 || Some(k) == im_slot);
        others_zero.then(|| (coords[0], im_slot.map_or(0, |k| coords[k])))
    }
}

/// Reduce one axis modulo `Phi_q`: fold the top digit block into the others.
fn reduce_axis(c: &mut [i128], a: &Axis) {
    let s = a.q / a.p;
    let top = (a.p - 1) * s;
    let outer = a.stride * a.q;
    for base in (0..c.len()).step_by(outer) {
        for r in 0..s {
            for low in 0..a.stride {
                let hi = base + (top + r) * a.stride + low;
                let v = c[hi];
                if v == 0 {
                    continue;
                }
                c[hi] = 0;
                for t in 0..a.p - 1 {
                    c[base + (t * s + r) * a.stride + low] -= v;
                }
            }
        }
    }
}

/// `x^-1 mod m` for `gcd(x, m) = 1` (`0` when `m == 1`).
fn inverse_mod(x: usize, m: usize) -> usize {
    if m == 1 {
        return 0;
    }
    let (mut a, mut b) = (x as i64, m as i64);
    let (mut u, mut v) = (1i64, 0i64);
    while b != 0 {
        let t = a / b;
        (a, b) = (b, a - t * b);
        (u, v) = (v, u - t * v);
    }
    u.rem_euclid(m as i64) as usize
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::Cyclo;
    use num_bigint::BigInt;
    use num_complex::Complex64;
    use num_traits::ToPrimitive;
    use proptest::prelude::*;

    fn float_value(acc: &[i128]) -> Complex64 {
        let l = acc.len() as f64;
        acc.iter()
            .enumerate()
            .map(|(e, c)| Complex64::from_polar(*c as f64, std::f64::consts::TAU * e as f64 / l))
            .sum()
    }

    fn reduced(l: u32, acc: &[i128]) -> (TensorBasis, Vec<i128>) {
        let b = TensorBasis::new(l);
        let mut out = Vec::new();
        b.reduce(acc, &mut out);
        (b, out)
    }

    #[test]
    fn sums_over_a_prime_divisor_vanish() {
        // sum_{t<p} zeta_L^(t L/p + r) = zeta_L^r * (sum of the p-th roots of unity) = 0:
        // the relations that span the kernel of Z[x]/(x^L - 1) -> Z[zeta_L] (de Bruijn,
        // On the factorization of cyclic groups, 1953 (memory)).
        for l in [6u32, 12, 30, 60, 210, 360, 2310, 30030] {
            for p in prime_factors(l) {
                let step = (l / p) as usize;
                let mut acc = vec![0i128; l as usize];
                for t in 0..p as usize {
                    acc[(t * step + 1) % l as usize] += 3;
                }
                assert!(TensorBasis::is_zero(&reduced(l, &acc).1), "L={l} p={p}");
                acc[0] += 1;
                assert!(!TensorBasis::is_zero(&reduced(l, &acc).1), "L={l} p={p}");
            }
        }
    }

    #[test]
    fn roots_of_unity_are_not_zero_and_i_is_found() {
        for l in [1u32, 2, 4, 8, 12, 60, 100, 3600, 60060] {
            for e in [0usize, 1, l as usize / 2, l as usize - 1] {
                let mut acc = vec![0i128; l as usize];
                acc[e % l as usize] = 5;
                let (b, c) = reduced(l, &acc);
                assert!(!TensorBasis::is_zero(&c));
                let z = float_value(&acc);
                match b.gaussian(&c) {
                    Some((re, im)) => {
                        assert!((re as f64 - z.re).abs() < 1e-9, "L={l} e={e}");
                        assert!((im as f64 - z.im).abs() < 1e-9, "L={l} e={e}");
                    }
                    // Not Gaussian: the float value must leave the axes.
                    None => assert!(z.re.fract().abs() > 1e-9 || z.im.fract().abs() > 1e-9),
                }
            }
        }
    }

    proptest! {
        /// Two routes, one answer: the product-basis zero test and Gaussian reading against
        /// the power-basis reduction modulo `Phi_L` in [`crate::exact::Cyclo`].
        #[test]
        fn agrees_with_power_basis_reduction(
            l in prop::sample::select(vec![3u32, 4, 6, 10, 12, 20, 30, 36, 105, 210, 360, 420]),
            terms in prop::collection::vec((0usize..1000, -3i128..=3), 1..12),
            cancel in any::<bool>(),
        ) {
            let mut acc = vec![0i128; l as usize];
            for (e, c) in terms {
                acc[e % l as usize] += c;
            }
            if cancel {
                // Add a vanishing sum so zeros are common.
                let p = prime_factors(l)[0] as usize;
                let step = l as usize / p;
                for t in 0..p {
                    acc[(t * step + 2) % l as usize] += 1;
                }
            }
            let (b, c) = reduced(l, &acc);
            let poly = acc.iter().map(|c| BigInt::from(*c)).collect();
            let exact = Cyclo::from_int_poly(l, poly, BigInt::from(1)).unwrap();
            prop_assert_eq!(TensorBasis::is_zero(&c), exact.is_zero());
            let want = exact.gaussian_parts().map(|(re, im)| {
                (re.to_integer().to_i128().unwrap(), im.to_integer().to_i128().unwrap())
            });
            prop_assert_eq!(b.gaussian(&c), want);
        }
    }
}
