//! Tests for the phase and weight parsers: every accepted form (values by hand computation)
//! and the error cases; a proptest checks that no input makes a parser panic.

use super::*;
use num_bigint::BigInt;
use proptest::prelude::*;

fn t(n: i64, d: i64) -> PhaseValue {
    PhaseValue::Exact(Ratio::new(n, d))
}

fn q(n: i64, d: i64) -> Q {
    Q::new(BigInt::from(n), BigInt::from(d))
}

fn exact(text: &str) -> Cyclo {
    match parse_weight(text) {
        Ok(WeightValue::Exact(c)) => c,
        other => panic!("{text}: {other:?}"),
    }
}

fn approx_turns(v: Result<PhaseValue, PhaseParseError>) -> f64 {
    match v {
        Ok(PhaseValue::Approx { turns }) => turns,
        other => panic!("expected approximate phase, got {other:?}"),
    }
}

#[test]
fn phases_in_turns() {
    use PhaseUnit::Turns;
    assert_eq!(parse_phase("1/3", Turns), Ok(t(1, 3)));
    assert_eq!(parse_phase("0.25", Turns), Ok(t(1, 4)));
    assert_eq!(parse_phase("-1/4", Turns), Ok(t(-1, 4)));
    assert_eq!(parse_phase(" 2/4 ", Turns), Ok(t(1, 2)));
    assert_eq!(parse_phase("0.25turn", PhaseUnit::Degrees), Ok(t(1, 4)));
    assert_eq!(parse_phase("3/4 turns", PhaseUnit::Radians), Ok(t(3, 4)));
}

#[test]
fn phases_in_degrees() {
    use PhaseUnit::Degrees;
    assert_eq!(parse_phase("120", Degrees), Ok(t(1, 3)));
    // Domain notes sec. 7: 33.3 deg = 333/3600 turn.
    assert_eq!(parse_phase("33.3", Degrees), Ok(t(333, 3600)));
    assert_eq!(parse_phase("90deg", PhaseUnit::Turns), Ok(t(1, 4)));
    assert_eq!(parse_phase("-45 °", PhaseUnit::Turns), Ok(t(-1, 8)));
}

#[test]
fn phases_in_radians() {
    use PhaseUnit::Radians;
    assert_eq!(parse_phase("2*pi/3", Radians), Ok(t(1, 3)));
    assert_eq!(parse_phase("pi/2", Radians), Ok(t(1, 4)));
    assert_eq!(parse_phase("-pi", Radians), Ok(t(-1, 2)));
    assert_eq!(parse_phase("3pi/4", Radians), Ok(t(3, 8)));
    assert_eq!(parse_phase("pi", Radians), Ok(t(1, 2)));
    assert_eq!(parse_phase("π/3", Radians), Ok(t(1, 6)));
    assert_eq!(parse_phase("0", Radians), Ok(t(0, 1)));
    assert_eq!(parse_phase("pi/2 rad", PhaseUnit::Turns), Ok(t(1, 4)));
    let x = approx_turns(parse_phase("2.0944", Radians));
    assert!((x - 2.0944 / std::f64::consts::TAU).abs() < 1e-15);
    assert!((approx_turns(parse_phase("1 rad", PhaseUnit::Turns)) - 0.159_154_943).abs() < 1e-9);
}

#[test]
fn phases_on_a_grid() {
    assert_eq!(parse_phase("5", PhaseUnit::GridIndex(8)), Ok(t(5, 8)));
    assert_eq!(
        parse_phase("5", PhaseUnit::GridIndex(0)),
        Err(PhaseParseError::GridZero)
    );
    assert_eq!(parse_phase("90deg", PhaseUnit::GridIndex(8)), Ok(t(1, 4)));
}

