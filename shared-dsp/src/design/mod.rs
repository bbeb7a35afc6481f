//! Filter design by the bilinear transform with frequency pre-warping.
//!
//! Every function checks its arguments, designs in double precision, and
//! returns a [`Design`]: up to [`MAX_SECTIONS`] second-order sections in
//! scipy's order and sign convention, each checked for strict stability.
//! Turn it into a running filter with [`Design::cascade`].
//!
//! ```
//! use plethwire_dsp::design::butterworth_bandpass;
//! use plethwire_dsp::filter::{Cascade, Delta};
//! let design = butterworth_bandpass(2, 0.5, 8.0, 100.0)?;
//! let mut filter: Cascade<Delta, 2> = design.cascade()?;
//! let y = filter.process(1.0);
//! # let _ = y;
//! # Ok::<(), plethwire_dsp::DesignError>(())
//! ```

mod sos;
mod zpk;

pub use zpk::{Roots, Zpk, MAX_ROOTS};

use crate::filter::{Biquad, Cascade, Section};
use crate::math::{cos, sqrt, tan, PI};
use core::fmt;
use heapless::Vec;

/// Highest Butterworth order accepted.
pub const MAX_ORDER: usize = 8;

/// Most sections a [`Design`] holds: a band-pass of order 8 (8 sections)
/// chained with up to four more (notches, a DC blocker).
pub const MAX_SECTIONS: usize = 12;

/// Why a design was refused. Small and `Copy`, so firmware can match on it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DesignError {
    /// The sample rate is not a positive finite number.
    InvalidSampleRate,
    /// A corner or centre frequency is zero, negative or not finite.
    NonPositiveCorner,
    /// A corner or centre frequency is at or above the Nyquist frequency.
    CornerAtOrAboveNyquist,
    /// A band's lower edge is not below its upper edge.
    BandEdgesReversed,
    /// The order is 0 or above [`MAX_ORDER`].
    OrderOutOfRange,
    /// A notch's quality factor is not a positive finite number.
    InvalidQuality,
    /// A section's poles are not strictly inside the unit circle (after
    /// rounding to the target number format).
    Unstable,
    /// The design has more sections than the target can hold.
    TooManySections,
    /// A coefficient does not fit the fixed-point format.
    NotRepresentable,
}

impl fmt::Display for DesignError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::InvalidSampleRate => "the sample rate must be a finite number above 0 Hz",
            Self::NonPositiveCorner => "a corner frequency must be above 0 Hz",
            Self::CornerAtOrAboveNyquist => {
                "a corner frequency must be below half the sample rate (Nyquist)"
            }
            Self::BandEdgesReversed => "the band's low edge must be below its high edge",
            Self::OrderOutOfRange => "the order must be between 1 and 8",
            Self::InvalidQuality => "the notch quality factor must be above 0",
            Self::Unstable => "a section would be unstable (a pole on or outside the unit circle)",
            Self::TooManySections => "the design has more sections than the filter can hold",
            Self::NotRepresentable => "a coefficient does not fit the fixed-point format",
        })
    }
}

#[cfg(feature = "std")]
impl std::error::Error for DesignError {}

/// A designed filter: second-order sections in double precision, in the
/// order they are applied, with the scipy sign convention (see [`Biquad`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Design {
    sections: Vec<Biquad<f64>, MAX_SECTIONS>,
}

impl Design {
    /// A design from explicit sections (at most [`MAX_SECTIONS`]), each
    /// checked for stability.
    pub fn from_sections(sections: &[Biquad<f64>]) -> Result<Self, DesignError> {
        let sections = Vec::from_slice(sections).map_err(|_| DesignError::TooManySections)?;
        if sections.iter().all(|s| s.is_stable()) {
            Ok(Self { sections })
        } else {
            Err(DesignError::Unstable)
        }
    }

    /// The sections, first applied first.
    pub fn sections(&self) -> &[Biquad<f64>] {
        &self.sections
    }

    /// Number of sections.
    pub fn len(&self) -> usize {
        self.sections.len()
    }

    /// No sections (a pass-through)?
    pub fn is_empty(&self) -> bool {
        self.sections.is_empty()
    }

    /// This design followed by `next` (e.g. a band-pass then a mains notch).
    pub fn then(&self, next: &Design) -> Result<Self, DesignError> {
        let mut d = self.clone();
        d.sections
            .extend_from_slice(next.sections())
            .map_err(|_| DesignError::TooManySections)?;
        Ok(d)
    }

    /// Quantise into a running cascade of `N` sections of structure `S`.
    /// `N` may exceed the design's length (the spare slots are never run);
    /// each quantised section is checked for stability.
    pub fn cascade<S: Section, const N: usize>(&self) -> Result<Cascade<S, N>, DesignError> {
        if self.len() > N {
            return Err(DesignError::TooManySections);
        }
        let mut sections = [S::identity(); N];
        for (dst, src) in sections.iter_mut().zip(self.sections()) {
            *dst = S::from_biquad(src)?;
        }
        Ok(Cascade::with_active(sections, self.len()))
    }

    fn from_zpk(zpk: &Zpk) -> Result<Self, DesignError> {
        let (sections, n) = sos::zpk_to_sections(zpk);
        Self::from_sections(&sections[..n])
    }
}

fn check_rate(fs: f64) -> Result<(), DesignError> {
    if fs.is_finite() && fs > 0.0 {
        Ok(())
    } else {
        Err(DesignError::InvalidSampleRate)
    }
}

fn check_corner(f: f64, fs: f64) -> Result<(), DesignError> {
    if !(f.is_finite() && f > 0.0) {
        Err(DesignError::NonPositiveCorner)
    } else if f >= fs / 2.0 {
        Err(DesignError::CornerAtOrAboveNyquist)
    } else {
        Ok(())
    }
}

