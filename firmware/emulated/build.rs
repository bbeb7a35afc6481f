//! Puts the emulated machine's `memory.x` where the linker finds it
//! (cortex-m-rt's `link.x` INCLUDEs it), tells the code which machine it
//! is built for, and designs the pipeline's filters for a few rates here,
//! on the PC, exactly as the real boards' build scripts do for theirs.
//!
//! The crate builds for two QEMU machines, chosen by the target:
//! `thumbv7em-none-eabihf` is `mps2-an386` (Cortex-M4F, `memory.x`),
//! `thumbv6m-none-eabi` is `microbit` (Cortex-M0, no FPU,
//! `memory-microbit.x`). The code sees `machine = "mps2-an386"` or
//! `machine = "microbit"`. The linker arguments themselves are in
//! `firmware/.cargo/config.toml`, where cortex-m-rt's template keeps them.
//!
//! `bands.rs` in OUT_DIR holds the filters as `BUILT_BANDS`. The
//! self-check designs the same on the device and prints both, so the host
//! test sees that a board's build-time filters are what `Pipeline::new`
//! designs on the chip. (This board itself designs at run time, for any
//! recording's rate.)

use std::env;
use std::fs;
use std::path::PathBuf;

use plethwire_dsp::pipeline::{BandSections, Config};

/// Rates designed for: the real boards' 250 Hz, the ends of the range,
/// and rates of the shared recordings.
const RATES_HZ: [f32; 7] = [25.0, 100.0, 125.0, 250.0, 300.0, 500.0, 1000.0];

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

    let mut text = format!(
        "/// Rates of [`BUILT_BANDS`], Hz.\n\
         pub const BUILT_RATES_HZ: [f32; {n}] = {RATES_HZ:?};\n\
         /// The pipeline's filters for [`BUILT_RATES_HZ`], designed by\n\
         /// build.rs with `BandSections::design`.\n\
         pub const BUILT_BANDS: [plethwire_dsp::pipeline::BandSections; {n}] = [\n",
        n = RATES_HZ.len()
    );
    for fs in RATES_HZ {
        let band = BandSections::design(&Config::new(fs))
            .unwrap_or_else(|e| panic!("the band at {fs} Hz: {e}"));
        text += &format!("{},\n", band.source());
    }
    text += "];\n";
    fs::write(out.join("bands.rs"), text).expect("write bands.rs");

    println!("cargo::rerun-if-changed=memory.x");
    println!("cargo::rerun-if-changed=memory-microbit.x");
    println!("cargo::rerun-if-changed=build.rs");
}
