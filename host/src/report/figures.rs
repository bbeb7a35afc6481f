//! Every number a report shows, computed once from the pipeline's output
//! with the library's own functions; the page and `--json` print these.

use super::band::{BandPass, BAND_ORDER};
use super::excerpt::Excerpt;
use super::poincare::{nn_pairs, poincare};
use super::reference::{score, ScoreFigures};
use super::timeline::{seconds, spans, StateSeconds};
use super::ReportInput;
use serde::Serialize;

/// Time-domain HRV of the whole recording (Task Force of the ESC and
/// NASPE 1996), as [`crate::replay::Replay::hrv`] computes it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct HrvFigures {
    /// NN intervals used.
    pub nn_intervals: usize,
    /// Successive differences of adjacent NN intervals.
    pub successive_differences: usize,
    /// Mean NN interval, ms.
    pub mean_nn_ms: Option<f64>,
    /// SDNN, ms (N − 1 denominator).
    pub sdnn_ms: Option<f64>,
    /// RMSSD, ms.
    pub rmssd_ms: Option<f64>,
    /// Successive differences above 50 ms.
    pub nn50: usize,
    /// pNN50, % of successive differences.
    pub pnn50_percent: Option<f64>,
}

/// The Poincaré plot's numbers (Brennan, Palaniswami, Kamen 2001; see
/// [`super::poincare::PoincareStats`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct PoincareFigures {
    /// Pairs of successive NN intervals plotted.
    pub poincare_pairs: usize,
    /// Spread across the identity line, ms.
    pub sd1_ms: Option<f64>,
    /// Spread along the identity line, ms.
    pub sd2_ms: Option<f64>,
    /// SD2 / SD1.
    pub sd2_sd1_ratio: Option<f64>,
}

/// The band-pass the pipeline ran, and what it does at the heart rate.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct FilterFigures {
    /// Butterworth order (sections).
    pub band_order: usize,
    /// Lower edge, Hz.
    pub band_low_hz: f64,
    /// Upper edge, Hz.
    pub band_high_hz: f64,
    /// The mean heart rate as a frequency, Hz.
    pub mean_hr_hz: Option<f64>,
    /// Gain at the mean heart rate, dB.
    pub gain_at_mean_hr_db: Option<f64>,
    /// Group delay at the mean heart rate, ms.
    pub delay_at_mean_hr_ms: Option<f64>,
}

/// The stretch the signal plot shows.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ExcerptFigures {
    /// Start, s.
    pub excerpt_start_s: f64,
    /// Length, s.
    pub excerpt_length_s: f64,
    /// Beats whose peak lies in it.
    pub excerpt_beats: usize,
    /// Reference beats in it, when there are reference beats.
    pub excerpt_reference_beats: Option<usize>,
}

/// Everything a report shows, as numbers. Field names are unique across
/// the nesting and equal the page's `data-figure` names.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Figures {
    /// Record name.
    pub record: String,
    /// Signal name.
    pub signal: String,
    /// The signal's units, when known.
    pub units: Option<String>,
    /// Length, s.
    pub duration_s: f64,
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Detector.
    pub detector: String,
    /// Beats detected.
    pub beats: usize,
    /// Beats without a flag that makes them unfit.
    pub good_beats: usize,
    /// Good beats as a share of all, percent.
    pub good_share_percent: f64,
    /// Mean of the median heart rate reported with good beats, bpm.
    #[serde(rename = "median_hr_mean_bpm")]
    pub hr_mean_bpm: Option<f64>,
    /// Lowest of those, bpm.
    #[serde(rename = "median_hr_min_bpm")]
    pub hr_min_bpm: Option<f64>,
    /// Highest of those, bpm.
    #[serde(rename = "median_hr_max_bpm")]
    pub hr_max_bpm: Option<f64>,
    /// Median delay from a beat's peak to its event, ms.
    pub latency_median_ms: Option<f64>,
    /// Non-finite samples replaced by the last good value
    /// (`replaced_samples` in JSON).
    #[serde(rename = "replaced_samples")]
    pub rejected_samples: u64,
    /// Samples at the rails.
    pub clipped_samples: u64,
    /// Filter restarts after steps in the input.
    pub restarts: u64,
    /// HRV.
    pub hrv: HrvFigures,
    /// Poincaré plot.
    pub poincare: PoincareFigures,
    /// Signal state.
    pub states: StateSeconds,
    /// Band-pass.
    pub filter: FilterFigures,
    /// Signal excerpt.
    pub excerpt: ExcerptFigures,
    /// Score against the reference, when there is one.
    pub score: Option<ScoreFigures>,
}

