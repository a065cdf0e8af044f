//! One written form per number that reads back (issue 12 item 5): every float our writers put
//! into a cycle file (approximate phases `~x`, approximate weights `~a+bi`) is positional, never
//! in exponent notation, and our own readers return the identical double; exact weights read
//! back exactly. Property test over all finite doubles (bit patterns), both file forms.

use num_complex::Complex64;
use pathsieve::cycle::{
    read_cycle_csv, read_cycle_toml, write_cycle_csv, write_cycle_toml, Cycle, CycleMeta,
    CycleOutput, Phase, Weight, WeightSource,
};
use proptest::prelude::*;

fn finite() -> impl Strategy<Value = f64> {
    prop_oneof![
        any::<u64>()
            .prop_map(f64::from_bits)
            .prop_filter("finite", |x| x.is_finite()),
        -1.0f64..1.0,
        Just(5e-324),
        Just(-0.0),
        Just(f64::MAX),
    ]
}

fn cycle(x: f64, y: f64, w: Complex64) -> Cycle {
    Cycle {
        fields: vec!["a".into(), "b".into()],
        steps: vec![vec![Phase::Approx(x), Phase::Approx(y)]],
        outputs: vec![CycleOutput {
            name: "o".into(),
            weights: vec![Weight::Approx(w)],
            source: WeightSource::Explicit,
        }],
        meta: CycleMeta::default(),
    }
}

/// Same value (`-0.0 == 0.0` counts as the same number).
fn same(a: f64, b: f64) -> bool {
    a == b
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 512, ..ProptestConfig::default() })]

    #[test]
    fn approximate_values_read_back_identical(
        x in finite(), y in finite(), re in finite(), im in finite(),
    ) {
        let c = cycle(x, y, Complex64::new(re, im));
        for (text, back) in [
            (write_cycle_toml(&c), read_cycle_toml as fn(&str, &std::path::Path, _) -> _),
            (write_cycle_csv(&c), read_cycle_csv),
        ] {
            let cells = text.lines().filter(|l| !l.starts_with('#')).collect::<Vec<_>>().join("\n");
            prop_assert!(!cells.contains("e-") && !cells.contains("e+"), "exponent in {}", cells);
            let r = back(&text, "rt".as_ref(), None).map_err(|e| TestCaseError::fail(e.to_string()))?;
            let (Phase::Approx(x2), Phase::Approx(y2)) = (&r.steps[0][0], &r.steps[0][1]) else {
                return Err(TestCaseError::fail(format!("{:?}", r.steps)));
            };
            prop_assert!(same(*x2, x) && same(*y2, y), "{x} {y} -> {x2} {y2}");
            let w = r.outputs[0].weights[0].to_complex();
            prop_assert!(same(w.re, re) && same(w.im, im), "{re} {im} -> {w}");
        }
    }
}

/// Exact Gaussian weights convert to floats without the 6e-17 of `cos(pi/2)`.
#[test]
fn exact_gaussian_weights_convert_without_noise() {
    for (text, want) in [
        ("-i", Complex64::new(0.0, -1.0)),
        ("i", Complex64::new(0.0, 1.0)),
        ("1/2-1/2i", Complex64::new(0.5, -0.5)),
        ("exp(i*pi/2)", Complex64::new(0.0, 1.0)),
        ("exp(i*pi)", Complex64::new(-1.0, 0.0)),
    ] {
        let w = pathsieve::cycle::text::parse_weight_cell(text).unwrap();
        assert_eq!(w.to_complex(), want, "{text}");
    }
}
