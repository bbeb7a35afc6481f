//! Puts the emulated machine's `memory.x` where the linker finds it
//! (cortex-m-rt's `link.x` INCLUDEs it) and tells the code which machine
//! it is built for. The crate builds for two QEMU machines, chosen by the
//! target: `thumbv7em-none-eabihf` is `mps2-an386` (Cortex-M4F,
//! `memory.x`), `thumbv6m-none-eabi` is `microbit` (Cortex-M0, no FPU,
//! `memory-microbit.x`). The code sees `machine = "mps2-an386"` or
//! `machine = "microbit"`. The linker arguments themselves are in
//! `firmware/.cargo/config.toml`, where cortex-m-rt's template keeps them.

use std::env;
use std::fs;
use std::path::PathBuf;

fn main() {
    let target = env::var("TARGET").expect("cargo sets TARGET");
    let (machine, memory): (&str, &[u8]) = if target.starts_with("thumbv6m") {
        ("microbit", include_bytes!("memory-microbit.x"))
    } else {
        ("mps2-an386", include_bytes!("memory.x"))
    };
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::write(out.join("memory.x"), memory).expect("write memory.x");
    println!("cargo::rustc-check-cfg=cfg(machine, values(\"mps2-an386\", \"microbit\"))");
    println!("cargo::rustc-cfg=machine=\"{machine}\"");
    println!("cargo::rustc-link-search={}", out.display());
    println!("cargo::rerun-if-changed=memory.x");
    println!("cargo::rerun-if-changed=memory-microbit.x");
    println!("cargo::rerun-if-changed=build.rs");
}
