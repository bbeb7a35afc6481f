//! Puts this board's `memory.x` where the linker finds it (cortex-m-rt's
//! `link.x` INCLUDEs it; the linker arguments themselves are in
//! `.cargo/config.toml`, where cortex-m-rt's template keeps them), and
//! designs the pipeline's filters for a few rates here, on the PC, exactly
//! as the real boards' build scripts do for theirs: `bands.rs` in OUT_DIR
//! holds them as `BUILT_BANDS`. The self-check designs the same on the
//! device and prints both, so the host test sees that a board's
//! build-time filters are what `Pipeline::new` designs on the chip. (This
//! board itself designs at run time, for any recording's rate.)

use std::env;
use std::fs;
use std::path::PathBuf;

use plethwire_dsp::pipeline::{BandSections, Config};

/// Rates designed for: the real boards' 250 Hz, the ends of the range,
/// and rates of the shared recordings.
const RATES_HZ: [f32; 7] = [25.0, 100.0, 125.0, 250.0, 300.0, 500.0, 1000.0];

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::write(out.join("memory.x"), include_bytes!("memory.x")).expect("write memory.x");
    println!("cargo:rustc-link-search={}", out.display());

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

    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");
}
