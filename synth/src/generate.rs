//! Laying the beats out and building the samples.

use super::rng::Rng;
use super::{PulseShape, SynthError, SynthOptions};
use std::f64::consts::PI;
use std::ops::Range;

/// Independent random streams (see `Rng::stream`).
const STREAM_INTERVALS: u64 = 0;
const STREAM_NOISE: u64 = 1;
const STREAM_WANDER: u64 = 2;
const STREAM_MOTION: u64 = 3;
const STREAM_FINGER_OFF: u64 = 4;

/// Sinusoids summed in one motion burst.
const MOTION_WAVES: usize = 4;
/// Frequency range of the motion sinusoids, Hz: the slow end of the pulse
/// band and below, where hand movement puts its energy (common practice).
const MOTION_HZ: (f64, f64) = (0.3, 3.0);
/// Longest fade in and out of a motion burst, s.
const MOTION_FADE_S: f64 = 0.5;

/// What may be wrong with a beat, for scoring that leaves such beats out.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct BeatFlags {
    /// The beat (onset to next onset) overlaps a motion burst.
    pub motion: bool,
    /// At least one sample of the beat is clipped at an ADC rail.
    pub clipped: bool,
    /// The beat is cut by a finger-off stretch (its peak is outside it).
    pub near_finger_off: bool,
}

impl BeatFlags {
    /// Whether any flag is set.
    pub fn any(&self) -> bool {
        self.motion || self.clipped || self.near_finger_off
    }
}

/// One true beat of the synthetic signal.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TrueBeat {
    /// Time of the onset (the pulse's foot), s.
    pub onset_s: f64,
    /// Time of the systolic peak, s: onset plus the shape's peak fraction
    /// of the interval.
    pub peak_s: f64,
    /// Sample nearest the onset.
    pub onset: usize,
    /// Sample where the pulse is largest: of the two samples around
    /// `peak_s`, the one with the larger pulse value.
    pub peak: usize,
    /// The beat's interval, onset to the next onset, ms: the drawn value.
    /// Peak-to-peak intervals follow from consecutive `peak_s`.
    pub interval_ms: f64,
    /// What may be wrong with it.
    pub flags: BeatFlags,
}

/// A generated recording and the truth about it.
#[derive(Clone, Debug, PartialEq)]
pub struct Synthetic {
    /// Sample rate, Hz; sample `i` is at `i / sample_rate_hz` s.
    pub sample_rate_hz: f64,
    /// The signal.
    pub samples: Vec<f32>,
    /// Every beat whose peak is inside the recording and not inside a
    /// finger-off stretch, in time order.
    pub beats: Vec<TrueBeat>,
    /// Runs of samples clamped to an ADC rail.
    pub clipped: Vec<Range<usize>>,
    /// Sample ranges with the finger off (no pulses).
    pub finger_off: Vec<Range<usize>>,
    /// Sample ranges of the motion bursts.
    pub motion: Vec<Range<usize>>,
}

impl Synthetic {
    /// Sample indices of the true systolic peaks.
    pub fn peak_indices(&self) -> Vec<usize> {
        self.beats.iter().map(|b| b.peak).collect()
    }
    /// Sample indices of the true onsets.
    pub fn onset_indices(&self) -> Vec<usize> {
        self.beats.iter().map(|b| b.onset).collect()
    }
    /// The true intervals (onset to next onset), ms.
    pub fn intervals_ms(&self) -> Vec<f64> {
        self.beats.iter().map(|b| b.interval_ms).collect()
    }
    /// Whether sample `i` was clamped to a rail.
    pub fn is_clipped(&self, i: usize) -> bool {
        self.clipped.iter().any(|r| r.contains(&i))
    }
}

/// Samples `i` with `start_s <= i/fs < start_s + duration_s`, within `n`.
fn sample_range(start_s: f64, duration_s: f64, fs: f64, n: usize) -> Range<usize> {
    let at = |t: f64| (libm::ceil(t * fs).max(0.0) as usize).min(n);
    at(start_s)..at(start_s + duration_s)
}

/// `(onset_s, interval_s)` of every beat starting before `duration_s`; the
/// first onset is at 0.
fn lay_out_beats(opts: &SynthOptions) -> Vec<(f64, f64)> {
    let mut rng = Rng::stream(opts.seed, STREAM_INTERVALS);
    let sd = opts.hr_variability_sd_ms;
    let mut beats = Vec::new();
    let mut t = 0.0;
    while t < opts.duration_s {
        let mean_ms = 60_000.0 / opts.hr.bpm_at(t);
        // Symmetric limits keep the mean; half the mean keeps beats long.
        let limit = (3.0 * sd).min(mean_ms / 2.0);
        let interval_s = (mean_ms + (sd * rng.normal()).clamp(-limit, limit)) / 1000.0;
        beats.push((t, interval_s));
        t += interval_s;
    }
    beats
}

/// The pulse train (shape units, 0 at every onset, 1 at every peak).
fn pulse_train(shape: &PulseShape, beats: &[(f64, f64)], fs: f64, n: usize) -> Vec<f64> {
    let mut k = 0;
    (0..n)
        .map(|i| {
            let t = i as f64 / fs;
            while k + 1 < beats.len() && beats[k + 1].0 <= t {
                k += 1;
            }
            let (onset, d) = beats[k];
            shape.value(((t - onset) / d).clamp(0.0, 1.0))
        })
        .collect()
}

