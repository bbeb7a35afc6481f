//! Fuzz target: The circuit file of `plethwire frontend`.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    plethwire_fuzz::frontend_file(data);
});
