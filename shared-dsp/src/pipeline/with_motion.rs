//! The pipeline with an accelerometer beside it.

use super::PipelineError;
use super::{BeatEvent, Config, MotionTracker, Output, Pipeline};

/// A [`Pipeline`] and a [`MotionTracker`] fed side by side: beats that
/// strong motion makes untrustworthy carry [`super::BeatFlags::MOTION`].
/// The motion never changes which beats are found or their intervals, only
/// their flags (and so the smoothed heart rate, HRV and signal state, which
/// follow good beats). A plain [`Pipeline`] holds no motion state at all.
///
/// ```
/// use plethwire_dsp::pipeline::{Config, MotionPipeline};
/// let mut p = MotionPipeline::new(Config::new(125.0), 125.0)?;
/// for n in 0..1250 {
///     let t = n as f32 / 125.0;
///     p.push_motion([0.0, 0.0, 1.0]); // at rest: gravity only
///     let out = p.push(libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t));
///     if let Some(beat) = out.beat {
///         assert!(!beat.flags.has(plethwire_dsp::pipeline::BeatFlags::MOTION));
///     }
/// }
/// # Ok::<(), plethwire_dsp::pipeline::PipelineError>(())
/// ```
#[derive(Clone, Debug)]
pub struct MotionPipeline {
    pipeline: Pipeline,
    tracker: MotionTracker,
}

impl MotionPipeline {
    /// A pipeline for `config` and a tracker for three-axis samples in g
    /// at `motion_rate_hz` (20 to 1000 Hz).
    pub fn new(config: Config, motion_rate_hz: f32) -> Result<Self, PipelineError> {
        Ok(Self {
            pipeline: Pipeline::new(config)?,
            tracker: MotionTracker::new(motion_rate_hz)?,
        })
    }

    /// Feed one accelerometer sample (x, y, z in g), interleaved with
    /// [`Self::push`] as the samples arrive.
    pub fn push_motion(&mut self, a: [f32; 3]) {
        self.tracker.push(a);
    }

    /// Feed one input sample ([`Pipeline::push`]), the beat it completes
    /// judged against the motion.
    pub fn push(&mut self, x: f32) -> Output {
        self.pipeline.push_with(x, &self.tracker)
    }

    /// At the end of a recording ([`Pipeline::finish`]), judged against
    /// the motion as it stands at the end.
    pub fn finish(&mut self, emit: impl FnMut(BeatEvent)) {
        self.pipeline.finish_with(&self.tracker, emit);
    }

    /// The pipeline (counters, state, HRV).
    pub fn pipeline(&self) -> &Pipeline {
        &self.pipeline
    }

    /// The motion tracker (strength, period).
    pub fn tracker(&self) -> &MotionTracker {
        &self.tracker
    }
}

#[cfg(test)]
mod tests {
    use super::super::BeatFlags;
    use super::*;
    use std::vec::Vec;

    const FS: f32 = 125.0;

    /// A made-up pulse at 75 bpm (a sine with a second harmonic, so it has
    /// a shape), 60 s, with the accelerometer `acc(t)` beside it: the beats
    /// of the plain pipeline and of the motion pipeline.
    fn both(acc: impl Fn(f32) -> [f32; 3]) -> (Vec<BeatEvent>, Vec<BeatEvent>) {
        let pulse = |t: f32| {
            let w = 2.0 * core::f32::consts::PI * 1.25 * t;
            libm::sinf(w) + 0.3 * libm::sinf(2.0 * w + 0.5)
        };
        let mut plain = Pipeline::new(Config::new(FS)).unwrap();
        let mut moved = MotionPipeline::new(Config::new(FS), FS).unwrap();
        let (mut a, mut b) = (Vec::new(), Vec::new());
        for n in 0..(60.0 * FS) as u32 {
            let t = n as f32 / FS;
            a.extend(plain.push(pulse(t)).beat);
            moved.push_motion(acc(t));
            b.extend(moved.push(pulse(t)).beat);
        }
        plain.finish(|x| a.push(x));
        moved.finish(|x| b.push(x));
        (a, b)
    }

    fn flagged(beats: &[BeatEvent]) -> usize {
        beats
            .iter()
            .filter(|b| b.flags.has(BeatFlags::MOTION))
            .count()
    }

    #[test]
    fn a_swing_at_the_beat_rate_flags_the_beats_and_finds_the_same_ones() {
        let swing = |t: f32| {
            let w = 2.0 * core::f32::consts::PI * 1.25 * t;
            [libm::sinf(w), 0.2, 1.0]
        };
        let (plain, moved) = both(swing);
        assert!(plain.len() > 60, "{}", plain.len());
        let peaks = |v: &[BeatEvent]| v.iter().map(|b| b.peak_index).collect::<Vec<_>>();
        assert_eq!(peaks(&plain), peaks(&moved));
        assert_eq!(flagged(&plain), 0);
        // All but the first seconds, while the tracker fills.
        assert!(
            flagged(&moved) + 5 >= moved.len(),
            "{} of {}",
            flagged(&moved),
            moved.len()
        );
        for (p, m) in plain.iter().zip(&moved) {
            assert_eq!(
                p.flags.0 & !BeatFlags::MOTION,
                m.flags.0 & !BeatFlags::MOTION
            );
        }
    }

    #[test]
    fn an_accelerometer_at_rest_changes_nothing() {
        let (plain, moved) = both(|_| [0.0, 0.2, 1.0]);
        assert_eq!(plain, moved);
    }
}
