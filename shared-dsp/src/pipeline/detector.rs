//! Beat detectors: the trait every detector implements, and the one place
//! that names them.
//!
//! A detector takes one band-passed sample at the detector's rate and now
//! and then returns a [`Candidate`] (in the manner of quartiq idsp's
//! `Process`: a small trait, state inside, no allocation). Each detector is
//! a module of its own (`elgendi.rs`, `zong.rs`) citing its
//! paper. [`DetectorKind`] names them: its wire code, command-line name and
//! display name are exhaustive matches here, so a new variant is refused by
//! the compiler until each is given, and `AnyDetector::new` until it is
//! built.

use super::{Elgendi, Zong};

/// A detected beat before bookkeeping, at the detector's rate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Candidate {
    /// Detector-rate index of the systolic peak.
    pub peak: u64,
    /// Detector-rate index of the pulse onset, for detectors that find it.
    pub onset: Option<u64>,
    /// Band-passed value at the peak (the detector's own measure).
    pub amplitude: f32,
    /// The detector cannot tell at its rate whether this is a beat by its
    /// own rule (Elgendi: a block one sample short of W1); its beat is
    /// kept but not trusted ([`super::BeatFlags::NARROW`]).
    pub uncertain: bool,
}

/// A beat detector at a fixed rate, with fixed memory.
pub trait Detector {
    /// Feed one band-passed sample; a candidate when a beat is complete.
    /// Indices count the samples fed since construction or [`Self::reset`].
    fn process(&mut self, y: f32) -> Option<Candidate>;

    /// Forget everything learnt: as newly built at the same rate.
    fn reset(&mut self);
}

/// Which published beat detector runs.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DetectorKind {
    /// Elgendi et al. 2013, two event-related moving averages (the default:
    /// it scores best on the shared recordings, see docs/accuracy.md).
    #[default]
    Elgendi,
    /// Zong et al. 2003, slope sum function; also gives the pulse onset.
    Zong,
}

impl DetectorKind {
    /// Every detector, in the order of their wire codes (0, 1, …; checked
    /// when the crate compiles).
    pub const ALL: [Self; 2] = [Self::Elgendi, Self::Zong];

    /// The code in hello frames and sample feeds (docs/wire-format.md).
    /// Never reuse or renumber one: recorded feeds keep theirs.
    pub const fn wire_code(self) -> u8 {
        match self {
            Self::Elgendi => 0,
            Self::Zong => 1,
        }
    }

    /// The detector a wire code stands for; `None` for an unknown code.
    pub fn from_wire_code(code: u8) -> Option<Self> {
        Self::ALL.get(usize::from(code)).copied()
    }

    /// Its name on the command line and in JSON output (lower case, one word).
    pub const fn cli_name(self) -> &'static str {
        match self {
            Self::Elgendi => "elgendi",
            Self::Zong => "zong",
        }
    }

    /// The detector a command-line name stands for, if any.
    pub fn from_cli_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|k| k.cli_name() == name)
    }

    /// What it is, for help texts and reports.
    pub const fn display_name(self) -> &'static str {
        match self {
            Self::Elgendi => "Elgendi et al. 2013, two event-related moving averages",
            Self::Zong => "Zong et al. 2003, slope sum function (also gives the onset)",
        }
    }
}

// `ALL` is in wire-code order, so a code is its index in `ALL`.
const _: () = {
    let mut i = 0;
    while i < DetectorKind::ALL.len() {
        assert!(DetectorKind::ALL[i].wire_code() as usize == i);
        i += 1;
    }
};

/// The detector of a [`DetectorKind`], held inline (no allocation in this
/// crate; the variants' sizes differ by a few hundred bytes, nothing next
/// to the pipeline's rings).
// `repr(u8)`: the variant is told by a byte of its own (left to the
// compiler it was a niche in a 64-bit field: two words compared per
// sample).
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug)]
#[repr(u8)]
pub(crate) enum AnyDetector {
    Elgendi(Elgendi),
    Zong(Zong),
}

