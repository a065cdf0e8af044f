//! Exact polar form of a cyclotomic number: `z = q exp(2 pi i x)` with `q > 0` rational and
//! `x` a rational turn, when `z` has that form (every weight of a lattice design does). The
//! roots of unity in `Q(zeta_n)` are the `2n`-th roots, so the candidate angle is the nearest
//! point of that grid to the float argument, and the test is exact.

use super::{reduce_turn, Cyclo, Turns, Q};
use num_traits::{Signed, Zero};

/// `Some((q, x))` with `z = q exp(2 pi i x)`, `q > 0` rational (`q = 0`, `x = 0` for zero) and
/// `x` in lowest terms in `(-1/2, 1/2]` turn; `None` when `z` is not a rational multiple of a
/// root of unity (e.g. `1 + 2i`).
pub fn exact_polar(z: &Cyclo) -> Option<(Q, Turns)> {
    if z.is_zero() {
        return Some((Q::zero(), Turns::from_integer(0)));
    }
    let two_o = 2 * i64::from(z.order());
    let k = (z.to_complex().arg() / std::f64::consts::TAU * two_o as f64).round() as i64;
    let rot = Cyclo::root_of_unity(u32::try_from(two_o).ok()?, -k).ok()?;
    let q = z.mul(&rot).ok()?.as_rational()?;
    if !q.is_positive() {
        return None;
    }
    let mut x = reduce_turn(Turns::new(k, two_o));
    if x > Turns::new(1, 2) {
        x -= Turns::from_integer(1);
    }
    Some((q, x))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roots_of_unity_and_their_rational_multiples() {
        let z = Cyclo::root_of_unity(3, 2).unwrap();
        assert_eq!(
            exact_polar(&z),
            Some((Q::from_integer(1.into()), Turns::new(-1, 3)))
        );
        // -zeta_3 = e(1/3 + 1/2) = e(-1/6): a 6th root of unity inside Q(zeta_3).
        let z = Cyclo::root_of_unity(3, 1).unwrap().neg();
        assert_eq!(exact_polar(&z).unwrap().1, Turns::new(-1, 6));
        let z = Cyclo::from_gaussian(&Q::new(3.into(), 1.into()), &Q::zero());
        assert_eq!(
            exact_polar(&z),
            Some((Q::from_integer(3.into()), Turns::from_integer(0)))
        );
        let z = Cyclo::from_gaussian(&Q::from_integer((-1).into()), &Q::zero());
        assert_eq!(exact_polar(&z).unwrap().1, Turns::new(1, 2));
        // 1 + 2i = sqrt(5) e(0.176...): no rational magnitude on a root of unity.
        let z = Cyclo::from_gaussian(&Q::from_integer(1.into()), &Q::from_integer(2.into()));
        assert_eq!(exact_polar(&z), None);
    }
}
