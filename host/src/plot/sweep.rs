//! Frequency sweeps of a cascade and the phase made continuous along one:
//! the data of every frequency-response plot.

use plethwire_dsp::filter::Biquad;
use plethwire_dsp::response::{response, Response};
use std::f64::consts::PI;

/// Points in the frequency sweep of a plot.
pub const SWEEP_POINTS: usize = 600;

/// `points` log-spaced frequencies from `lo` to `hi`, Hz, plus those of
/// `extra_hz` strictly inside (corners and notch centres, so a narrow
/// notch is drawn at its true depth), ascending without repeats.
pub fn log_frequencies(lo: f64, hi: f64, points: usize, extra_hz: &[f64]) -> Vec<f64> {
    let step = (hi / lo).ln() / (points - 1) as f64;
    let mut f: Vec<f64> = (0..points)
        .map(|i| lo * (step * i as f64).exp())
        .chain(extra_hz.iter().copied().filter(|&x| x > lo && x < hi))
        .collect();
    f.sort_by(f64::total_cmp);
    f.dedup();
    f
}

/// The response of design and board cascade at log-spaced frequencies.
#[derive(Clone, Debug)]
pub struct Sweep {
    /// Frequencies, Hz, ascending.
    pub frequencies_hz: Vec<f64>,
    /// Response of the `f64` design at each frequency.
    pub design: Vec<Response>,
    /// Response of the board's cascade at each frequency.
    pub board: Vec<Response>,
}

impl Sweep {
    /// [`SWEEP_POINTS`] frequencies from about `rate/20000` (at least
    /// 0.01 Hz, and well below Nyquist for very low rates) up to just below
    /// Nyquist, plus those of `extra_hz` inside that range.
    pub fn new(
        design: &[Biquad<f64>],
        board: &[Biquad<f64>],
        sample_rate_hz: f64,
        extra_hz: &[f64],
    ) -> Self {
        let (lo, hi) = axis_range_hz(sample_rate_hz);
        // Stop just short of Nyquist: zeros at z = −1 leave the phase there
        // undefined, which would draw a spurious jump at the right edge.
        let top = hi * (1.0 - 1e-4);
        let frequencies_hz = log_frequencies(lo, top, SWEEP_POINTS, extra_hz);
        let eval = |s: &[Biquad<f64>]| {
            frequencies_hz
                .iter()
                .map(|&f| response(s, f, sample_rate_hz))
                .collect()
        };
        Self {
            design: eval(design),
            board: eval(board),
            frequencies_hz,
        }
    }
}

/// The frequency axis of a digital filter's plot at `sample_rate_hz`, Hz.
pub fn axis_range_hz(sample_rate_hz: f64) -> (f64, f64) {
    let nyquist = sample_rate_hz / 2.0;
    let lo = (sample_rate_hz / 20_000.0).max(0.01).min(nyquist / 100.0);
    (lo, nyquist)
}

/// Phase along a sweep in degrees, with jumps of more than half a turn
/// between neighbours taken out, so the curve is continuous.
pub fn unwrapped_phase_deg(points: &[Response]) -> Vec<f64> {
    let mut out = Vec::with_capacity(points.len());
    let mut offset = 0.0;
    let mut previous: Option<f64> = None;
    for p in points {
        let raw = p.phase_rad;
        if let Some(prev) = previous {
            let jump = raw + offset - prev;
            offset -= (jump / (2.0 * PI)).round() * 2.0 * PI;
        }
        let v = raw + offset;
        previous = Some(v);
        out.push(v.to_degrees());
    }
    out
}

/// An angle in degrees brought into (−180, 180].
pub fn wrap_deg(d: f64) -> f64 {
    let w = d - 360.0 * (d / 360.0).round();
    if w <= -180.0 {
        w + 360.0
    } else {
        w
    }
}

/// Phase of an analog response alone, and with a digital cascade after it
/// below the cascade's Nyquist, at each of `freqs`, degrees: followed along
/// `grid` (ascending, Hz) and `freqs` merged, from the lowest frequency,
/// where each starts within (−180, 180], without jumps of whole turns.
/// `analog_deg` must be continuous in frequency (a sum of factor angles);
/// the cascade's phase is unwrapped with [`unwrapped_phase_deg`]. A table
/// and a plot that both take their phase from here show the same numbers.
pub fn phase_track_deg(
    grid: &[f64],
    freqs: &[f64],
    analog_deg: impl Fn(f64) -> f64,
    (sections, rate_hz): (&[Biquad<f64>], f64),
) -> Vec<(f64, Option<f64>)> {
    let mut all: Vec<f64> = grid
        .iter()
        .chain(freqs)
        .copied()
        .filter(|f| f.is_finite() && *f > 0.0)
        .collect();
    all.sort_by(f64::total_cmp);
    all.dedup();
    let raw: Vec<f64> = all.iter().map(|&f| analog_deg(f)).collect();
    let turns = |first: f64| first - wrap_deg(first);
    let analog_shift = raw.first().map_or(0.0, |&p| turns(p));
    let top = rate_hz / 2.0 * (1.0 - 1e-4);
    let below = all.iter().take_while(|&&f| f < top).count();
    let responses: Vec<Response> = all[..below]
        .iter()
        .map(|&f| response(sections, f, rate_hz))
        .collect();
    let digital = unwrapped_phase_deg(&responses);
    let combined_shift = digital
        .first()
        .zip(raw.first())
        .map_or(0.0, |(d, a)| turns(a - analog_shift + d));
    freqs
        .iter()
        .map(|&f| {
            let i = all.binary_search_by(|g| g.total_cmp(&f)).ok();
            let analog = i.map_or(f64::NAN, |i| raw[i] - analog_shift);
            let combined = i
                .filter(|&i| i < below)
                .map(|i| analog + digital[i] - combined_shift);
            (analog, combined)
        })
        .collect()
}