impl AnyDetector {
    /// The detector of `kind` at detector rate `fd_hz`.
    #[inline(never)]
    pub(crate) fn new(kind: DetectorKind, fd_hz: f32) -> Self {
        match kind {
            DetectorKind::Elgendi => Self::Elgendi(Elgendi::new(fd_hz)),
            DetectorKind::Zong => Self::Zong(Zong::new(fd_hz)),
        }
    }
}

impl Detector for AnyDetector {
    fn process(&mut self, y: f32) -> Option<Candidate> {
        match self {
            Self::Elgendi(d) => d.process(y),
            Self::Zong(d) => d.process(y),
        }
    }

    fn reset(&mut self) {
        // Each detector resets itself in place: building a whole new
        // `AnyDetector` and copying it over this one would need a second
        // detector's worth of stack for a moment (3 KiB; a Cortex-M0 with
        // 16 KiB of RAM has no room for it).
        match self {
            Self::Elgendi(d) => d.reset(),
            Self::Zong(d) => d.reset(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::format;

    /// After any run, `reset` leaves a detector exactly as `new` builds it
    /// (every field, through `Debug`), at the detector rates the pipeline
    /// uses; so resetting in place changes no beat.
    #[test]
    fn reset_equals_new() {
        for kind in DetectorKind::ALL {
            for fd in [31.25_f32, 62.5, 75.0, 125.0] {
                let mut d = AnyDetector::new(kind, fd);
                let mut found = 0;
                for n in 0..(20.0 * fd) as usize {
                    // A 72 bpm pulse, half-wave rectified, and a drift.
                    let t = n as f32 / fd;
                    let y = libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t).max(0.0) + 0.01 * t;
                    found += usize::from(d.process(y).is_some());
                }
                assert!(found > 5, "{kind:?} at {fd} Hz found {found}");
                d.reset();
                let fresh = AnyDetector::new(kind, fd);
                assert_eq!(
                    format!("{d:?}"),
                    format!("{fresh:?}"),
                    "{kind:?} at {fd} Hz"
                );
            }
        }
    }

    #[test]
    fn names_and_codes_go_both_ways() {
        for k in DetectorKind::ALL {
            assert_eq!(DetectorKind::from_wire_code(k.wire_code()), Some(k));
            assert_eq!(DetectorKind::from_cli_name(k.cli_name()), Some(k));
        }
        assert_eq!(
            DetectorKind::from_wire_code(DetectorKind::ALL.len() as u8),
            None
        );
        assert_eq!(DetectorKind::from_cli_name("Elgendi"), None);
        // The codes on the line (docs/wire-format.md).
        assert_eq!(DetectorKind::Elgendi.wire_code(), 0);
        assert_eq!(DetectorKind::Zong.wire_code(), 1);
    }

    #[test]
    fn a_reset_detector_finds_what_a_new_one_finds() {
        let fd = 62.5;
        let pulse = |n: usize| libm::sinf(n as f32 * 2.0 * core::f32::consts::PI * 1.2 / fd);
        for kind in DetectorKind::ALL {
            let mut used = AnyDetector::new(kind, fd);
            for n in 0..500 {
                used.process(0.3 * pulse(n) + if n % 7 == 0 { 2.0 } else { 0.0 });
            }
            used.reset();
            let mut fresh = AnyDetector::new(kind, fd);
            let found = |d: &mut AnyDetector| {
                (0..1000)
                    .filter_map(|n| d.process(pulse(n)))
                    .map(|c| c.peak)
                    .collect::<std::vec::Vec<_>>()
            };
            let (a, b) = (found(&mut used), found(&mut fresh));
            assert!(a.len() >= 15, "{kind:?}: {}", a.len());
            assert_eq!(a, b, "{kind:?}");
        }
    }
}
