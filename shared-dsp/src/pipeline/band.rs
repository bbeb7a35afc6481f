//! The band's two filter sections, designed apart from the pipeline that
//! runs them.
//!
//! [`super::Pipeline::new`] designs them itself (Butterworth, in `f64`,
//! [`crate::design`]) for whatever rate it is given. A board whose rate is
//! fixed can instead design them on the PC when it is built, with this same
//! code, and hand the result to [`super::Pipeline::with_band`]: the
//! double-precision design code and its soft-float routines are then not
//! linked into the board's image. [`BandSections::source`] writes the
//! sections as a Rust constant, every number as its exact bit pattern, so
//! the board runs exactly the filters [`super::Pipeline::new`] would have
//! designed on it.

use core::fmt;

use super::conditioning::BAND_ORDER;
use super::settings::{Config, PipelineError};
use crate::design::{butterworth_highpass, butterworth_lowpass};
use crate::filter::{Cascade, Delta};

/// The band's filters as the pipeline runs them, and what they were
/// designed for.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BandSections {
    /// Input rate designed for, Hz.
    pub sample_rate_hz: f32,
    /// The band's lower edge designed for, Hz.
    pub band_low_hz: f32,
    /// The band's upper edge designed for, Hz.
    pub band_high_hz: f32,
    /// The upper edge: a Butterworth low-pass of order [`BAND_ORDER`] at
    /// the input rate.
    pub lowpass: Delta,
    /// The lower edge: a Butterworth high-pass of order [`BAND_ORDER`] at
    /// the detector's rate.
    pub highpass: Delta,
}

impl BandSections {
    /// Design the band for `config`, as [`super::Pipeline::new`] does: the
    /// same checks, the same refusals, in the same order.
    pub fn design(config: &Config) -> Result<Self, PipelineError> {
        config.check()?;
        let o = &config.options;
        let fs = config.sample_rate_hz;
        let fd = fs / config.decimation() as f32;
        let lowpass = lowpass(o.band_high_hz, fs)?;
        let highpass = highpass(o.band_low_hz, fd)?;
        Ok(Self {
            sample_rate_hz: fs,
            band_low_hz: o.band_low_hz,
            band_high_hz: o.band_high_hz,
            lowpass,
            highpass,
        })
    }

    /// Designed for `config`'s rate and band edges (compared bit for bit)?
    pub fn fits(&self, config: &Config) -> bool {
        let o = &config.options;
        [
            (self.sample_rate_hz, config.sample_rate_hz),
            (self.band_low_hz, o.band_low_hz),
            (self.band_high_hz, o.band_high_hz),
        ]
        .iter()
        .all(|(a, b)| a.to_bits() == b.to_bits())
    }

    /// These sections as a Rust expression of type `BandSections` (full
    /// paths, every `f32` as `f32::from_bits`, its value in a comment), for
    /// a build script to write into a constant.
    pub fn source(&self) -> BandSource<'_> {
        BandSource(self)
    }
}

/// The band's upper edge at `corner_hz` for input at `fs` Hz.
pub(super) fn lowpass(corner_hz: f32, fs: f32) -> Result<Delta, PipelineError> {
    butterworth_lowpass(BAND_ORDER, corner_hz as f64, fs as f64)
        .and_then(|d| d.cascade())
        .map(one)
        .map_err(PipelineError::BandHigh)
}

/// The band's lower edge at `corner_hz` for the detector's rate `fd`.
pub(super) fn highpass(corner_hz: f32, fd: f32) -> Result<Delta, PipelineError> {
    butterworth_highpass(BAND_ORDER, corner_hz as f64, fd as f64)
        .and_then(|d| d.cascade())
        .map(one)
        .map_err(PipelineError::BandLow)
}

/// The one section of an order-2 edge.
fn one(c: Cascade<Delta, 1>) -> Delta {
    c.sections()[0]
}

/// [`BandSections::source`]'s text.
#[derive(Clone, Copy, Debug)]
pub struct BandSource<'a>(&'a BandSections);

impl fmt::Display for BandSource<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let b = self.0;
        writeln!(f, "plethwire_dsp::pipeline::BandSections {{")?;
        for (name, v) in [
            ("sample_rate_hz", b.sample_rate_hz),
            ("band_low_hz", b.band_low_hz),
            ("band_high_hz", b.band_high_hz),
        ] {
            writeln!(f, "    {name}: {},", Bits(v))?;
        }
        for (name, d) in [("lowpass", &b.lowpass), ("highpass", &b.highpass)] {
            writeln!(f, "    {name}: plethwire_dsp::filter::Delta {{")?;
            for (c, v) in [
                ("c0", d.c0),
                ("c1", d.c1),
                ("c2", d.c2),
                ("g1", d.g1),
                ("g2", d.g2),
            ] {
                writeln!(f, "        {c}: {},", Bits(v))?;
            }
            writeln!(f, "    }},")?;
        }
        write!(f, "}}")
    }
}

/// An `f32` as `f32::from_bits(0x…) /* value */`.
struct Bits(f32);

impl fmt::Display for Bits {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "f32::from_bits(0x{:08x}) /* {:e} */",
            self.0.to_bits(),
            self.0
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::string::ToString;
    use std::vec::Vec;