/// The phase of `points` in degrees, each shifted by whole turns to lie
/// within half a turn of `reference_deg`. The board's cascade is drawn this
/// way against the design: near a notch, rounding can move a zero from on
/// the unit circle to just inside or outside it, which turns the unwrapped
/// phase a full turn one way or the other without changing the filter's
/// output at any frequency.
pub fn phase_near_deg(points: &[Response], reference_deg: &[f64]) -> Vec<f64> {
    points
        .iter()
        .zip(reference_deg)
        .map(|(p, r)| {
            let v = p.phase_rad.to_degrees();
            v + 360.0 * ((r - v) / 360.0).round()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::design::butterworth_lowpass;

    #[test]
    fn unwrapping_removes_turns_but_keeps_shape() {
        let d = butterworth_lowpass(6, 10.0, 100.0).unwrap();
        let sweep = Sweep::new(d.sections(), d.sections(), 100.0, &[]);
        let phase = unwrapped_phase_deg(&sweep.design);
        for w in phase.windows(2) {
            assert!((w[1] - w[0]).abs() < 180.0, "{} -> {}", w[0], w[1]);
        }
        // A sixth-order low-pass turns by nearly 6 × 90° by Nyquist.
        let last = *phase.last().unwrap();
        assert!((-540.0..-500.0).contains(&last), "{last}");
        for (u, r) in phase.iter().zip(&sweep.design) {
            let turns = (u.to_radians() - r.phase_rad) / (2.0 * PI);
            assert!((turns - turns.round()).abs() < 1e-9);
        }
    }

    #[test]
    fn sweep_spans_the_axis_log_evenly() {
        let d = butterworth_lowpass(2, 10.0, 1000.0).unwrap();
        let s = Sweep::new(d.sections(), d.sections(), 1000.0, &[]);
        assert_eq!(s.frequencies_hz.len(), SWEEP_POINTS);
        assert!((s.frequencies_hz[0] - 0.05).abs() < 1e-12);
        let last = *s.frequencies_hz.last().unwrap();
        assert!(last < 500.0 && last > 499.9);
        let r1 = s.frequencies_hz[1] / s.frequencies_hz[0];
        let r2 = s.frequencies_hz[SWEEP_POINTS - 1] / s.frequencies_hz[SWEEP_POINTS - 2];
        assert!((r1 - r2).abs() < 1e-9);
        assert_eq!(axis_range_hz(100.0), (0.01, 50.0));
        let with = Sweep::new(d.sections(), d.sections(), 1000.0, &[10.0, 0.001, 600.0]);
        assert_eq!(with.frequencies_hz.len(), SWEEP_POINTS + 1);
        assert!(with.frequencies_hz.contains(&10.0));
        assert!(with.frequencies_hz.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn angles_wrap_into_a_half_open_turn() {
        assert_eq!(wrap_deg(190.0), -170.0);
        assert_eq!(wrap_deg(-180.0), 180.0);
        assert_eq!(wrap_deg(180.0), 180.0);
        assert_eq!(wrap_deg(-45.0), -45.0);
        assert_eq!(wrap_deg(725.0), 5.0);
    }

    #[test]
    fn a_track_starts_within_a_turn_and_agrees_on_any_grid() {
        let d = butterworth_lowpass(2, 10.0, 100.0).unwrap();
        // An inverting stage with a pole at 1 Hz: 180° − atan(f).
        let analog = |f: f64| 180.0 - f.atan().to_degrees() + 360.0;
        let fine = log_frequencies(0.1, 40.0, 600, &[]);
        let coarse = [0.1, 1.0, 10.0, 40.0, 60.0];
        let a = phase_track_deg(&fine, &coarse, analog, (d.sections(), 100.0));
        let b = phase_track_deg(&fine[..300], &coarse, analog, (d.sections(), 100.0));
        assert_eq!(a, b);
        assert!((a[0].0 - wrap_deg(analog(0.1))).abs() < 1e-9, "{a:?}");
        assert!(a[0].0 > -180.0 && a[0].0 <= 180.0);
        assert_eq!(a[4].1, None, "60 Hz is above Nyquist");
        assert!(a[3].1.unwrap() < a[0].1.unwrap());
    }

    #[test]
    fn board_phase_follows_the_design_within_half_a_turn() {
        let d = butterworth_lowpass(2, 10.0, 100.0).unwrap();
        let sweep = Sweep::new(d.sections(), d.sections(), 100.0, &[]);
        let reference: Vec<f64> = unwrapped_phase_deg(&sweep.design)
            .iter()
            .map(|p| p - 720.0)
            .collect();
        let near = phase_near_deg(&sweep.design, &reference);
        for (n, r) in near.iter().zip(&reference) {
            assert!((n - r).abs() < 1e-9, "{n} vs {r}");
        }
    }
}
