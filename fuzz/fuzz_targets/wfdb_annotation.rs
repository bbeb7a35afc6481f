//! Fuzz target: The WFDB annotation decoder.
#![no_main]

use libfuzzer_sys::fuzz_target;
use plethwire_fuzz::records_cases;

fuzz_target!(|data: &[u8]| {
    let _ = records_cases::annotation(data);
});
