//! Puts `memory.x` where the linker finds it and passes the linker scripts
//! of cortex-m-rt (`link.x`, which includes `memory.x`) and defmt
//! (`defmt.x`), so the crate builds with plain `cargo build` and no
//! RUSTFLAGS.

use std::env;
use std::fs;
use std::path::PathBuf;

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::write(out.join("memory.x"), include_bytes!("memory.x")).expect("write memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");

    // --nmagic keeps sections from being page-aligned, which would waste
    // flash and confuse loaders.
    println!("cargo:rustc-link-arg-bins=--nmagic");
    println!("cargo:rustc-link-arg-bins=-Tlink.x");
    println!("cargo:rustc-link-arg-bins=-Tdefmt.x");
}
