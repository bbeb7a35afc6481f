//! What each fuzz target does with one input; the targets in
//! `fuzz_targets/` only hand the fuzzer's bytes to these. Each case file
//! is also included by the regression test of the crate it exercises.

#[path = "records_cases.rs"]
pub mod records_cases;

#[path = "frontend_case.rs"]
mod frontend_case;
#[path = "wire_case.rs"]
mod wire_case;

pub use frontend_case::frontend_file;
pub use wire_case::wire_decoder;

use std::path::PathBuf;

/// A folder of this process's own for the cases that read files (in
/// memory where the system has `/dev/shm`), made once.
pub fn scratch_dir() -> PathBuf {
    let base = if std::path::Path::new("/dev/shm").is_dir() {
        PathBuf::from("/dev/shm")
    } else {
        std::env::temp_dir()
    };
    let dir = base.join(format!("plethwire-fuzz-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("make the scratch folder");
    dir
}
