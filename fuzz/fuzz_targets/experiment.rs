//! The experiment reader on arbitrary text: an error or an experiment, never a panic.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let _ = pathsieve::experiment_file::parse_experiment(&text, "fuzz.toml".as_ref());
});
