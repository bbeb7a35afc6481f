//! Fuzz target: The wire frame decoder.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    plethwire_fuzz::wire_decoder(data);
});
