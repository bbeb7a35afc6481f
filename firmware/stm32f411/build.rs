//! Puts this board's `memory.x` where the linker finds it (cortex-m-rt's
//! `link.x` INCLUDEs it; the linker arguments themselves are in
//! `.cargo/config.toml`, where cortex-m-rt's template keeps them), and
//! designs the pipeline's filters for the board's fixed rate here, on the
//! PC, with the pipeline's own design code: `band.rs` in OUT_DIR holds
//! them as the constant `BAND`, every number as its bit pattern, so the
//! board runs exactly what `Pipeline::new` would design on it, without
//! linking the double-precision design code.

use std::env;
use std::fs;
use std::path::PathBuf;

use plethwire_dsp::pipeline::{BandSections, Config};

include!("src/rate.rs");

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::write(out.join("memory.x"), include_bytes!("memory.x")).expect("write memory.x");
    println!("cargo:rustc-link-search={}", out.display());

    // The board's pipeline options keep the default band edges
    // (`BoardConfig::new`); `Pipeline::with_band` refuses sections
    // designed for other ones.
    let band = BandSections::design(&Config::new(SAMPLE_RATE_HZ as f32))
        .unwrap_or_else(|e| panic!("the band at {SAMPLE_RATE_HZ} Hz: {e}"));
    let text = format!(
        "/// The pipeline's band-pass filters for [`SAMPLE_RATE_HZ`], designed\n\
         /// by build.rs with `BandSections::design`.\n\
         pub const BAND: plethwire_dsp::pipeline::BandSections = {};\n",
        band.source()
    );
    fs::write(out.join("band.rs"), text).expect("write band.rs");

    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=src/rate.rs");
    println!("cargo:rerun-if-changed=build.rs");
}
