//! Does a response pass the heart band? Heart rates of 30 to 220 beats per
//! minute are 0.5 to 3.7 Hz; a chain passes when it loses less than 3 dB
//! against its mid-band gain anywhere in that band.

use serde::Serialize;

use super::quantity::{bpm, sig3};

/// Heart rates of 30 to 220 beats per minute, Hz.
pub const HEART_BAND_HZ: (f64, f64) = crate::plot::HEART_BAND_HZ;

/// Most loss allowed in the band, dB below mid-band.
pub const ALLOWED_LOSS_DB: f64 = 3.0;

/// Points at which the band is examined, edges included.
const BAND_POINTS: usize = 200;

/// The loss at one frequency.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Loss {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// How far the gain is below mid-band, dB (0 or more).
    pub loss_db: f64,
    /// More than [`ALLOWED_LOSS_DB`].
    pub fails: bool,
}

impl Loss {
    fn at(frequency_hz: f64, relative_db: &impl Fn(f64) -> f64) -> Self {
        let loss_db = (-relative_db(frequency_hz)).max(0.0);
        Self {
            frequency_hz,
            loss_db,
            fails: loss_db >= ALLOWED_LOSS_DB,
        }
    }

    fn phrase(&self) -> String {
        format!(
            "{} Hz ({:.0} bpm) is {} dB below mid-band, {} dB past the {ALLOWED_LOSS_DB} dB allowed",
            sig3(self.frequency_hz),
            bpm(self.frequency_hz),
            sig3(self.loss_db),
            sig3(self.loss_db - ALLOWED_LOSS_DB)
        )
    }
}

/// The heart band verdict for one response.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BandCheck {
    /// At 0.5 Hz.
    pub low_edge: Loss,
    /// At 3.7 Hz.
    pub high_edge: Loss,
    /// The largest loss anywhere in the band.
    pub worst: Loss,
    /// Less than [`ALLOWED_LOSS_DB`] everywhere in the band.
    pub passes: bool,
    /// One sentence: passes, or which edge fails and by how much.
    pub verdict: String,
}

/// Check a response given as its gain relative to mid-band (dB, 0 or
/// below) at any frequency.
pub fn check_band(relative_db: impl Fn(f64) -> f64) -> BandCheck {
    let (lo, hi) = HEART_BAND_HZ;
    let low_edge = Loss::at(lo, &relative_db);
    let high_edge = Loss::at(hi, &relative_db);
    let step = (hi / lo).ln() / (BAND_POINTS - 1) as f64;
    let worst = (1..BAND_POINTS - 1)
        .map(|i| Loss::at(lo * (step * i as f64).exp(), &relative_db))
        .chain([low_edge, high_edge])
        .fold(low_edge, |w, l| if l.loss_db > w.loss_db { l } else { w });
    let passes = !worst.fails;
    let verdict = match (low_edge.fails, high_edge.fails) {
        _ if passes => format!(
            "passes: at most {} dB below mid-band (at {} Hz)",
            sig3(worst.loss_db),
            sig3(worst.frequency_hz)
        ),
        (true, true) => format!(
            "fails at both edges: {}; {}",
            low_edge.phrase(),
            high_edge.phrase()
        ),
        (true, false) => format!("fails at the lower edge: {}", low_edge.phrase()),
        (false, true) => format!("fails at the upper edge: {}", high_edge.phrase()),
        (false, false) => format!("fails inside the band: {}", worst.phrase()),
    };
    BandCheck {
        low_edge,
        high_edge,
        worst,
        passes,
        verdict,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A first-order low-pass at `fc`: −10·log10(1 + (f/fc)²) dB.
    fn low_pass(fc: f64) -> impl Fn(f64) -> f64 {
        move |f: f64| -10.0 * (1.0 + (f / fc).powi(2)).log10()
    }

    #[test]
    fn a_low_pass_at_2_hz_fails_the_upper_edge() {
        let c = check_band(low_pass(2.0));
        assert!(!c.passes && !c.low_edge.fails && c.high_edge.fails);
        // 10·log10(1 + (3.7/2)²) = 6.457 dB.
        assert!((c.high_edge.loss_db - 6.457).abs() < 1e-3);
        assert_eq!(
            c.verdict,
            "fails at the upper edge: 3.7 Hz (222 bpm) is 6.46 dB below mid-band, \
             3.46 dB past the 3 dB allowed"
        );
    }

    #[test]
    fn a_wide_band_passes_and_names_its_worst_point() {
        let c = check_band(low_pass(20.0));
        assert!(c.passes);
        assert_eq!(c.worst.frequency_hz, 3.7);
        // 10·log10(1 + (3.7/20)²) = 0.1461 dB.
        assert_eq!(
            c.verdict,
            "passes: at most 0.146 dB below mid-band (at 3.7 Hz)"
        );
    }

    #[test]
    fn a_dip_inside_the_band_is_found() {
        let dip = |f: f64| if (1.5..1.6).contains(&f) { -4.0 } else { 0.0 };
        let c = check_band(dip);
        assert!(!c.passes && !c.low_edge.fails && !c.high_edge.fails);
        assert!(
            c.verdict.starts_with("fails inside the band: 1.5"),
            "{}",
            c.verdict
        );
    }

    #[test]
    fn both_edges_can_fail() {
        let c = check_band(|f: f64| low_pass(2.0)(f) + low_pass(1.0)(1.0 / f));
        assert!(c.low_edge.fails && c.high_edge.fails);
        assert!(c
            .verdict
            .starts_with("fails at both edges: 0.5 Hz (30 bpm)"));
    }
}
