//! Which indexed frames enter the record. Their sample numbers come off
//! the wire: a frame that passed its CRC by chance, or a board with a
//! bug, can carry any number, and one number 2^62 samples ahead must not
//! make the files grow without end. A frame whose numbers contradict
//! themselves (a beat's peak after the moment it was sent, or long
//! before it) is refused. One that does not go on from the frames before
//! ([`Timeline::fit`]) starts a new run at once after a hello or a reopen,
//! where a restarted or another board is to be expected; elsewhere it is
//! held until the next frame: if that one goes on from it, the board's
//! numbering really changed (a restart whose hello was lost) and both are
//! placed; if not, the held frame is refused. Refused frames are counted
//! as damaged. (A frame still held when the session ends is neither.)

use plethwire_dsp::wire::{Frame, Message, SAMPLES_PER_BLOCK};
use std::io;
use std::time::{Duration, Instant, SystemTime};

use super::Session;
use crate::listen::event::{Event, Sink};
use crate::listen::timeline::{Timeline, MAX_GAP_S};

/// A frame that did not fit, waiting for the next one.
#[derive(Clone, Copy, Debug)]
pub(super) struct Held {
    frame: Frame,
    anchor: u64,
    now: u64,
}

/// The board samples an indexed frame covers, `anchor..=now` (see
/// [`Timeline::fit`]); `None` when its numbers contradict themselves.
fn span(message: &Message, t: &Timeline) -> Option<(u64, u64)> {
    // How long a beat may be sent after its peak or its onset: the
    // pipeline looks back by far less than this.
    let look_back = t.long_slack();
    match message {
        Message::Beat(b) => {
            let late = b.emitted_at.checked_sub(b.peak_index)?;
            let onset_ok = b
                .onset_index
                .is_none_or(|o| o <= b.peak_index && b.emitted_at - o <= look_back);
            (late <= look_back && onset_ok).then_some((b.emitted_at, b.emitted_at))
        }
        Message::State(c) => Some((c.at, c.at)),
        Message::Samples(s) => {
            if usize::from(s.count) > SAMPLES_PER_BLOCK {
                return None;
            }
            // Sample i is board sample first_index + i · stride.
            let steps = (u64::from(s.count.max(1)) - 1) * u64::from(s.stride.max(1));
            let last = s.first_index.checked_add(steps)?;
            Some((s.first_index, last))
        }
        Message::Hello(_) | Message::Status(_) => None,
    }
}

impl Session {
    /// Time since the last placed frame, the longer of the two clocks.
    fn since_placed(&self, t: Instant) -> Duration {
        self.placed_at.map_or(Duration::ZERO, |(at, wall)| {
            let wall = SystemTime::now().duration_since(wall).unwrap_or_default();
            t.saturating_duration_since(at).max(wall)
        })
    }

    /// Place an indexed frame, hold it, or refuse it (see the module).
    pub(super) fn indexed(
        &mut self,
        frame: Frame,
        t: Instant,
        sink: &mut dyn Sink,
    ) -> io::Result<()> {
        self.settle_rate();
        let Some((anchor, now)) = span(&frame.message, &self.timeline) else {
            return self.refuse(sink);
        };
        let reach = self.timeline.reach(self.since_placed(t));
        if self.timeline.fit(anchor, now, reach) {
            if self.held.take().is_some() {
                self.refuse(sink)?;
            }
            self.timeline.place(anchor, now);
            return self.placed(frame, t, sink);
        }
        if self.timeline.fresh() {
            if self.held.take().is_some() {
                self.refuse(sink)?;
            }
            return self.new_run(frame, anchor, now, t, sink);
        }
        match self.held.take() {
            Some(h) if self.timeline.follows(h.now, anchor, now, reach) => {
                self.new_run(h.frame, h.anchor, h.now, t, sink)?;
                self.timeline.place(anchor, now);
                self.placed(frame, t, sink)
            }
            earlier => {
                if earlier.is_some() {
                    self.refuse(sink)?;
                }
                self.held = Some(Held { frame, anchor, now });
                Ok(())
            }
        }
    }

    /// A new run of the board's numbers begins with `frame`.
    fn new_run(
        &mut self,
        frame: Frame,
        anchor: u64,
        now: u64,
        t: Instant,
        sink: &mut dyn Sink,
    ) -> io::Result<()> {
        let ahead = self
            .timeline
            .latest()
            .and_then(|max| anchor.checked_sub(max));
        let sample = self.timeline.new_run(anchor, now);
        // Nothing placed before: a board joined late, not a restart.
        if sample == 0 {
            return self.placed(frame, t, sink);
        }
        self.counts.restarts += 1;
        let jump_s = ahead.zip(self.rate).map(|(n, rate)| n as f64 / rate);
        if let Some(s) = jump_s.filter(|&s| s > MAX_GAP_S) {
            sink.event(&Event::Notice(format!(
                "the board's sample numbers jumped {s:.0} s ahead, more than the {MAX_GAP_S:.0} s \
                 a record fills with invalid samples: the record goes on after its end"
            )))?;
        }
        sink.event(&Event::Restart { sample })?;
        self.placed(frame, t, sink)
    }

    /// Drop a frame with implausible numbers; say so the first time.
    fn refuse(&mut self, sink: &mut dyn Sink) -> io::Result<()> {
        self.counts.implausible += 1;
        if self.told_implausible {
            return Ok(());
        }
        self.told_implausible = true;
        sink.event(&Event::Notice(
            "a frame passed its check but its sample numbers jump where the board \
             cannot have got to: it is dropped and counted as damaged (a board \
             with a bug, or noise on the line)"
                .into(),
        ))
    }
}
