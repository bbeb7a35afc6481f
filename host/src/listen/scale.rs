//! How the board's `f32` samples become 16-bit stored values.
//!
//! Both signals share one gain, so the filtered trace is in the raw trace's
//! units: the raw span (the ADC rails when the hello gives them, else 4 ×
//! the spread of the first samples, and at least the signal's level, or 1)
//! goes onto 60 000 of the 65 536 codes, and the gain is rounded down to
//! 1, 2 or 5 × 10^k so the header reads plainly. Raw is centred with the
//! baseline; filtered has no DC and a baseline of 0, and being a band-pass
//! of raw, it stays within half the raw span. Values past ±32 767 are
//! stored at the limit and counted; non-finite values are stored as
//! −32 768, format 16's invalid-sample mark.

use serde::Serialize;

/// Codes the raw span is spread over: room to spare below 65 535.
const SPAN_CODES: f64 = 60_000.0;
/// Largest stored value; −32 768 is kept for invalid samples.
const LIMIT: i64 = 32_767;
/// Format 16's invalid-sample mark.
pub const INVALID: i32 = -32_768;

/// Where a scale came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ScaleSource {
    /// The ADC rails in the board's hello.
    Rails,
    /// The spread of the first samples.
    FirstSamples,
}

/// Gain and raw baseline of the record's two signals.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Scale {
    /// Stored units per input unit, both signals.
    pub gain: f64,
    /// Stored value of input 0 on the raw signal.
    pub raw_baseline: i32,
    /// What it was chosen from.
    pub source: ScaleSource,
}

impl Scale {
    /// From the ADC rails `lo`..`hi`, `None` unless both are finite and
    /// `hi > lo`.
    pub fn from_rails(lo: f32, hi: f32) -> Option<Scale> {
        let (lo, hi) = (f64::from(lo), f64::from(hi));
        (lo.is_finite() && hi.is_finite() && hi > lo)
            .then(|| Self::centred((lo + hi) / 2.0, hi - lo, ScaleSource::Rails))
    }

    /// From the first raw samples (non-finite ones ignored).
    pub fn from_samples(raw: impl IntoIterator<Item = f32>) -> Scale {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for x in raw.into_iter().map(f64::from).filter(|x| x.is_finite()) {
            lo = lo.min(x);
            hi = hi.max(x);
        }
        if lo > hi {
            return Self::centred(0.0, 1.0, ScaleSource::FirstSamples);
        }
        let centre = (lo + hi) / 2.0;
        let span = (4.0 * (hi - lo)).max(centre.abs());
        let span = if span > 0.0 { span } else { 1.0 };
        Self::centred(centre, span, ScaleSource::FirstSamples)
    }

    fn centred(centre: f64, span: f64, source: ScaleSource) -> Scale {
        let gain = nice_floor(SPAN_CODES / span);
        let baseline = (-(centre * gain).round()).clamp(-1e9, 1e9) as i32;
        Scale {
            gain,
            raw_baseline: baseline,
            source,
        }
    }

    /// Stored raw value, and whether it had to be clipped.
    pub fn store_raw(&self, x: f32) -> (i32, bool) {
        store(x, self.gain, self.raw_baseline)
    }

    /// Stored filtered value, and whether it had to be clipped.
    pub fn store_filtered(&self, x: f32) -> (i32, bool) {
        store(x, self.gain, 0)
    }
}

fn store(x: f32, gain: f64, baseline: i32) -> (i32, bool) {
    let x = f64::from(x);
    if !x.is_finite() {
        return (INVALID, false);
    }
    let v = (x * gain).round() + f64::from(baseline);
    // The float clamp first: a huge value must not wrap in the cast.
    let v = v.clamp(-1e12, 1e12) as i64;
    let clipped = v.clamp(-LIMIT, LIMIT);
    (clipped as i32, clipped != v)
}

/// The largest 1, 2 or 5 × 10^k not above `limit` (which is above 0).
fn nice_floor(limit: f64) -> f64 {
    let k = limit.log10().floor();
    let decade = 10f64.powf(k);
    let m = limit / decade;
    let step = if m >= 5.0 {
        5.0
    } else if m >= 2.0 {
        2.0
    } else {
        1.0
    };
    // Shortest decimal form, so the header shows 0.02 and not 0.0200…04.
    format!("{:.12e}", step * decade).parse().unwrap_or(1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gains_are_one_two_or_five_times_a_power_of_ten() {
        assert_eq!(nice_floor(14.65), 10.0);
        assert_eq!(nice_floor(60_000.0 / 3.3), 10_000.0);
        assert_eq!(nice_floor(0.037), 0.02);
        assert_eq!(nice_floor(5.0), 5.0);
        assert_eq!(nice_floor(1.999), 1.0);
    }

    #[test]
    fn twelve_bit_rails_keep_whole_counts_exact() {
        let s = Scale::from_rails(0.0, 4095.0).unwrap();
        assert_eq!((s.gain, s.raw_baseline), (10.0, -20_475));
        for x in [0.0f32, 1.0, 2047.0, 4095.0] {
            let (v, clipped) = s.store_raw(x);
            assert!(!clipped);
            assert_eq!(f64::from(v - s.raw_baseline) / s.gain, f64::from(x));
        }
        assert_eq!(s.store_filtered(-12.34), (-123, false));
        assert!(Scale::from_rails(1.0, 1.0).is_none());
        assert!(Scale::from_rails(0.0, f32::NAN).is_none());
    }

    #[test]
    fn out_of_range_is_clipped_and_non_finite_is_invalid() {
        let s = Scale::from_rails(0.0, 4095.0).unwrap();
        assert_eq!(s.store_raw(1e9), (32_767, true));
        assert_eq!(s.store_raw(-1e30), (-32_767, true));
        assert_eq!(s.store_filtered(f32::NAN), (INVALID, false));
        assert_eq!(s.store_raw(f32::INFINITY), (INVALID, false));
    }

    #[test]
    fn first_samples_leave_headroom() {
        // An AC-coupled signal of ±0.5: span 4, gain 10 000.
        let s = Scale::from_samples([-0.5, 0.5, 0.1, f32::NAN]);
        assert_eq!((s.gain, s.raw_baseline), (10_000.0, 0));
        // A level of 2000 with a small pulse: the level sets the span.
        let s = Scale::from_samples([1990.0, 2010.0]);
        assert_eq!(s.gain, 20.0);
        assert_eq!(s.store_raw(2000.0), (0, false));
        assert!(!s.store_raw(3400.0).1 && s.store_raw(3700.0).1);
        // A flat zero line still gets a usable scale.
        let s = Scale::from_samples([0.0, 0.0]);
        assert_eq!((s.gain, s.raw_baseline), (50_000.0, 0));
        assert_eq!(Scale::from_samples([]).gain, 50_000.0);
    }
}
