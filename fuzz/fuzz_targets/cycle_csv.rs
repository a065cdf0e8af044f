//! The CSV cycle reader (every spreadsheet dialect) on arbitrary text.
#![no_main]
use libfuzzer_sys::fuzz_target;
use pathsieve::exact::PhaseUnit;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    for unit in [None, Some(PhaseUnit::Degrees)] {
        let _ = pathsieve::cycle::read_cycle_csv(&text, "fuzz.csv".as_ref(), unit);
    }
});
