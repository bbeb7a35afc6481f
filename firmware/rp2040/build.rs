//! Puts this board's `memory.x` where the linker finds it: cortex-m-rt's
//! `link.x` INCLUDEs it. The linker arguments themselves are in
//! `.cargo/config.toml`, where cortex-m-rt's template keeps them.

use std::env;
use std::fs;
use std::path::PathBuf;

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::write(out.join("memory.x"), include_bytes!("memory.x")).expect("write memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");
}