/// The disturbance of one motion burst over its samples: a few sinusoids of
/// random frequency and phase and a random offset, weighted to a sum of at
/// most 1, faded in and out, times the amplitude.
fn motion_burst(rng: &mut Rng, range: Range<usize>, fs: f64, amplitude: f64) -> Vec<f64> {
    let waves: Vec<(f64, f64, f64)> = (0..MOTION_WAVES)
        .map(|_| {
            let hz = rng.range(MOTION_HZ.0, MOTION_HZ.1);
            (rng.range(0.3, 1.0), hz, rng.range(0.0, 2.0 * PI))
        })
        .collect();
    let offset = rng.range(-1.0, 1.0);
    let total: f64 = waves.iter().map(|w| w.0).sum::<f64>() + offset.abs();
    let len_s = range.len() as f64 / fs;
    let fade_s = MOTION_FADE_S.min(len_s / 4.0);
    let start = range.start;
    range
        .map(|i| {
            let u = (i - start) as f64 / fs;
            let edge = u.min(len_s - u);
            let envelope = if edge < fade_s {
                0.5 - 0.5 * libm::cos(PI * edge / fade_s)
            } else {
                1.0
            };
            let sum: f64 = waves
                .iter()
                .map(|&(w, hz, ph)| w * libm::sin(2.0 * PI * hz * u + ph))
                .sum::<f64>()
                + offset;
            amplitude * envelope * sum / total
        })
        .collect()
}

/// The runs of `true` in `mask`.
fn runs(mask: &[bool]) -> Vec<Range<usize>> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, &m) in mask.iter().chain([&false]).enumerate() {
        match (m, start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                out.push(s..i);
                start = None;
            }
            _ => {}
        }
    }
    out
}

fn overlaps(a: &Range<usize>, b: &Range<usize>) -> bool {
    a.start < b.end && b.start < a.end
}

/// Add `opts`' motion bursts and finger-off gaps to `x` (at `fs`); returns
/// the sample ranges of each.
fn add_artefacts(
    opts: &SynthOptions,
    x: &mut [f64],
    fs: f64,
) -> (Vec<Range<usize>>, Vec<Range<usize>>) {
    let n = x.len();
    let mut motion_rng = Rng::stream(opts.seed, STREAM_MOTION);
    let mut motion = Vec::new();
    for m in &opts.motion {
        let r = sample_range(m.start_s, m.duration_s, fs, n);
        let d = motion_burst(&mut motion_rng, r.clone(), fs, m.amplitude);
        for (v, d) in x[r.clone()].iter_mut().zip(d) {
            *v += d;
        }
        motion.push(r);
    }

    let mut off_rng = Rng::stream(opts.seed, STREAM_FINGER_OFF);
    let mut finger_off = Vec::new();
    for g in &opts.finger_off {
        let r = sample_range(g.start_s, g.duration_s, fs, n);
        for v in &mut x[r.clone()] {
            *v = opts.finger_off_level + opts.finger_off_noise_sd * off_rng.normal();
        }
        finger_off.push(r);
    }
    (motion, finger_off)
}

/// Generate a synthetic recording from `opts` (checked first).
pub fn generate(opts: &SynthOptions) -> Result<Synthetic, SynthError> {
    opts.validate()?;
    let shape = PulseShape::new(opts.template)?;
    let fs = opts.sample_rate_hz;
    let n = libm::round(opts.duration_s * fs) as usize;
    let beats = lay_out_beats(opts);
    let pulse = pulse_train(&shape, &beats, fs, n);

    let mut noise = Rng::stream(opts.seed, STREAM_NOISE);
    let wander_phase = Rng::stream(opts.seed, STREAM_WANDER).range(0.0, 2.0 * PI);
    let mut x: Vec<f64> = pulse
        .iter()
        .enumerate()
        .map(|(i, &p)| {
            let t = i as f64 / fs;
            let wander = libm::sin(2.0 * PI * opts.wander_hz * t + wander_phase);
            opts.dc_level
                + opts.wander_amplitude * wander
                + opts.pulse_amplitude * p
                + opts.noise_sd * noise.normal()
        })
        .collect();

    let (motion, finger_off) = add_artefacts(opts, &mut x, fs);

    let mut clipped_mask = vec![false; n];
    if let Some(rails) = opts.rails {
        for (v, c) in x.iter_mut().zip(&mut clipped_mask) {
            *c = *v < rails.low || *v > rails.high;
            *v = v.clamp(rails.low, rails.high);
        }
    }
    let clipped = runs(&clipped_mask);

    let index = |t: f64| libm::round(t * fs) as usize;
    let mut truth = Vec::with_capacity(beats.len());
    for &(onset_s, d) in &beats {
        let peak_s = onset_s + shape.peak_fraction() * d;
        let below = libm::floor(peak_s * fs) as usize;
        let Some(peak) = [below, below + 1]
            .into_iter()
            .filter(|&i| i < n)
            .max_by(|&a, &b| pulse[a].total_cmp(&pulse[b]))
        else {
            continue;
        };
        if finger_off.iter().any(|g| g.contains(&peak)) {
            continue;
        }
        let span = index(onset_s).min(n)..index(onset_s + d).min(n);
        truth.push(TrueBeat {
            onset_s,
            peak_s,
            onset: index(onset_s),
            peak,
            interval_ms: d * 1000.0,
            flags: BeatFlags {
                motion: motion.iter().any(|m| overlaps(m, &span)),
                clipped: clipped_mask[span.clone()].contains(&true),
                near_finger_off: finger_off.iter().any(|g| overlaps(g, &span)),
            },
        });
    }

    Ok(Synthetic {
        sample_rate_hz: fs,
        samples: x.iter().map(|&v| v as f32).collect(),
        beats: truth,
        clipped,
        finger_off,
        motion,
    })
}
