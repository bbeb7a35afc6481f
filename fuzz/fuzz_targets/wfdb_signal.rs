//! Fuzz target: The WFDB record reader (header, then signal file).
#![no_main]

use libfuzzer_sys::fuzz_target;
use plethwire_fuzz::{records_cases, scratch_dir};
use std::path::PathBuf;
use std::sync::OnceLock;

/// This process's folder for the files the case writes.
static DIR: OnceLock<PathBuf> = OnceLock::new();

fuzz_target!(|data: &[u8]| {
    let dir = DIR.get_or_init(scratch_dir);
    let _ = records_cases::signal(data, dir);
});
