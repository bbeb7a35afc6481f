//! The signal state over the recording, from the pipeline's state events.

use crate::replay::Replay;
use plethwire_dsp::pipeline::SignalState;
use serde::Serialize;

/// One stretch of a single state.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StateSpan {
    /// The state.
    pub state: SignalState,
    /// Start, s.
    pub from_s: f64,
    /// End, s.
    pub to_s: f64,
}

/// Every state in the order the pipeline can report them, for legends.
pub const STATES: [SignalState; 5] = [
    SignalState::Acquiring,
    SignalState::Good,
    SignalState::Noisy,
    SignalState::Saturated,
    SignalState::NoSignal,
];

/// The state's name in reports.
pub fn state_name(s: SignalState) -> &'static str {
    match s {
        SignalState::Acquiring => "acquiring",
        SignalState::Good => "good",
        SignalState::Noisy => "noisy",
        SignalState::Saturated => "saturated",
        SignalState::NoSignal => "no signal",
    }
}

/// The recording cut into spans of one state each: the pipeline starts
/// out acquiring, and each state event starts a new span at its sample.
pub fn spans(replay: &Replay) -> Vec<StateSpan> {
    let end = replay.samples as f64 / replay.fs;
    let mut out = Vec::new();
    let mut state = SignalState::Acquiring;
    let mut from = 0.0;
    for e in &replay.states {
        let at = (e.at as f64 / replay.fs).min(end);
        if at > from {
            out.push(StateSpan {
                state,
                from_s: from,
                to_s: at,
            });
        }
        state = e.state;
        from = at;
    }
    if end > from {
        out.push(StateSpan {
            state,
            from_s: from,
            to_s: end,
        });
    }
    out
}

/// Seconds spent in each state.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct StateSeconds {
    /// Start-up, no verdict yet.
    pub acquiring_s: f64,
    /// Beats found and trusted.
    pub good_s: f64,
    /// Beats found but mostly not trusted.
    pub noisy_s: f64,
    /// Much of the signal at the ADC rails.
    pub saturated_s: f64,
    /// No pulse.
    pub no_signal_s: f64,
    /// State changes the pipeline reported.
    pub state_changes: usize,
}

/// Time in each state over `spans`.
pub fn seconds(spans: &[StateSpan], state_changes: usize) -> StateSeconds {
    let mut s = StateSeconds {
        state_changes,
        ..StateSeconds::default()
    };
    for span in spans {
        let d = span.to_s - span.from_s;
        match span.state {
            SignalState::Acquiring => s.acquiring_s += d,
            SignalState::Good => s.good_s += d,
            SignalState::Noisy => s.noisy_s += d,
            SignalState::Saturated => s.saturated_s += d,
            SignalState::NoSignal => s.no_signal_s += d,
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::StateEvent;

    #[test]
    fn events_cut_the_recording_into_spans() {
        let ev = |at, previous, state| StateEvent {
            state,
            previous,
            at,
        };
        let run = Replay {
            fs: 100.0,
            samples: 6000,
            beats: Vec::new(),
            states: vec![
                ev(300, SignalState::Acquiring, SignalState::Good),
                ev(4000, SignalState::Good, SignalState::NoSignal),
                ev(5000, SignalState::NoSignal, SignalState::Good),
            ],
            rejected: 0,
            clipped: 0,
            restarts: 0,
        };
        let s = spans(&run);
        assert_eq!(s.len(), 4);
        assert_eq!(
            (s[0].state, s[0].from_s, s[0].to_s),
            (SignalState::Acquiring, 0.0, 3.0)
        );
        assert_eq!(
            (s[2].state, s[2].from_s, s[2].to_s),
            (SignalState::NoSignal, 40.0, 50.0)
        );
        let t = seconds(&s, run.states.len());
        assert_eq!((t.acquiring_s, t.good_s, t.no_signal_s), (3.0, 47.0, 10.0));
        assert_eq!(t.state_changes, 3);
    }
}
