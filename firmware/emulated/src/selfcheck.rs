//! The self-check: designs the band-pass filter on the device, runs both
//! section structures over a built-in signal, designs the pipeline's band
//! for a few rates ([`BandSections::design`], what `Pipeline::new` runs)
//! next to the same designed on the PC by build.rs (what the real boards
//! run), and prints every number as raw bits on the host's standard
//! output. The host test suite re-does the same
//! work and requires the results to match bit for bit, so a difference in
//! float handling between the board and the laptop shows up as a failing
//! test instead of a subtle drift in detected beats.
//!
//! Output, one record per line (all numbers are IEEE-754 bit patterns in
//! lowercase hex: 16 digits for `f64`, 8 for `f32`):
//!
//! ```text
//! plethwire-emulated selfcheck v2
//! section <i> <b0> <b1> <b2> <a1> <a2>
//! sample <n> <x> <delta y> <df2t y>
//! band <i> <rate> <low> <high> <lowpass c0 c1 c2 g1 g2> <highpass c0 c1 c2 g1 g2>
//! built <i> <the same 13 numbers, from build.rs>
//! end
//! ```

use cortex_m_semihosting::hprintln;
use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::{Cascade, Delta, Df2t};
use plethwire_dsp::pipeline::{BandSections, Config};

include!(concat!(env!("OUT_DIR"), "/bands.rs"));

/// Number of built-in input samples; the host check insists on exactly this many.
const SAMPLES: usize = 64;
/// Band-pass order (per edge) of the self-check design; two biquad sections.
const ORDER: usize = 2;
/// Lower band edge in Hz: removes baseline wander.
const LOW_HZ: f64 = 0.5;
/// Upper band edge in Hz: keeps the pulse and its first harmonics.
const HIGH_HZ: f64 = 8.0;
/// Sample rate in Hz of the (pretend) ADC.
const FS_HZ: f64 = 100.0;

/// Print the report on the host's standard output.
pub fn run() {
    hprintln!("plethwire-emulated selfcheck v2");

    // Designing here rather than on the host is the point: it exercises the
    // target's soft-f64 arithmetic, which must agree with the laptop's.
    let design = butterworth_bandpass(ORDER, LOW_HZ, HIGH_HZ, FS_HZ).unwrap();
    for (i, s) in design.sections().iter().enumerate() {
        hprintln!(
            "section {} {:016x} {:016x} {:016x} {:016x} {:016x}",
            i,
            s.b0.to_bits(),
            s.b1.to_bits(),
            s.b2.to_bits(),
            s.a1.to_bits(),
            s.a2.to_bits()
        );
    }

    let mut delta: Cascade<Delta, 2> = design.cascade().unwrap();
    let mut df2t: Cascade<Df2t, 2> = design.cascade().unwrap();
    let mut noise = Lcg(0x1234_5678);
    for n in 0..SAMPLES {
        let x = input(n, &mut noise);
        let yd = delta.process(x);
        let yt = df2t.process(x);
        hprintln!(
            "sample {} {:08x} {:08x} {:08x}",
            n,
            x.to_bits(),
            yd.to_bits(),
            yt.to_bits()
        );
    }

    for (i, (fs, built)) in BUILT_RATES_HZ.iter().zip(&BUILT_BANDS).enumerate() {
        // On the device, in its soft-float f64, as `Pipeline::new` does.
        let here = BandSections::design(&Config::new(*fs)).unwrap();
        print_band("band", i, &here);
        print_band("built", i, built);
    }

    hprintln!("end");
}

/// One `band` or `built` record: `b`'s 13 numbers as `f32` bits.
fn print_band(record: &str, i: usize, b: &BandSections) {
    let d = |d: &Delta| [d.c0, d.c1, d.c2, d.g1, d.g2].map(f32::to_bits);
    let (lp, hp) = (d(&b.lowpass), d(&b.highpass));
    hprintln!(
        "{} {} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x}",
        record,
        i,
        b.sample_rate_hz.to_bits(),
        b.band_low_hz.to_bits(),
        b.band_high_hz.to_bits(),
        lp[0],
        lp[1],
        lp[2],
        lp[3],
        lp[4],
        hp[0],
        hp[1],
        hp[2],
        hp[3],
        hp[4]
    );
}

/// Tiny linear congruential generator (Numerical Recipes constants).
///
/// Integer-only so the sequence is trivially identical everywhere; it adds
/// low-order bits to the input so rounding inside the filters is exercised.
struct Lcg(u32);

impl Lcg {
    /// Next value in `[-0.5, 0.5)`, built with plain f32 arithmetic.
    fn next(&mut self) -> f32 {
        self.0 = self.0.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
        // Top 16 bits are the best-mixed ones; 16 bits convert to f32 exactly.
        ((self.0 >> 16) as f32) / 65_536.0 - 0.5
    }
}

/// Sample `n` of the built-in test signal: a DC level (the LED's ambient
/// offset), a triangle "pulse" of period 16 samples, a step at the halfway
/// point (a finger pressing harder) and a little noise.
fn input(n: usize, noise: &mut Lcg) -> f32 {
    let phase = (n % 16) as f32;
    let triangle = if phase < 8.0 {
        phase / 8.0
    } else {
        (16.0 - phase) / 8.0
    };
    let step = if n >= SAMPLES / 2 { 0.125 } else { 0.0 };
    0.5 + 0.25 * triangle + step + 0.01 * noise.next()
}
