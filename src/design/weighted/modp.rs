//! Exact ranks of root-of-unity matrices through prime fields. For a prime `p = 1 (mod L)`
//! the field `F_p` holds a primitive `L`-th root of unity `w`, and `zeta_L -> w` is a ring
//! map from `Z[zeta_L]` onto `F_p` (its kernel is a prime ideal `P` above `p`). A matrix
//! whose entries are powers of `zeta_L` (or 1) maps to a matrix over `F_p`, and every minor
//! maps to the same minor mod `P`, so `rank_P <= rank` over `Q(zeta_L)`.
//!
//! Equality for at least one of several primes is forced by a size argument: a nonzero
//! `r x r` minor `m` of a matrix with unit-modulus entries is an algebraic integer whose
//! Galois conjugates are minors of the same kind, each of modulus at most `r^(r/2)`
//! (Hadamard's inequality), so `|Norm(m)| <= r^(r phi(L)/2)`. If `m` lies in the prime
//! ideals above distinct rational primes `p_1..p_K`, each `p_i` divides `Norm(m)`; when
//! `p_1 ... p_K` exceeds the bound that is impossible. So the largest rank over such a
//! family of primes is the exact rank ([`Primes::for_rank`]).

/// A prime `p < 2^31` with `p = 1 (mod L)` and a primitive `L`-th root of unity in `F_p`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct PrimeRoot {
    /// The prime.
    pub p: u64,
    /// `w^k` for `k in [0, L)` is the image of `zeta_L^k`.
    pub w: u64,
}

/// `a * b mod p` for `a, b < p < 2^31`.
#[inline]
pub(crate) fn mul(a: u64, b: u64, p: u64) -> u64 {
    a * b % p
}

/// Fast arithmetic modulo one prime `p < 2^31` (Barrett reduction: one 128-bit product
/// instead of a division).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Barrett {
    /// The modulus.
    pub p: u64,
    /// `floor((2^64 - 1) / p)`.
    m: u64,
}

impl Barrett {
    /// Arithmetic modulo `p`, `1 < p < 2^31`.
    pub fn new(p: u64) -> Barrett {
        Barrett { p, m: u64::MAX / p }
    }

    /// `x mod p` for `x < 2^62`.
    #[inline]
    pub fn reduce(&self, x: u64) -> u64 {
        // q <= floor(x / p) <= q + 2, so at most two corrections.
        let q = ((x as u128 * self.m as u128) >> 64) as u64;
        let mut r = x - q * self.p;
        while r >= self.p {
            r -= self.p;
        }
        r
    }

    /// `a * b mod p` for `a, b < p`.
    #[inline]
    pub fn mul(&self, a: u64, b: u64) -> u64 {
        self.reduce(a * b)
    }

    /// `x - f * y mod p` for `x, f, y < p`.
    #[inline]
    pub fn sub_mul(&self, x: u64, f: u64, y: u64) -> u64 {
        let t = self.mul(f, y);
        if x >= t {
            x - t
        } else {
            x + self.p - t
        }
    }

    /// `x + f * y mod p` for `x, f, y < p`.
    #[inline]
    pub fn add_mul(&self, x: u64, f: u64, y: u64) -> u64 {
        let s = x + self.mul(f, y);
        if s >= self.p {
            s - self.p
        } else {
            s
        }
    }

    /// `1 / a mod p` for `a != 0` (Fermat).
    pub fn inv(&self, a: u64) -> u64 {
        let (mut base, mut e, mut r) = (a, self.p - 2, 1);
        while e > 0 {
            if e & 1 == 1 {
                r = self.mul(r, base);
            }
            base = self.mul(base, base);
            e >>= 1;
        }
        r
    }
}

/// `a^e mod p`.
pub(crate) fn pow(mut a: u64, mut e: u64, p: u64) -> u64 {
    let mut r = 1 % p;
    a %= p;
    while e > 0 {
        if e & 1 == 1 {
            r = mul(r, a, p);
        }
        a = mul(a, a, p);
        e >>= 1;
    }
    r
}

/// `1 / a mod p` for `a != 0` (Fermat).
pub(crate) fn inv(a: u64, p: u64) -> u64 {
    pow(a, p - 2, p)
}

/// Deterministic primality test for `n < 2^32` (trial division by the bases, then
/// Miller-Rabin with bases 2, 7, 61, which is exact below 4 759 123 141; Jaeschke, "On strong
/// pseudoprimes to several bases", Math. Comp. 61, 915 (1993) (memory)).
fn is_prime(n: u64) -> bool {
    if n < 2 {
        return false;
    }
    for q in [2u64, 3, 5, 7, 11, 13, 61] {
        if n % q == 0 {
            return n == q;
        }
    }
    let (mut d, mut s) = (n - 1, 0);
    while d % 2 == 0 {
        d /= 2;
        s += 1;
    }
    'base: for a in [2u64, 7, 61] {
        let mut x = pow(a, d, n);
        if x == 1 || x == n - 1 {
            continue;
        }
        for _ in 1..s {
            x = mul(x, x, n);
            if x == n - 1 {
                continue 'base;
            }
        }
        return false;
    }
    true
}

