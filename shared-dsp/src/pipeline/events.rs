//! What the pipeline reports: beats and changes of signal state.

/// Reasons a beat is not trusted, as bits.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BeatFlags(pub u8);

impl BeatFlags {
    /// No previous beat, so no interval (the first beat, or the first after
    /// the signal came back).
    pub const NO_INTERVAL: u8 = 1 << 0;
    /// The interval is outside 30–220 bpm, or far from the recent median
    /// (an ectopic beat, a missed or an extra detection).
    pub const IMPLAUSIBLE_INTERVAL: u8 = 1 << 1;
    /// Samples at the ADC rails within the beat.
    pub const CLIPPED: u8 = 1 << 2;
    /// The pulse shape correlates poorly with the running template.
    pub const LOW_CORRELATION: u8 = 1 << 3;
    /// Non-finite input samples were replaced within the beat.
    pub const INPUT_REJECTED: u8 = 1 << 4;
    /// The sensor moved strongly (accelerometer given) and the beat cannot
    /// be told apart from the motion: its interval lies at the motion's
    /// period, or the intervals before it disagree (see
    /// [`super::motion`]).
    pub const MOTION: u8 = 1 << 5;
    /// The detector could not tell at its rate whether the pulse passes
    /// its own test (Elgendi: a block of interest one sample short of W1),
    /// so the beat may be noise.
    pub const NARROW: u8 = 1 << 6;

    /// Flags that make a beat unfit for heart rate and HRV.
    pub const BAD: u8 = Self::IMPLAUSIBLE_INTERVAL
        | Self::CLIPPED
        | Self::LOW_CORRELATION
        | Self::INPUT_REJECTED
        | Self::MOTION
        | Self::NARROW;

    /// Every flag with its name, in bit order: the one name CSV, JSON and
    /// the terminal use (`docs/vocabulary.md`; the terminal writes the
    /// underscore as a space).
    pub const NAMES: [(u8, &'static str); 7] = [
        (Self::NO_INTERVAL, "no_interval"),
        (Self::IMPLAUSIBLE_INTERVAL, "implausible_interval"),
        (Self::CLIPPED, "clipped"),
        (Self::LOW_CORRELATION, "low_correlation"),
        (Self::INPUT_REJECTED, "input_replaced"),
        (Self::MOTION, "motion"),
        (Self::NARROW, "narrow"),
    ];

    /// The names of the flags set, in bit order.
    pub fn names(self) -> impl Iterator<Item = &'static str> {
        Self::NAMES
            .into_iter()
            .filter(move |(bit, _)| self.has(*bit))
            .map(|(_, name)| name)
    }

    /// The beat's verdict in one word: `good` ([`Self::is_good`]) or `bad`.
    pub fn verdict(self) -> &'static str {
        if self.is_good() {
            "good"
        } else {
            "bad"
        }
    }

    /// Is flag `bit` set?
    pub fn has(self, bit: u8) -> bool {
        self.0 & bit != 0
    }

    /// Fit for heart rate and HRV (no flag in [`Self::BAD`]; a missing
    /// interval alone does not make a beat bad).
    pub fn is_good(self) -> bool {
        self.0 & Self::BAD == 0
    }
}

/// One detected beat.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BeatEvent {
    /// Input sample index of the systolic peak.
    pub peak_index: u64,
    /// Input sample index of the pulse onset, when the detector finds one.
    pub onset_index: Option<u64>,
    /// Input sample index at which the event was emitted (the sample whose
    /// `push` returned it); `emitted_at − peak_index` is the latency.
    pub emitted_at: u64,
    /// Interval from the previous beat, ms, measured between the steepest
    /// points of the two upstrokes (sub-sample): steadier than the peaks
    /// under noise and at low sample rates.
    pub ibi_ms: Option<f32>,
    /// Instantaneous heart rate, 60000 / IBI, bpm.
    pub hr_bpm: Option<f32>,
    /// Median heart rate: 60000 / median of the good intervals in the
    /// last [`super::Options::hr_window_s`] (12 s by default), bpm.
    pub hr_smoothed_bpm: Option<f32>,
    /// Pulse amplitude: foot-to-peak height of the lightly smoothed input
    /// (input units; with the DC level it gives the perfusion index).
    pub amplitude: f32,
    /// Correlation of this pulse with the running template, 0 to 1.
    pub quality: f32,
    /// Why the beat is not trusted, if at all.
    pub flags: BeatFlags,
}

/// The signal's condition.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SignalState {
    /// Start-up: no verdict yet.
    Acquiring,
    /// Beats are being found and trusted ("signal back" after any other).
    Good,
    /// No pulse: finger off, LED off, or a flat line.
    NoSignal,
    /// Much of the signal sits at the ADC rails.
    Saturated,
    /// Beats are found but most are not trusted (motion, artefact).
    Noisy,
}

impl SignalState {
    /// The state's one name (`docs/vocabulary.md`; the terminal writes the
    /// underscore as a space).
    pub const fn name(self) -> &'static str {
        match self {
            Self::Acquiring => "acquiring",
            Self::Good => "good",
            Self::NoSignal => "no_signal",
            Self::Saturated => "saturated",
            Self::Noisy => "noisy",
        }
    }
}

/// A change of [`SignalState`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StateEvent {
    /// The new state.
    pub state: SignalState,
    /// The state before.
    pub previous: SignalState,
    /// Input sample index at which the change was decided.
    pub at: u64,
}

/// What one call to [`super::Pipeline::push`] produced.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Output {
    /// A beat, if one was completed.
    pub beat: Option<BeatEvent>,
    /// A state change, if one happened.
    pub state: Option<StateEvent>,
}

impl Output {
    /// Nothing to report?
    pub fn is_empty(&self) -> bool {
        self.beat.is_none() && self.state.is_none()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_flag_has_one_plain_name() {
        let mut all = 0u8;
        for (i, (bit, name)) in BeatFlags::NAMES.iter().enumerate() {
            assert_eq!(*bit, 1 << i, "{name} out of bit order");
            assert!(name.bytes().all(|c| c.is_ascii_lowercase() || c == b'_'));
            all |= bit;
        }
        assert_eq!(all | BeatFlags::BAD, all, "a flag without a name");
        let f = BeatFlags(BeatFlags::NO_INTERVAL | BeatFlags::CLIPPED);
        let mut names = f.names();
        assert_eq!(names.next(), Some("no_interval"));
        assert_eq!(names.next(), Some("clipped"));
        assert_eq!(names.next(), None);
        assert_eq!(f.verdict(), "bad");
        assert_eq!(BeatFlags(BeatFlags::NO_INTERVAL).verdict(), "good");
        assert_eq!(SignalState::NoSignal.name(), "no_signal");
    }
}