#[test]
fn phase_errors() {
    use PhaseUnit::*;
    assert_eq!(parse_phase("", Turns), Err(PhaseParseError::Empty));
    assert_eq!(parse_phase("deg", Turns), Err(PhaseParseError::Empty));
    assert!(matches!(
        parse_phase("abc", Turns),
        Err(PhaseParseError::Syntax { .. })
    ));
    assert!(matches!(
        parse_phase("1/0", Turns),
        Err(PhaseParseError::DivisionByZero { .. })
    ));
    assert!(matches!(
        parse_phase("pi/2", Turns),
        Err(PhaseParseError::PiOutsideRadians { .. })
    ));
    assert!(matches!(
        parse_phase("pi", Degrees),
        Err(PhaseParseError::PiOutsideRadians { .. })
    ));
    assert!(matches!(
        parse_phase("i/2", Turns),
        Err(PhaseParseError::NotReal { .. })
    ));
    assert!(matches!(
        parse_phase("1+pi", Radians),
        Err(PhaseParseError::NotReal { .. })
    ));
    assert!(matches!(
        parse_phase("1..2", Turns),
        Err(PhaseParseError::Syntax { .. })
    ));
    assert!(matches!(
        parse_phase("(1/2", Turns),
        Err(PhaseParseError::Syntax { .. })
    ));
    assert!(matches!(
        parse_phase("1 2", Turns),
        Err(PhaseParseError::Syntax { .. })
    ));
    let huge = format!("1/{}", "9".repeat(30));
    assert!(matches!(
        parse_phase(&huge, Turns),
        Err(PhaseParseError::TooLarge { .. })
    ));
    let long = "1".repeat(1100);
    assert!(matches!(
        parse_phase(&long, Turns),
        Err(PhaseParseError::TooLong { .. })
    ));
    let msg = parse_phase("abc", Turns).unwrap_err().to_string();
    assert!(msg.contains("'abc'") && msg.contains("expected"), "{msg}");
}

#[test]
fn weights_rational_and_gaussian() {
    assert_eq!(exact("1"), Cyclo::one(1).unwrap());
    assert_eq!(exact("-1").as_rational(), Some(q(-1, 1)));
    assert_eq!(exact("i").gaussian_parts(), Some((q(0, 1), q(1, 1))));
    assert_eq!(exact("-i").gaussian_parts(), Some((q(0, 1), q(-1, 1))));
    assert_eq!(exact("1/2").as_rational(), Some(q(1, 2)));
    assert_eq!(exact("1/2+1/2i").gaussian_parts(), Some((q(1, 2), q(1, 2))));
    assert_eq!(
        exact("0.5-0.25i").gaussian_parts(),
        Some((q(1, 2), q(-1, 4)))
    );
    assert_eq!(exact("-1/27").as_rational(), Some(q(-1, 27)));
    assert_eq!(exact("(1+i)/2").gaussian_parts(), Some((q(1, 2), q(1, 2))));
    assert_eq!(exact("1/(1+i)").gaussian_parts(), Some((q(1, 2), q(-1, 2))));
    assert_eq!(exact("0.125").as_rational(), Some(q(1, 8)));
}

#[test]
fn weights_roots_of_unity() {
    let z3m = Cyclo::root_of_unity(3, -1).unwrap();
    assert_eq!(exact("exp(-i*2*pi/3)"), z3m);
    assert_eq!(exact("exp(-2*pi*i*1/3)"), z3m);
    assert_eq!(exact("exp(i*pi/2)"), exact("i"));
    assert_eq!(exact("e^(i*pi/4)"), Cyclo::root_of_unity(8, 1).unwrap());
    assert_eq!(exact("E^(-i pi)"), exact("-1"));
    assert_eq!(exact("exp(0)"), exact("1"));
    assert_eq!(exact("1/27*exp(-i*2*pi/3)"), z3m.scale(&q(1, 27)));
    assert_eq!(
        exact("exp(i*2*pi*5/3)"),
        Cyclo::root_of_unity(3, 5).unwrap()
    );
}

