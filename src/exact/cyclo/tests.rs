//! Unit tests for [`super::Cyclo`]; identities are standard facts about roots of unity
//! (e.g. Washington, Introduction to Cyclotomic Fields, 1997, ch. 2 (memory)) or hand
//! computations.

use super::*;
use proptest::prelude::*;

fn q(n: i64, d: i64) -> Q {
    Q::new(BigInt::from(n), BigInt::from(d))
}

fn z(n: u32, k: i64) -> Cyclo {
    Cyclo::root_of_unity(n, k).unwrap()
}

fn close(a: Complex64, b: Complex64) -> bool {
    (a - b).norm() < 1e-9 * (1.0 + a.norm().max(b.norm()))
}

#[test]
fn one_plus_z3_plus_z3_squared_is_zero() {
    let s = Cyclo::one(3)
        .unwrap()
        .add(&z(3, 1))
        .unwrap()
        .add(&z(3, 2))
        .unwrap();
    assert!(s.is_zero());
}

#[test]
fn z8_squared_is_i() {
    let i = Cyclo::from_gaussian(&q(0, 1), &q(1, 1));
    let z8 = z(8, 1);
    assert_eq!(z8.mul(&z8).unwrap(), i);
    assert_eq!(z8.mul(&z8).unwrap().to_string(), "i");
}

#[test]
fn sum_of_all_roots_of_unity_vanishes() {
    for l in 1..=60u32 {
        let mut s = Cyclo::zero(l).unwrap();
        for k in 0..l as i64 {
            s = s.add(&z(l, k)).unwrap();
        }
        if l == 1 {
            assert_eq!(s, Cyclo::one(1).unwrap());
        } else {
            assert!(s.is_zero(), "L = {l}: {s}");
        }
    }
}

#[test]
fn zeta_to_the_n_is_one_and_conj_is_inverse() {
    for n in 1..=40u32 {
        let zn = z(n, 1);
        let mut p = Cyclo::one(n).unwrap();
        for _ in 0..n {
            p = p.mul(&zn).unwrap();
        }
        assert_eq!(p, Cyclo::one(n).unwrap(), "zeta_{n}^{n}");
        assert_eq!(z(n, n as i64), Cyclo::one(n).unwrap());
        for k in [-3i64, 1, 2, 7] {
            let zk = z(n, k);
            assert_eq!(zk.conj().mul(&zk).unwrap(), Cyclo::one(n).unwrap());
            assert_eq!(zk.conj(), z(n, -k));
        }
    }
}

#[test]
fn lift_preserves_value() {
    for (n, m) in [(3u32, 12u32), (4, 20), (5, 30), (6, 36), (1, 7), (9, 27)] {
        for k in 0..n as i64 {
            let x = z(n, k)
                .scale(&q(3, 7))
                .add(&Cyclo::one(n).unwrap())
                .unwrap();
            let y = x.lift(m).unwrap();
            assert_eq!(y.order(), m);
            assert!(close(x.to_complex(), y.to_complex()));
            assert_eq!(x, y);
        }
    }
    assert!(matches!(
        z(3, 1).lift(10),
        Err(ExactError::NotADivisor { from: 3, to: 10 })
    ));
}

#[test]
fn gaussian_detection_and_display() {
    let x = Cyclo::from_gaussian(&q(1, 2), &q(1, 2));
    assert_eq!(x.to_string(), "1/2 + 1/2i");
    assert_eq!(x.lift(60).unwrap().to_string(), "1/2 + 1/2i");
    assert_eq!(
        Cyclo::from_gaussian(&q(1, 1), &q(-1, 1)).to_string(),
        "1 - i"
    );
    assert_eq!(z(4, 3).to_string(), "-i");
    assert_eq!(Cyclo::zero(5).unwrap().to_string(), "0");
    // zeta_3 = -1/2 + (sqrt 3)/2 i is not Gaussian: power-basis form.
    assert_eq!(z(3, 1).to_string(), "z3");
    assert_eq!(z(3, 2).to_string(), "-1 - z3");
    assert_eq!(z(5, 2).scale(&q(-2, 3)).to_string(), "-2/3*z5^2");
    // i in an order whose phi(m) < m/4 + 1 (420 = 4*3*5*7): detection still works.
    assert_eq!(z(420, 105).to_string(), "i");
    assert_eq!(z(420, 105).gaussian_parts(), Some((q(0, 1), q(1, 1))));
}

#[test]
fn serialises_as_documented_object() {
    let x = Cyclo::from_gaussian(&q(1, 2), &q(-3, 4));
    let v = serde_json::to_value(&x).unwrap();
    assert_eq!(v["order"], 4);
    assert_eq!(v["coeffs"][0], "1/2");
    assert_eq!(v["coeffs"][1], "-3/4");
    assert_eq!(v["text"], "1/2 - 3/4i");
}

#[test]
fn rationals_and_scale() {
    let r = Cyclo::from_rational(&q(-1, 27));
    assert_eq!(r.as_rational(), Some(q(-1, 27)));
    assert_eq!(r.scale(&q(27, 1)).as_rational(), Some(q(-1, 1)));
    assert_eq!(r.neg().to_string(), "1/27");
    assert!((z(7, 3).scale(&q(2, 1)).abs_f64() - 2.0).abs() < 1e-12);
}

fn arb_cyclo() -> impl Strategy<Value = Cyclo> {
    (
        prop::sample::select(vec![1u32, 2, 3, 4, 5, 6, 8, 9, 12, 15, 16, 20, 24, 30]),
        prop::collection::vec((-5i64..=5, 1i64..=6, 0i64..40), 0..5),
    )
        .prop_map(|(n, terms)| {
            let mut x = Cyclo::zero(n).unwrap();
            for (a, b, k) in terms {
                x = x.add(&z(n, k).scale(&q(a, b))).unwrap();
            }
            x
        })
}

proptest! {
    #[test]
    fn mul_agrees_with_complex_multiplication(a in arb_cyclo(), b in arb_cyclo()) {
        let p = a.mul(&b).unwrap();
        prop_assert!(close(p.to_complex(), a.to_complex() * b.to_complex()));
        let s = a.add(&b).unwrap();
        prop_assert!(close(s.to_complex(), a.to_complex() + b.to_complex()));
        prop_assert!(close(a.conj().to_complex(), a.to_complex().conj()));
        prop_assert_eq!(a.sub(&a).unwrap().is_zero(), true);
        prop_assert_eq!(a.mul(&b).unwrap(), b.mul(&a).unwrap());
    }
}
