//! The live page as one more [`Sink`] of `listen`: every event updates the
//! shared [`Live`] state the broadcaster sends from. It never fails, so
//! the page can never stop a recording.

use plethwire_dsp::wire::{DecodeStats, SampleBlock, SAMPLES_PER_BLOCK};
use std::io;
use std::sync::{Arc, Mutex, MutexGuard};

use super::live::Live;
use super::message::{BeatMark, BoardFields, LinkCounts, Point};
use crate::listen::{Event, Progress, Sink};

/// Feeds the live page; get one from [`super::View::sink`].
#[derive(Clone, Debug)]
pub struct ViewSink {
    live: Arc<Mutex<Live>>,
}

/// The state, even if a thread panicked while holding it (it holds plain
/// values, each whole).
pub(super) fn lock(live: &Mutex<Live>) -> MutexGuard<'_, Live> {
    live.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

impl ViewSink {
    pub(super) fn new(live: Arc<Mutex<Live>>) -> Self {
        Self { live }
    }

    /// Shows a live-checks report on the page: any of `checks` (a list of
    /// `{name, value, verdict, message}`), `gauges` (an object by gauge
    /// name, units as [`super::Message::gauges`] says) and `advice` (a list
    /// of lines) it holds; a value that is no JSON object changes nothing.
    /// Once a report has given gauges, the status no longer does.
    pub fn set_checks<T: serde::Serialize>(&self, report: &T) {
        if let Ok(v) = serde_json::to_value(report) {
            lock(&self.live).report(&v);
        }
    }
}

impl Sink for ViewSink {
    /// The link's counts come with listen's once-a-second progress, so the
    /// page's frame counters move even when no `Link` event is sent.
    fn tick(&mut self, _now: std::time::Instant, progress: &Progress) -> io::Result<()> {
        lock(&self.live).link(counts(&progress.link));
        Ok(())
    }

    fn event(&mut self, event: &Event) -> io::Result<()> {
        let mut live = lock(&self.live);
        let board = live.board_now();
        match event {
            Event::Opened { port, again_after } => {
                live.board(there(port, true));
                if let Some(d) = again_after {
                    live.notice(format!(
                        "{port} is back after {:.1} s; the recording goes on",
                        d.as_secs_f64()
                    ));
                }
            }
            Event::Lost { port, reason } => {
                live.board(there(port, false));
                live.notice(format!("{port} went away ({reason}); trying it again"));
            }
            Event::Quiet { .. } => live.board(BoardFields {
                quiet: true,
                ..board
            }),
            Event::Notice(text) => live.notice(text.clone()),
            Event::Link(stats) => live.link(counts(stats)),
            Event::Restart { sample } => live.notice(format!(
                "the board restarted; the record goes on at sample {sample}"
            )),
            _ => {
                // A frame: the board is talking.
                live.board(BoardFields {
                    quiet: false,
                    ..board
                });
                frame(&mut live, event);
            }
        }
        Ok(())
    }
}

/// The events that come from a decoded frame.
fn frame(live: &mut Live, event: &Event) {
    match event {
        Event::Hello(h) => live.hello(h.into()),
        Event::Beat(b) => live.beat(BeatMark {
            peak: b.peak,
            time_s: b.time_s,
            hr_bpm: b.beat.hr_bpm,
            median_hr_bpm: b.beat.hr_smoothed_bpm,
            quality: b.beat.quality,
            verdict: b.beat.flags.verdict(),
        }),
        Event::State(s) => live.state(s.change.state.name()),
        Event::Status { status, link } => {
            live.status(status.into());
            live.link(counts(link));
        }
        Event::Samples {
            start,
            block,
            rate_hz,
        } => live.samples(*rate_hz, points(*start, block)),
        _ => {}
    }
}

fn there(port: &str, connected: bool) -> BoardFields {
    BoardFields {
        connected,
        quiet: false,
        port: port.to_string(),
    }
}

fn counts(s: &DecodeStats) -> LinkCounts {
    LinkCounts {
        frames: s.frames,
        damaged: s.damaged,
        lost: s.lost_frames,
        crc_errors: s.crc_errors,
    }
}

/// Input samples from one block sample to the next.
fn stride(block: &SampleBlock) -> i64 {
    i64::from(block.stride.max(1))
}

/// A block's samples with their record sample numbers: sample `i` is at
/// `start + i·stride`.
fn points(start: i64, block: &SampleBlock) -> impl Iterator<Item = Point> + '_ {
    let step = stride(block);
    let n = usize::from(block.count).min(SAMPLES_PER_BLOCK);
    (0..n).map(move |i| (start + i as i64 * step, block.raw[i], block.filtered[i]))
}