#[test]
fn weights_approximate() {
    // exp of a non-pi argument is transcendental: approximate.
    match parse_weight("exp(i*1.5)") {
        Ok(WeightValue::Approx(z)) => assert!((z - Complex64::new(0.0, 1.5).exp()).norm() < 1e-12),
        other => panic!("{other:?}"),
    }
    // Rounded irrationals (1/sqrt 2, sqrt(3)/2, sin 15 deg) are flagged.
    for text in ["0.7071", "-0.866", "0.7071+0.7071i", "0.2588", "1.732"] {
        assert!(
            matches!(parse_weight(text), Ok(WeightValue::Approx(_))),
            "{text}"
        );
    }
    match parse_weight("-0.866") {
        Ok(WeightValue::Approx(z)) => assert_eq!(z, Complex64::new(-0.866, 0.0)),
        other => panic!("{other:?}"),
    }
    // Short decimals and values far from such irrationals stay exact.
    for text in ["0.7", "0.87", "0.125", "0.333", "0.5-0.25i"] {
        assert!(
            matches!(parse_weight(text), Ok(WeightValue::Exact(_))),
            "{text}"
        );
    }
}

#[test]
fn weight_errors() {
    use WeightParseError as E;
    assert_eq!(parse_weight(""), Err(E::Empty));
    assert_eq!(parse_weight("   "), Err(E::Empty));
    assert!(matches!(parse_weight("abc"), Err(E::Syntax { .. })));
    assert!(matches!(parse_weight("1/0"), Err(E::DivisionByZero { .. })));
    assert!(matches!(
        parse_weight("1/(i-i)"),
        Err(E::DivisionByZero { .. })
    ));
    assert!(matches!(parse_weight("exp(i*x)"), Err(E::Syntax { .. })));
    assert!(matches!(
        parse_weight("exp(1+i*pi)"),
        Err(E::MixedPi { .. })
    ));
    assert!(matches!(
        parse_weight("exp(pi*(1+i))"),
        Err(E::ExpArgument { .. })
    ));
    assert!(matches!(
        parse_weight("exp(pi)"),
        Err(E::ExpArgument { .. })
    ));
    assert!(matches!(parse_weight("pi/2"), Err(E::PiOutsideExp { .. })));
    assert!(matches!(parse_weight("1+pi"), Err(E::MixedPi { .. })));
    assert!(matches!(
        parse_weight("1/exp(i*pi/3)"),
        Err(E::NotInvertible { .. })
    ));
    assert!(matches!(parse_weight("e(2)"), Err(E::Syntax { .. })));
    assert!(matches!(parse_weight("2^3"), Err(E::Syntax { .. })));
    assert!(matches!(
        parse_weight("exp(i*pi/1000001)"),
        Err(E::Limit { .. })
    ));
    let deep = format!("{}1{}", "(".repeat(40), ")".repeat(40));
    assert!(matches!(parse_weight(&deep), Err(E::Syntax { .. })));
    let msg = parse_weight("exp(i*x)").unwrap_err().to_string();
    assert!(msg.contains("unknown name 'x'"), "{msg}");
}

proptest! {
    #[test]
    fn parsers_never_panic(s in "\\PC{0,40}") {
        let _ = parse_weight(&s);
        let _ = parse_phase(&s, PhaseUnit::Radians);
        let _ = parse_phase(&s, PhaseUnit::GridIndex(7));
    }

    #[test]
    fn parsers_never_panic_on_formula_alphabet(s in "[0-9.+*/^()ie pxπ°a-z-]{0,30}") {
        let _ = parse_weight(&s);
        let _ = parse_phase(&s, PhaseUnit::Degrees);
    }

    #[test]
    fn fractions_round_trip(n in -1000i64..1000, d in 1i64..1000) {
        let text = format!("{n}/{d}");
        prop_assert_eq!(parse_phase(&text, PhaseUnit::Turns), Ok(t(n, d)));
        match parse_weight(&text) {
            Ok(WeightValue::Exact(c)) => prop_assert_eq!(c.as_rational(), Some(q(n, d))),
            other => prop_assert!(false, "{:?}", other),
        }
    }
}
