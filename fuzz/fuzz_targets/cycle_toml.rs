//! The TOML cycle reader on arbitrary text, with and without a unit override.
#![no_main]
use libfuzzer_sys::fuzz_target;
use pathsieve::exact::PhaseUnit;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    for unit in [None, Some(PhaseUnit::Turns), Some(PhaseUnit::GridIndex(8))] {
        let _ = pathsieve::cycle::read_cycle_toml(&text, "fuzz.toml".as_ref(), unit);
    }
});
