//! The phase and weight cell parsers (exact expressions, decimals with written precision).
#![no_main]
use libfuzzer_sys::fuzz_target;
use pathsieve::exact::{parse_phase, parse_weight, PhaseUnit};

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    for unit in [
        PhaseUnit::Turns,
        PhaseUnit::Degrees,
        PhaseUnit::Radians,
        PhaseUnit::GridIndex(12),
    ] {
        let _ = parse_phase(&text, unit);
    }
    let _ = parse_weight(&text);
});