fn check_order(order: usize) -> Result<(), DesignError> {
    if (1..=MAX_ORDER).contains(&order) {
        Ok(())
    } else {
        Err(DesignError::OrderOutOfRange)
    }
}

/// Pre-warped analog corner for the bilinear transform, computed as scipy's
/// `iirfilter` does (internal rate 2, corner normalised to Nyquist) so the
/// designs agree with it to rounding.
fn warp(f: f64, fs: f64) -> f64 {
    let wn = f / (fs / 2.0);
    4.0 * tan(PI * wn / 2.0)
}

/// The bilinear rate matching [`warp`]'s normalisation.
const WARP_FS: f64 = 2.0;

/// Butterworth low-pass of `order` (1 to 8) with its −3.01 dB corner at
/// `corner_hz`. Equals `scipy.signal.butter(order, corner_hz, 'lowpass',
/// fs=fs_hz, output='sos')`. S. Butterworth, "On the theory of filter
/// amplifiers", Wireless Engineer 7:536–541, 1930.
pub fn butterworth_lowpass(
    order: usize,
    corner_hz: f64,
    fs_hz: f64,
) -> Result<Design, DesignError> {
    butterworth_one_corner(order, corner_hz, fs_hz, Zpk::lowpass)
}

/// Butterworth high-pass of `order` (1 to 8) with its −3.01 dB corner at
/// `corner_hz`. Equals `scipy.signal.butter(order, corner_hz, 'highpass',
/// fs=fs_hz, output='sos')`.
pub fn butterworth_highpass(
    order: usize,
    corner_hz: f64,
    fs_hz: f64,
) -> Result<Design, DesignError> {
    butterworth_one_corner(order, corner_hz, fs_hz, Zpk::highpass)
}

/// Checks, prototype, frequency transformation `to_corner`, bilinear.
fn butterworth_one_corner(
    order: usize,
    corner_hz: f64,
    fs_hz: f64,
    to_corner: fn(&Zpk, f64) -> Zpk,
) -> Result<Design, DesignError> {
    check_rate(fs_hz)?;
    check_order(order)?;
    check_corner(corner_hz, fs_hz)?;
    let analog = to_corner(&Zpk::butterworth_prototype(order), warp(corner_hz, fs_hz));
    Design::from_zpk(&analog.bilinear(WARP_FS))
}

/// Butterworth band-pass from a low-pass prototype of `order` (1 to 8; the
/// band-pass has twice as many poles and `order` sections), −3.01 dB at
/// both edges. Equals `scipy.signal.butter(order, [low_hz, high_hz],
/// 'bandpass', fs=fs_hz, output='sos')`.
pub fn butterworth_bandpass(
    order: usize,
    low_hz: f64,
    high_hz: f64,
    fs_hz: f64,
) -> Result<Design, DesignError> {
    check_rate(fs_hz)?;
    check_order(order)?;
    check_corner(low_hz, fs_hz)?;
    check_corner(high_hz, fs_hz)?;
    if low_hz >= high_hz {
        return Err(DesignError::BandEdgesReversed);
    }
    let (w1, w2) = (warp(low_hz, fs_hz), warp(high_hz, fs_hz));
    let zpk = Zpk::butterworth_prototype(order)
        .bandpass(sqrt(w1 * w2), w2 - w1)
        .bilinear(WARP_FS);
    Design::from_zpk(&zpk)
}

/// Second-order notch at `centre_hz` with quality factor `quality`
/// (centre / −3 dB width), for 50 or 60 Hz mains hum. Zeros on the unit
/// circle at the centre, unity gain at DC and Nyquist. Same formula as
/// `scipy.signal.iirnotch(centre_hz, quality, fs=fs_hz)`: the bilinear
/// transform of an analog notch with its bandwidth pre-warped (S. J.
/// Orfanidis, *Introduction to Signal Processing*, 1996, §11.3).
pub fn notch(centre_hz: f64, quality: f64, fs_hz: f64) -> Result<Design, DesignError> {
    check_rate(fs_hz)?;
    check_corner(centre_hz, fs_hz)?;
    if !(quality.is_finite() && quality > 0.0) {
        return Err(DesignError::InvalidQuality);
    }
    let w0 = 2.0 * centre_hz / fs_hz;
    let bw = w0 / quality * PI;
    let w0 = w0 * PI;
    let gain = 1.0 / (1.0 + tan(bw / 2.0));
    let c = cos(w0);
    Design::from_sections(&[Biquad {
        b0: gain,
        b1: -2.0 * gain * c,
        b2: gain,
        a1: -2.0 * gain * c,
        a2: 2.0 * gain - 1.0,
    }])
}

/// First-order DC blocker `H(z) = g·(1 − z⁻¹)/(1 − R·z⁻¹)` with its −3.01 dB
/// corner at `corner_hz`: the bilinear transform of `s/(s + ω)` with the
/// corner pre-warped, `R = (1 − t)/(1 + t)`, `t = tan(π·fc/fs)`,
/// `g = (1 + R)/2` (unity gain at Nyquist). Identical to
/// `scipy.signal.butter(1, corner_hz, 'highpass', fs=fs_hz)`.
pub fn dc_blocker(corner_hz: f64, fs_hz: f64) -> Result<Design, DesignError> {
    check_rate(fs_hz)?;
    check_corner(corner_hz, fs_hz)?;
    let t = tan(PI * corner_hz / fs_hz);
    let r = (1.0 - t) / (1.0 + t);
    let g = (1.0 + r) / 2.0;
    Design::from_sections(&[Biquad {
        b0: g,
        b1: -g,
        b2: 0.0,
        a1: -r,
        a2: 0.0,
    }])
}
