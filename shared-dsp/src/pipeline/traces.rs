//! What the stages look back on: the recent smoothed and band-passed
//! signal and the marks at the detector's rate, and the conditioned input.

use super::ring::{History, Ring};

/// Detector-rate samples kept for pulse shapes and clipping marks (2 s at
/// 125 Hz: a 30 bpm pulse's foot and shape, at the latest it is judged).
pub const SHAPE_RING: usize = 256;

/// Input samples kept to place each peak on the input itself (0.5 s at
/// 1000 Hz, 2 s at 250 Hz: longer than an event's latency at the usual
/// rates; beyond it the delay-compensated smoothed peak stands).
pub const INPUT_RING: usize = 512;

/// The rings of recent samples.
// `repr(C)`: the detector-rate rings first, their counters at the front of
// each (see `Pipeline`).
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Traces {
    /// The smoothed (low-passed) signal at the detector's rate.
    pub smoothed: Ring<SHAPE_RING>,
    /// The band-passed signal at the detector's rate.
    pub banded: Ring<SHAPE_RING>,
    /// Clipped and replaced marks per detector-rate sample
    /// ([`super::conditioning::MARK_CLIPPED`], `MARK_REJECTED`).
    pub marks: Ring<SHAPE_RING, u8>,
    /// The conditioned input, by input index.
    pub input: History<INPUT_RING>,
}

impl Traces {
    /// Empty rings.
    pub fn new() -> Self {
        Self {
            smoothed: Ring::new(),
            banded: Ring::new(),
            marks: Ring::new(),
            input: History::new(),
        }
    }

    /// Keep one detector-rate sample: smoothed `s`, band-passed `y`, its
    /// block's `mark`.
    #[inline(always)]
    pub fn push(&mut self, s: f32, y: f32, mark: u8) {
        self.smoothed.push(s);
        self.banded.push(y);
        self.marks.push(mark);
    }
}

impl Default for Traces {
    fn default() -> Self {
        Self::new()
    }
}
