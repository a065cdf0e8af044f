//! The checker on fuzzed cycle tables (CSV) against a fixed experiment: a verdict or an error,
//! never a panic or a hang.
#![no_main]
use libfuzzer_sys::fuzz_target;
use pathsieve::check::{check, CheckOptions};
use pathsieve::selection::{Selection, SelectionRequest};

const EXPERIMENT: &str = include_str!("../../schemes/carbonyl-pump-probe.toml");

fuzz_target!(|data: &[u8]| {
    let exp = pathsieve::experiment_file::parse_experiment(EXPERIMENT, "e.toml".as_ref())
        .expect("the bundled scheme reads");
    let Ok(sel) = Selection::new(&exp, &SelectionRequest::default()) else {
        return;
    };
    let text = String::from_utf8_lossy(data);
    if let Ok(cycle) = pathsieve::cycle::read_cycle_csv(&text, "fuzz.csv".as_ref(), None) {
        let _ = check(&sel, &cycle, &CheckOptions::default());
    }
});