/// Compute the figures; `excerpt` is the stretch the page shows and
/// `band` the pipeline's band-pass.
pub fn compute(input: &ReportInput<'_>, excerpt: Excerpt, band: &BandPass) -> Figures {
    let run = input.replay;
    let s = run.summary();
    let h = run.hrv();
    let p = poincare(&nn_pairs(run));
    let hr_hz = s.heart_rate_bpm.map(|r| r.mean / 60.0);
    let at_hr = hr_hz.map(|f| band.at(f));
    let f64_of = |v: Option<f32>| v.map(f64::from);
    let in_excerpt = |t: f64| t >= excerpt.start_s && t < excerpt.end_s();
    let reference = input.reference;
    Figures {
        record: input.name.to_owned(),
        signal: input.signal.to_owned(),
        units: input.units.map(str::to_owned),
        duration_s: s.duration_s,
        sample_rate_hz: run.fs,
        detector: format!("{:?}", input.config.options.detector).to_lowercase(),
        beats: s.beats,
        good_beats: s.good_beats,
        good_share_percent: 100.0 * s.good_share,
        hr_mean_bpm: s.heart_rate_bpm.map(|r| r.mean),
        hr_min_bpm: s.heart_rate_bpm.map(|r| r.min),
        hr_max_bpm: s.heart_rate_bpm.map(|r| r.max),
        latency_median_ms: s.latency_median_ms,
        rejected_samples: s.rejected_samples,
        clipped_samples: s.clipped_samples,
        restarts: s.restarts,
        hrv: HrvFigures {
            nn_intervals: h.nn_count,
            successive_differences: h.diff_count,
            mean_nn_ms: f64_of(h.mean_nn_ms),
            sdnn_ms: f64_of(h.sdnn_ms),
            rmssd_ms: f64_of(h.rmssd_ms),
            nn50: h.nn50,
            pnn50_percent: f64_of(h.pnn50_percent),
        },
        poincare: PoincareFigures {
            poincare_pairs: p.pairs,
            sd1_ms: p.sd1_ms,
            sd2_ms: p.sd2_ms,
            sd2_sd1_ratio: match (p.sd1_ms, p.sd2_ms) {
                (Some(a), Some(b)) if a > 0.0 => Some(b / a),
                _ => None,
            },
        },
        states: seconds(&spans(run), run.states.len()),
        filter: FilterFigures {
            band_order: BAND_ORDER,
            band_low_hz: band.low_hz,
            band_high_hz: band.high_hz,
            mean_hr_hz: hr_hz,
            gain_at_mean_hr_db: at_hr.map(|a| a.0),
            delay_at_mean_hr_ms: at_hr.map(|a| a.1),
        },
        excerpt: ExcerptFigures {
            excerpt_start_s: excerpt.start_s,
            excerpt_length_s: excerpt.length_s,
            excerpt_beats: run
                .beats
                .iter()
                .filter(|b| in_excerpt(b.peak_index as f64 / run.fs))
                .count(),
            excerpt_reference_beats: reference
                .and_then(|r| r.beats.as_ref())
                .map(|b| b.iter().filter(|&&i| in_excerpt(i as f64 / run.fs)).count()),
        },
        score: reference.map(|r| score(run, r)),
    }
}
