//! The stable-Rust counterpart of `fuzz/` (issue 12): random bytes and random mutations of the
//! bundled schemes go to the same entry points as the cargo-fuzz targets (experiment reader,
//! both cycle readers, the phase/weight cell parsers, the checker on the mutated cycles), and
//! every case must return (a value or an error) without panicking. proptest reports a panic
//! as a failure and shrinks it to a small input.

mod common;

use pathsieve::check::{check, CheckOptions};
use pathsieve::exact::{parse_phase, parse_weight, PhaseUnit};
use pathsieve::selection::{Selection, SelectionRequest};
use proptest::prelude::*;

/// Tokens the campaign found interesting: extremes, non-finite values, structure.
const TOKENS: &[&str] = &[
    "-9223372036854775808",
    "9223372036854775807",
    "1e308",
    "5e-324",
    "1e400",
    "nan",
    "inf",
    "-inf",
    "0",
    "-1",
    "1/30030",
    "1/0",
    "exp(2*pi*i/7)",
    "exp(1000)",
    "~",
    "i",
    "[[signal]]\nname = \"x\"\nsignatures = [[1, -1, 0]]\n",
    "[[output]]\nname = \"y\"\nfrom_signature = [-1, 1]\n",
    "# unit = turns\n",
    "# grid = 0x0\n",
    "grid = [0, 0]\n",
    "\"",
    "[",
    "]",
    ",",
    ";",
    "\t",
    "\r\n",
    "\u{feff}",
    "1/2",
    "0.5",
    "180",
    "w:a",
];

/// One edit of a seed text: replace a byte, insert a token, or delete a short span.
#[derive(Clone, Debug)]
enum Edit {
    Replace(usize, u8),
    Insert(usize, usize),
    Delete(usize, usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Edit::Replace(p, b)),
        (any::<usize>(), 0..TOKENS.len()).prop_map(|(p, t)| Edit::Insert(p, t)),
        (any::<usize>(), 1usize..16).prop_map(|(p, n)| Edit::Delete(p, n)),
    ]
}

fn mutate(seed: &str, edits: &[Edit]) -> String {
    let mut b = seed.as_bytes().to_vec();
    for e in edits {
        let at = |p: usize, len: usize| if len == 0 { 0 } else { p % (len + 1) };
        match *e {
            Edit::Replace(p, x) if !b.is_empty() => {
                let k = p % b.len();
                b[k] = x;
            }
            Edit::Replace(..) => {}
            Edit::Insert(p, t) => {
                let k = at(p, b.len());
                b.splice(k..k, TOKENS[t].bytes());
            }
            Edit::Delete(p, n) => {
                let k = at(p, b.len());
                let end = (k + n).min(b.len());
                b.drain(k..end);
            }
        }
    }
    String::from_utf8_lossy(&b).into_owned()
}

fn seed(name: &str) -> String {
    std::fs::read_to_string(common::scheme(name)).unwrap()
}

const UNITS: [PhaseUnit; 4] = [
    PhaseUnit::Turns,
    PhaseUnit::Degrees,
    PhaseUnit::Radians,
    PhaseUnit::GridIndex(12),
];

proptest! {
    #![proptest_config(ProptestConfig { cases: 192, ..ProptestConfig::default() })]

    #[test]
    fn experiment_reader_never_panics(
        which in 0usize..4,
        edits in prop::collection::vec(edit(), 0..8),
    ) {
        let names = [
            "carbonyl-pump-probe.toml",
            "nmr-spin32-mqmas.toml",
            "ladder-heterodyne.toml",
            "dye-fluorescence-2d.toml",
        ];
        let text = mutate(&seed(names[which]), &edits);
        let _ = pathsieve::experiment_file::parse_experiment(&text, "fuzz.toml".as_ref());
    }

    #[test]
    fn cycle_readers_and_checker_never_panic(
        which in 0usize..3,
        edits in prop::collection::vec(edit(), 0..8),
    ) {
        let names = ["carbonyl-2x2.cycle.toml", "carbonyl-2x2.csv", "carbonyl-2x2.csv"];
        let text = mutate(&seed(names[which]), &edits);
        let path = std::path::Path::new(if which == 0 { "f.toml" } else { "f.csv" });
        let cycle = if which == 0 {
            pathsieve::cycle::read_cycle_toml(&text, path, None)
        } else {
            pathsieve::cycle::read_cycle_csv(&text, path, None)
        };
        if let Ok(cycle) = cycle {
            let exp = common::exp(&seed("carbonyl-pump-probe.toml"));
            let sel = Selection::new(&exp, &SelectionRequest::default()).unwrap();
            let _ = check(&sel, &cycle, &CheckOptions::default());
        }
    }

    #[test]
    fn random_bytes_never_panic_any_reader(bytes in prop::collection::vec(any::<u8>(), 0..400)) {
        let text = String::from_utf8_lossy(&bytes);
        let _ = pathsieve::experiment_file::parse_experiment(&text, "f.toml".as_ref());
        let _ = pathsieve::cycle::read_cycle_toml(&text, "f.toml".as_ref(), Some(PhaseUnit::Turns));
        let _ = pathsieve::cycle::read_cycle_csv(&text, "f.csv".as_ref(), Some(PhaseUnit::Turns));
    }

    #[test]
    fn cell_parsers_never_panic(
        parts in prop::collection::vec(
            prop_oneof![
                (0..TOKENS.len()).prop_map(|t| TOKENS[t].to_string()),
                "[-+*/^().0-9a-z ~]{0,6}",
            ],
            0..6,
        ),
    ) {
        let text = parts.concat();
        for unit in UNITS {
            let _ = parse_phase(&text, unit);
        }
        let _ = parse_weight(&text);
    }
}