/// The distinct prime factors of `n`.
fn prime_factors(mut n: u64) -> Vec<u64> {
    let mut out = Vec::new();
    let mut q = 2;
    while q * q <= n {
        if n % q == 0 {
            out.push(q);
            while n % q == 0 {
                n /= q;
            }
        }
        q += 1;
    }
    if n > 1 {
        out.push(n);
    }
    out
}

/// A primitive `l`-th root of unity in `F_p` (`l` divides `p - 1`).
fn primitive_root_of_order(l: u64, p: u64) -> u64 {
    let qs = prime_factors(l);
    (2..p)
        .map(|a| pow(a, (p - 1) / l, p))
        .find(|&w| qs.iter().all(|&q| pow(w, l / q, p) != 1))
        .unwrap_or(1)
}

/// The primes `p = 1 (mod L)` below `2^31`, largest first, with their roots; deterministic.
#[derive(Clone, Debug)]
pub(crate) struct Primes {
    /// The primes found so far, largest first.
    pub list: Vec<PrimeRoot>,
}

impl Primes {
    /// The first `count` primes `p = 1 (mod l)` below `2^31`, largest first.
    pub fn new(l: u32, count: usize) -> Primes {
        let l64 = l as u64;
        let mut list = Vec::with_capacity(count);
        let mut k = ((1u64 << 31) - 2) / l64;
        while list.len() < count && k > 0 {
            let p = k * l64 + 1;
            if is_prime(p) {
                list.push(PrimeRoot {
                    p,
                    w: primitive_root_of_order(l64, p),
                });
            }
            k -= 1;
        }
        Primes { list }
    }

    /// How many of these primes make the largest modular rank of a root-of-unity matrix
    /// with at most `r` rows or columns its exact rank (module doc): their product must
    /// exceed `r^(r phi(L) / 2)`; each prime contributes more than 30 bits.
    pub fn for_rank(l: u32, r: usize) -> usize {
        let phi = crate::exact::cyclotomic::euler_phi(l) as f64;
        let bits = (r.max(1) as f64) * phi / 2.0 * (r.max(1) as f64).log2();
        (bits / 30.0).floor() as usize + 1
    }
}

/// Rank of the `rows x cols` matrix over `F_p` (row-major, entries `< p`), destroying it;
/// also returns the original indices of a maximal set of independent rows.
pub(crate) fn rank_rows(m: &mut [u64], rows: usize, cols: usize, p: u64) -> (usize, Vec<usize>) {
    let mut order: Vec<usize> = (0..rows).collect();
    let mut rank = 0;
    for c in 0..cols {
        let Some(pr) = (rank..rows).find(|&r| m[r * cols + c] != 0) else {
            continue;
        };
        if pr != rank {
            for j in 0..cols {
                m.swap(pr * cols + j, rank * cols + j);
            }
            order.swap(pr, rank);
        }
        let iv = inv(m[rank * cols + c], p);
        for r in rank + 1..rows {
            let f = mul(m[r * cols + c], iv, p);
            if f == 0 {
                continue;
            }
            for j in c..cols {
                let v = mul(f, m[rank * cols + j], p);
                m[r * cols + j] = (m[r * cols + j] + p - v) % p;
            }
        }
        rank += 1;
        if rank == rows {
            break;
        }
    }
    // Row swaps only move rows; the first `rank` rows of `order` were pivot rows, which are
    // independent in the original matrix (elimination only subtracts earlier pivot rows).
    (rank, order[..rank].to_vec())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn primes_and_roots_by_definition() {
        for l in [1u32, 2, 4, 8, 12, 24, 840] {
            let ps = Primes::new(l, 3);
            assert_eq!(ps.list.len(), 3);
            for pr in &ps.list {
                assert!(pr.p < 1 << 31 && (pr.p - 1) % l as u64 == 0);
                // Trial division up to sqrt(p): an independent primality check.
                assert!((2..=(pr.p as f64).sqrt() as u64 + 1).all(|q| pr.p % q != 0));
                assert_eq!(pow(pr.w, l as u64, pr.p), 1);
                for k in 1..l as u64 {
                    assert_ne!(pow(pr.w, k, pr.p), 1, "w has order below {l}");
                }
            }
        }
        assert!(Primes::for_rank(24, 8) >= 3);
    }

    #[test]
    fn barrett_agrees_with_division() {
        let f = Barrett::new(2_147_483_029);
        let mut x = 12345u64;
        for _ in 0..10_000 {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let (a, b) = ((x >> 33) % f.p, (x & 0x7fff_ffff) % f.p);
            assert_eq!(f.mul(a, b), a * b % f.p);
            assert_eq!(f.sub_mul(b, a, b), (b + f.p - a * b % f.p) % f.p);
            if a != 0 {
                assert_eq!(f.mul(f.inv(a), a), 1);
            }
        }
        assert_eq!(f.reduce((1 << 62) - 1), ((1u64 << 62) - 1) % f.p);
    }

    #[test]
    fn rank_by_hand() {
        let p = 13;
        // [[1, 2, 3], [2, 4, 6], [1, 0, 1]] has rank 2; rows 0 and 2 are independent.
        let mut m = vec![1, 2, 3, 2, 4, 6, 1, 0, 1];
        let (r, rows) = rank_rows(&mut m, 3, 3, p);
        assert_eq!(r, 2);
        assert_eq!(rows.len(), 2);
        assert!(!(rows.contains(&0) && rows.contains(&1)));
    }
}
