//! What the stages look back on: the recent smoothed and band-passed
//! signal and the marks at the detector's rate, and the conditioned input.

use super::ring::{advance, History, Trace};

/// Detector-rate samples kept for pulse shapes and clipping marks (2 s at
/// 125 Hz: a 30 bpm pulse's foot and shape, at the latest it is judged).
pub const SHAPE_RING: usize = 256;

/// Input samples kept to place each peak on the input itself (0.5 s at
/// 1000 Hz, 2 s at 250 Hz: longer than an event's latency at the usual
/// rates; beyond it the delay-compensated smoothed peak stands).
pub const INPUT_RING: usize = 512;

/// The rings of recent samples.
// `repr(C)`: the detector-rate rings' one counter first (see `Pipeline`),
// then the input history, written on every input sample: it then starts
// less than 4 KiB into the pipeline, an offset one add reaches (measured:
// 0.6 instructions per sample less at 125 Hz than with it last).
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Traces {
    // The detector-rate rings are pushed together: one counter
    // (`ring::advance`) for the three.
    head: usize,
    /// The conditioned input, by input index.
    pub input: History<INPUT_RING>,
    smoothed: [f32; SHAPE_RING],
    banded: [f32; SHAPE_RING],
    marks: [u8; SHAPE_RING],
}

impl Traces {
    /// Empty rings.
    pub fn new() -> Self {
        Self {
            head: 0,
            smoothed: [0.0; SHAPE_RING],
            banded: [0.0; SHAPE_RING],
            marks: [0; SHAPE_RING],
            input: History::new(),
        }
    }

    /// Keep one detector-rate sample: smoothed `s`, band-passed `y`, its
    /// block's `mark`.
    #[inline(always)]
    pub fn push(&mut self, s: f32, y: f32, mark: u8) {
        self.head = advance::<SHAPE_RING>(self.head);
        let slot = self.head % SHAPE_RING;
        self.smoothed[slot] = s;
        self.banded[slot] = y;
        self.marks[slot] = mark;
    }

    /// The smoothed (low-passed) signal at the detector's rate.
    #[inline(always)]
    pub fn smoothed(&self) -> Trace<'_, SHAPE_RING> {
        Trace::new(self.head, &self.smoothed)
    }

    /// The band-passed signal at the detector's rate.
    #[inline(always)]
    pub fn banded(&self) -> Trace<'_, SHAPE_RING> {
        Trace::new(self.head, &self.banded)
    }

    /// Clipped and replaced marks per detector-rate sample
    /// ([`super::conditioning::MARK_CLIPPED`], `MARK_REJECTED`).
    #[inline(always)]
    pub fn marks(&self) -> Trace<'_, SHAPE_RING, u8> {
        Trace::new(self.head, &self.marks)
    }
}

impl Default for Traces {
    fn default() -> Self {
        Self::new()
    }
}
