//! The words every command and file uses for a beat's verdict, its flags,
//! the signal state and the median heart rate (`docs/vocabulary.md`). The
//! names themselves live beside what they name in `plethwire-dsp`
//! ([`BeatFlags::NAMES`], [`SignalState::name`]); this module writes them
//! for the terminal and for CSV cells.

use plethwire_dsp::pipeline::{BeatFlags, SignalState};

/// Terminal label of the instantaneous heart rate (60000 / IBI).
pub const HR: &str = "HR";
/// Terminal label of the median heart rate.
pub const MEDIAN_HR: &str = "median HR";
/// The median heart rate in words, for help texts and pages.
pub const MEDIAN_HR_WORDS: &str =
    "median heart rate (60000 / median of the good intervals of the last 12 s)";

/// A name as the terminal writes it: underscores as spaces.
pub fn words(name: &str) -> String {
    name.replace('_', " ")
}

/// The flags set, in words, comma-separated (empty when none).
pub fn flag_words(flags: BeatFlags) -> String {
    flags.names().map(words).collect::<Vec<_>>().join(", ")
}

/// The verdict with its flags for the terminal: `good`,
/// `good (no interval)`, `bad (clipped, low correlation)`.
pub fn verdict_words(flags: BeatFlags) -> String {
    let named = flag_words(flags);
    if named.is_empty() {
        flags.verdict().to_string()
    } else {
        format!("{} ({named})", flags.verdict())
    }
}

/// The flags set for a CSV cell: names joined by `|` (empty when none).
pub fn flags_cell(flags: BeatFlags) -> String {
    flags.names().collect::<Vec<_>>().join("|")
}

/// The flags set for JSON: a list of names.
pub fn flag_list(flags: BeatFlags) -> Vec<&'static str> {
    flags.names().collect()
}

/// A signal state in words (`no signal`).
pub fn state_words(s: SignalState) -> String {
    words(s.name())
}

/// A change of state in words, written one way everywhere:
/// `acquiring -> good`.
pub fn state_change_words(previous: SignalState, state: SignalState) -> String {
    format!("{} -> {}", state_words(previous), state_words(state))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn verdicts_and_flags_in_words() {
        let f = |b| BeatFlags(b);
        assert_eq!(verdict_words(f(0)), "good");
        assert_eq!(
            verdict_words(f(BeatFlags::NO_INTERVAL)),
            "good (no interval)"
        );
        assert_eq!(
            verdict_words(f(BeatFlags::CLIPPED | BeatFlags::LOW_CORRELATION)),
            "bad (clipped, low correlation)"
        );
        assert_eq!(
            flags_cell(f(BeatFlags::NO_INTERVAL | BeatFlags::INPUT_REJECTED)),
            "no_interval|input_replaced"
        );
        assert_eq!(flags_cell(f(0)), "");
        assert_eq!(
            state_change_words(SignalState::Good, SignalState::NoSignal),
            "good -> no signal"
        );
    }
}