    /// Every `0x…` bit pattern in `text`, in order.
    fn patterns(text: &str) -> Vec<u32> {
        text.split("0x")
            .skip(1)
            .map(|s| u32::from_str_radix(&s[..8], 16).unwrap())
            .collect()
    }

    fn values(b: &BandSections) -> Vec<u32> {
        let d = |d: &Delta| [d.c0, d.c1, d.c2, d.g1, d.g2];
        [b.sample_rate_hz, b.band_low_hz, b.band_high_hz]
            .into_iter()
            .chain(d(&b.lowpass))
            .chain(d(&b.highpass))
            .map(f32::to_bits)
            .collect()
    }

    #[test]
    fn the_source_holds_every_bit_of_every_number() {
        for fs in [25.0, 125.0, 250.0, 1000.0] {
            let b = BandSections::design(&Config::new(fs)).unwrap();
            let text = b.source().to_string();
            assert_eq!(patterns(&text), values(&b), "{fs} Hz:\n{text}");
            assert!(text.starts_with("plethwire_dsp::pipeline::BandSections {"));
            assert_eq!(text.matches("f32::from_bits(").count(), 13);
        }
    }

    #[test]
    fn the_design_is_the_pipelines_own() {
        // The low-pass at the input rate, the high-pass at the detector's
        // (250 Hz decimates by 4): both edges' designs, quantised as the
        // pipeline quantises them.
        let c = Config::new(250.0);
        let b = BandSections::design(&c).unwrap();
        let lp: Cascade<Delta, 1> = butterworth_lowpass(2, 8.0, 250.0)
            .unwrap()
            .cascade()
            .unwrap();
        let hp: Cascade<Delta, 1> = butterworth_highpass(2, 0.5, 62.5)
            .unwrap()
            .cascade()
            .unwrap();
        assert_eq!(b.lowpass, lp.sections()[0]);
        assert_eq!(b.highpass, hp.sections()[0]);
        assert!(b.fits(&c));
    }

    #[test]
    fn sections_fit_only_their_own_rate_and_edges() {
        let b = BandSections::design(&Config::new(250.0)).unwrap();
        let mut other = Config::new(250.0);
        other.options.band_high_hz = 7.5;
        assert!(!b.fits(&other));
        assert!(!b.fits(&Config::new(125.0)));
        let mut low = Config::new(250.0);
        low.options.band_low_hz = 0.4;
        assert!(!b.fits(&low));
        // The other options are not the band's business.
        let mut rails = Config::new(250.0);
        rails.options.rails = Some((-4095.0, 4095.0));
        rails.options.hr_window_s = 20.0;
        assert!(b.fits(&rails));
    }

    #[test]
    fn a_pipeline_on_designed_sections_is_the_one_new_builds() {
        use super::super::Pipeline;
        let mut c = Config::new(250.0);
        c.options.rails = Some((-4095.0, 4095.0));
        let band = BandSections::design(&c).unwrap();
        let mut designed = Pipeline::new(c).unwrap();
        let mut given = Pipeline::with_band(c, &band).unwrap();
        let mut beats = 0;
        // 20 s of a 1.2 Hz pulse on a drifting level, with a step.
        for n in 0..5000 {
            let t = n as f32 / 250.0;
            let pulse = libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t);
            let x = 300.0 * libm::powf(pulse.max(0.0), 3.0)
                + 20.0 * t
                + if n >= 3000 { 20_000.0 } else { 0.0 };
            let (a, b) = (designed.push(x), given.push(x));
            assert_eq!(a, b, "sample {n}");
            let (ya, yb) = (designed.band_passed(), given.band_passed());
            assert_eq!(ya.to_bits(), yb.to_bits(), "sample {n}");
            beats += usize::from(a.beat.is_some());
        }
        assert!(beats > 15, "{beats} beats");
        assert!(designed.restarts() > 0, "the step restarts the filters");
    }

    #[test]
    fn a_pipeline_refuses_sections_designed_for_something_else() {
        use super::super::Pipeline;
        let band = BandSections::design(&Config::new(250.0)).unwrap();
        let e = Pipeline::with_band(Config::new(300.0), &band).err();
        assert_eq!(e, Some(PipelineError::BandMismatch));
        assert!(e.unwrap().to_string().contains("designed for another"));
        let mut edges = Config::new(250.0);
        edges.options.band_high_hz = 6.0;
        assert_eq!(
            Pipeline::with_band(edges, &band).err(),
            Some(PipelineError::BandMismatch)
        );
        // The rate is still checked first, with its own words.
        assert_eq!(
            Pipeline::with_band(Config::new(5000.0), &band).err(),
            Some(PipelineError::SampleRate)
        );
    }

    #[test]
    fn refusals_are_the_pipelines() {
        let mut c = Config::new(125.0);
        c.options.band_high_hz = 70.0;
        assert_eq!(
            BandSections::design(&c).err(),
            super::super::Pipeline::new(c).err()
        );
        assert_eq!(
            BandSections::design(&Config::new(10.0)).err(),
            Some(PipelineError::SampleRate)
        );
    }
}
