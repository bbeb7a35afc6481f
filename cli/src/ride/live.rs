//! The demo's ride as it happens: streamed through the pipeline, paced to
//! a clock, each phase, state change and (every 10 s) beat told the
//! moment its sample has gone in, not after the ride.

use super::{state_words, stream, Progress};
use plethwire::replay::Replay;
use plethwire::vocabulary::{verdict_words, MEDIAN_HR};
use plethwire_dsp::pipeline::Config;
use std::time::{Duration, Instant};

/// Samples between two looks at the clock (0.2 s of the demo's 125 Hz).
pub const PACE_STEP: u64 = 25;

/// The clock the pacing waits on: the real one, or a test's.
pub trait Clock {
    /// Time since the ride started streaming.
    fn elapsed(&self) -> Duration;
    /// Wait for `d`.
    fn sleep(&mut self, d: Duration);
}

/// The real clock.
pub struct WallClock(Instant);

impl WallClock {
    /// Started now.
    pub fn start() -> Self {
        Self(Instant::now())
    }
}

impl Clock for WallClock {
    fn elapsed(&self) -> Duration {
        self.0.elapsed()
    }
    fn sleep(&mut self, d: Duration) {
        std::thread::sleep(d);
    }
}

/// What the watcher is told as the ride streams.
pub enum Told {
    /// A line of commentary; it starts with the ride time it is about.
    Line(String),
    /// Samples streamed so far, for a progress bar.
    Position(u64),
    /// The latest heart rate, for the bar's message.
    Rate(String),
}

/// Stream `samples` (at `fs`) with `config`; with `speed`, wait on
/// `clock` so that sample n goes in no earlier than n / fs / speed, and
/// tell `watch` each line as soon as its event comes out.
pub fn stream_live(
    samples: &[f64],
    config: Config,
    fs: f64,
    speed: Option<f64>,
    clock: &mut dyn Clock,
    watch: &mut dyn FnMut(Told),
) -> Replay {
    let mut last_shown = -10.0;
    stream(samples, config, &mut |p| match p {
        Progress::Sample(n) => {
            if n % PACE_STEP == 0 {
                watch(Told::Position(n));
                if let Some(x) = speed {
                    let due = Duration::from_secs_f64(n as f64 / fs / x);
                    if let Some(wait) = due.checked_sub(clock.elapsed()) {
                        clock.sleep(wait);
                    }
                }
            }
        }
        Progress::Phase(ph) => watch(Told::Line(format!(
            "  {:>6.1} s  ── {}",
            ph.start_s, ph.what
        ))),
        Progress::State(s) => watch(Told::Line(format!(
            "  {:>6.1} s  state: {}",
            s.at as f64 / fs,
            state_words(s.previous, s.state)
        ))),
        Progress::Beat(b) => {
            let t = b.peak_index as f64 / fs;
            let hr = b.hr_smoothed_bpm.map_or("-".into(), |h| format!("{h:.0}"));
            watch(Told::Rate(format!("{t:>5.1} s  {MEDIAN_HR} {hr} bpm")));
            // One beat line every 10 s of ride keeps the stream readable.
            if t - last_shown >= 10.0 {
                last_shown = t;
                watch(Told::Line(format!(
                    "  {t:>6.1} s  beat: IBI {} ms, {MEDIAN_HR} {hr} bpm, quality {:.2}, {}",
                    b.ibi_ms.map_or("-".into(), |i| format!("{i:.0}")),
                    b.quality,
                    verdict_words(b.flags)
                )));
            }
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ride::scenario;
    use std::cell::Cell;
    use std::rc::Rc;

    /// A clock that only moves when slept on; its time is shared with
    /// the test.
    #[derive(Clone, Default)]
    struct FakeClock(Rc<Cell<Duration>>);

    impl Clock for FakeClock {
        fn elapsed(&self) -> Duration {
            self.0.get()
        }
        fn sleep(&mut self, d: Duration) {
            self.0.set(self.0.get() + d);
        }
    }

    #[test]
    fn each_line_is_told_when_its_paced_time_comes() {
        let ride = scenario::ride(7).unwrap();
        let fs = ride.sample_rate_hz;
        let samples: Vec<f64> = ride.samples.iter().map(|&v| f64::from(v)).collect();
        let speed = 40.0;
        let clock = FakeClock::default();
        let now = clock.0.clone();
        // (clock time when told, ride time it is about, the line)
        let mut told: Vec<(f64, f64, String)> = Vec::new();
        stream_live(
            &samples,
            Config::new(fs as f32),
            fs,
            Some(speed),
            &mut clock.clone(),
            &mut |t| {
                if let Told::Line(text) = t {
                    // The ride time the line starts with.
                    let at_s: f64 = text.split_whitespace().next().unwrap().parse().unwrap();
                    told.push((now.get().as_secs_f64(), at_s, text));
                }
            },
        );
        let end = samples.len() as f64 / fs / speed;
        assert!(told.len() > 20, "{} lines", told.len());
        let step = PACE_STEP as f64 / fs / speed;
        for (when, at_s, text) in &told {
            // Not before its moment (one pacing step early at most), and
            // not held back: within the pipeline's beat delay (under 2 s
            // of ride) after it.
            let due = at_s / speed;
            assert!(
                *when >= due - step - 1e-9,
                "{text}: told at {when} s, due {due} s"
            );
            assert!(
                *when <= due + 2.0 / speed,
                "{text}: told at {when} s, due {due} s"
            );
        }
        // Spread over the ride in order, the first at its start.
        assert!(told[0].0 < 0.01 * end, "{:?}", told[0]);
        assert!(told.windows(2).all(|w| w[0].0 <= w[1].0));
        assert!(told.last().unwrap().0 > 0.8 * end);
        // The clock went as far as the ride, on its own schedule.
        let last_step = ((samples.len() as u64 - 1) / PACE_STEP * PACE_STEP) as f64 / fs / speed;
        assert!((now.get().as_secs_f64() - last_step).abs() < 1e-9);
    }
}
