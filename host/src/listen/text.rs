//! The screen: one line per event, a fixed-width word first so the eye
//! (and `grep`) finds its kind. Colour only on a terminal.

use plethwire_dsp::pipeline::SignalState;
use plethwire_dsp::wire::{DecodeStats, Hello, Status};

use super::event::{BeatSeen, Event, StateSeen};
use super::fields::detector_name;
use crate::bringup::live::Report;
use crate::bringup::Verdict;
use crate::vocabulary::{state_change_words, verdict_words, words, HR, MEDIAN_HR};

/// How lines look.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Look {
    /// ANSI colours (a terminal that wants them).
    pub colour: bool,
    /// Pause between attempts to reopen, s.
    pub retry_every_s: f64,
    /// Give-up time, s.
    pub give_up_after_s: f64,
}

#[derive(Clone, Copy)]
enum Tone {
    Plain,
    Good,
    Warn,
    Bad,
}

fn paint(look: &Look, tone: Tone, text: String) -> String {
    let code = match tone {
        Tone::Plain => return text,
        Tone::Good => "32",
        Tone::Warn => "33",
        Tone::Bad => "31",
    };
    if look.colour {
        format!("\x1b[{code}m{text}\x1b[0m")
    } else {
        text
    }
}

fn opt(v: Option<f32>, width: usize, decimals: usize) -> String {
    v.map_or_else(
        || format!("{:>width$}", "-"),
        |v| format!("{v:>width$.decimals$}"),
    )
}

fn when(time_s: Option<f64>, sample: Option<u64>, board: u64) -> String {
    match (time_s, sample) {
        (Some(t), _) => format!("{t:>10.3} s"),
        (None, Some(s)) => format!("{:>12}", format!("#{s}")),
        (None, None) => format!("board #{board}"),
    }
}

/// The screen lines of `event` (none for sample blocks).
pub fn lines(event: &Event, look: &Look) -> Vec<String> {
    let one = |tone, text| vec![paint(look, tone, text)];
    match event {
        Event::Opened { port, again_after } => match again_after {
            None => one(Tone::Good, format!("port     {port} open")),
            Some(d) => one(
                Tone::Good,
                format!(
                    "port     {port} open again after {:.1} s away",
                    d.as_secs_f64()
                ),
            ),
        },
        Event::Lost { port, reason } => one(
            Tone::Bad,
            format!(
                "lost     {port}: {reason}; trying again every {} s for up to {} s",
                look.retry_every_s, look.give_up_after_s
            ),
        ),
        Event::Quiet { for_time } => one(
            Tone::Warn,
            format!(
                "quiet    nothing decoded for {:.0} s: is the board sending, at this baud rate?",
                for_time.as_secs_f64()
            ),
        ),
        Event::Notice(text) => one(Tone::Warn, format!("note     {text}")),
        Event::Hello(h) => one(Tone::Plain, hello(h)),
        Event::Beat(b) => {
            let tone = if b.beat.flags.is_good() {
                Tone::Plain
            } else {
                Tone::Warn
            };
            one(tone, beat(b))
        }
        Event::State(s) => one(state_tone(s.change.state), state(s)),
        Event::Status { status: s, link } => {
            vec![paint(look, Tone::Plain, status(s)), link_line(look, link)]
        }
        Event::Link(stats) => vec![link_line(look, stats)],
        Event::Restart { sample } => one(
            Tone::Warn,
            format!("restart  the board started over; the record goes on at sample {sample}"),
        ),
        Event::Samples { .. } => Vec::new(),
    }
}

/// The live checks in one line, coloured by the worst verdict, each check
/// its name, number and verdict: `checks     12.3 s  perfusion 1.35 %
/// clear | pulse bits 4.8 borderline | ...`.
pub fn checks(r: &Report, look: &Look) -> String {
    let unit = |name: &str| match name {
        "perfusion" => (1.0, 2, " %"),
        "clipping" | "ambient" => (100.0, 1, " %"),
        "snr" | "hum" => (1.0, 1, " dB"),
        "settling" => (1.0, 1, " s"),
        _ => (1.0, 1, ""),
    };
    let parts: Vec<String> = r
        .checks
        .iter()
        .map(|c| {
            let (scale, decimals, u) = unit(c.name);
            let value = c
                .value
                .map_or("-".to_string(), |v| format!("{:.decimals$}{u}", v * scale));
            format!("{} {value} {}", words(c.name), c.verdict.name())
        })
        .collect();
    let tone = r
        .checks
        .iter()
        .fold(Tone::Plain, |t, c| match (t, c.verdict) {
            (_, Verdict::Trouble) | (Tone::Bad, _) => Tone::Bad,
            (_, Verdict::Borderline) | (Tone::Warn, _) => Tone::Warn,
            (t, _) => t,
        });
    paint(
        look,
        tone,
        format!("checks {:>10.1} s  {}", r.time_s, parts.join(" | ")),
    )
}

fn hello(h: &Hello) -> String {
    let [a, b, c] = h.firmware_version;
    let o = &h.options;
    let rails = match o.rails {
        Some((lo, hi)) => format!("rails {lo} to {hi}"),
        None => "rails unknown".into(),
    };
    format!(
        "board    firmware {a}.{b}.{c}, {} Hz, {} detector, band {}-{} Hz, \
         {MEDIAN_HR} over {} s, {rails}",
        h.sample_rate_hz,
        detector_name(o.detector),
        o.band_low_hz,
        o.band_high_hz,
        o.hr_window_s
    )
}

fn beat(b: &BeatSeen) -> String {
    let e = &b.beat;
    format!(
        "beat   {}  IBI {} ms  {HR} {} bpm  {MEDIAN_HR} {} bpm  quality {:.2}  {}",
        when(b.time_s, b.peak, e.peak_index),
        opt(e.ibi_ms, 5, 0),
        opt(e.hr_bpm, 5, 1),
        opt(e.hr_smoothed_bpm, 5, 1),
        e.quality,
        verdict_words(e.flags)
    )
}

fn state_tone(s: SignalState) -> Tone {
    match s {
        SignalState::Good => Tone::Good,
        SignalState::Acquiring => Tone::Plain,
        SignalState::Noisy | SignalState::Saturated => Tone::Warn,
        SignalState::NoSignal => Tone::Bad,
    }
}

fn state(s: &StateSeen) -> String {
    format!(
        "state  {}  {}",
        when(s.time_s, s.sample, s.change.at),
        state_change_words(s.change.previous, s.change.state)
    )
}

fn status(s: &Status) -> String {
    // Only what the board says it measured: an emulated board measures
    // no LED, DC or ambient level, and 0 % would read as a dark finger.
    let share =
        |v: Option<f64>| v.map_or_else(|| "-".to_owned(), |v| format!("{:.1} %", 100.0 * v));
    format!(
        "status   LED {}  DC {}  ambient {} of full scale  board counts: clipped {}, \
         ADC overruns {}, frames dropped {}, samples replaced {}",
        share(s.led_drive_measured().map(|d| f64::from(d) / 65_535.0)),
        share(s.dc_level_measured().map(f64::from)),
        share(s.ambient_level_measured().map(f64::from)),
        s.clipped_samples,
        s.adc_overruns,
        s.dropped_frames,
        s.rejected_samples
    )
}

fn link_line(look: &Look, s: &DecodeStats) -> String {
    let tone = if s.damaged > 0 || s.lost_frames > 0 {
        Tone::Warn
    } else {
        Tone::Plain
    };
    paint(
        look,
        tone,
        format!(
            "link     frames {}  damaged {} ({} CRC)  lost {}  bytes dropped {}",
            s.frames, s.damaged, s.crc_errors, s.lost_frames, s.dropped_bytes
        ),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, StateEvent};

    /// The status line gives only what the board says it measured.
    #[test]
    fn the_status_line_shows_what_was_measured_and_a_dash_for_the_rest() {
        let mut s = Status {
            led_drive: 30_000,
            dc_level: 0.52,
            ambient_level: 0.031,
            measured: Status::MEASURED_ALL,
            clipped_samples: 3,
            adc_overruns: 0,
            dropped_frames: 0,
            rejected_samples: 0,
        };
        assert_eq!(
            status(&s),
            "status   LED 45.8 %  DC 52.0 %  ambient 3.1 % of full scale  board counts: \
             clipped 3, ADC overruns 0, frames dropped 0, samples replaced 0"
        );
        s.measured = Status::MEASURED_DC_LEVEL;
        assert!(status(&s).starts_with("status   LED -  DC 52.0 %  ambient - of full scale"));
    }

    fn look(colour: bool) -> Look {
        Look {
            colour,
            retry_every_s: 0.5,
            give_up_after_s: 30.0,
        }
    }

    fn seen(flags: u8, ibi: Option<f32>) -> Event {
        Event::Beat(BeatSeen {
            beat: BeatEvent {
                peak_index: 3085,
                onset_index: None,
                emitted_at: 3100,
                ibi_ms: ibi,
                hr_bpm: ibi.map(|i| 60_000.0 / i),
                hr_smoothed_bpm: ibi.map(|_| 74.25),
                amplitude: 40.0,
                quality: 0.974,
                flags: BeatFlags(flags),
            },
            peak: Some(3085),
            time_s: Some(12.34),
        })
    }

    #[test]
    fn beat_lines_line_up_and_say_flags_in_words() {
        let good = lines(&seen(0, Some(812.0)), &look(false));
        let first = lines(&seen(BeatFlags::NO_INTERVAL, None), &look(false));
        assert_eq!(
            good,
            ["beat       12.340 s  IBI   812 ms  HR  73.9 bpm  median HR  74.2 bpm  quality 0.97  good"]
        );
        assert_eq!(
            first,
            ["beat       12.340 s  IBI     - ms  HR     - bpm  median HR     - bpm  quality 0.97  good (no interval)"]
        );
        let bad = lines(
            &seen(
                BeatFlags::CLIPPED | BeatFlags::IMPLAUSIBLE_INTERVAL,
                Some(300.0),
            ),
            &look(false),
        );
        assert!(
            bad[0].ends_with("bad (implausible interval, clipped)"),
            "{bad:?}"
        );
        let moved = lines(
            &seen(BeatFlags::MOTION | BeatFlags::LOW_CORRELATION, Some(400.0)),
            &look(false),
        );
        assert!(
            moved[0].ends_with("bad (low correlation, motion)"),
            "{moved:?}"
        );
    }

    #[test]
    fn colour_only_when_asked() {
        let e = Event::State(StateSeen {
            change: StateEvent {
                state: SignalState::NoSignal,
                previous: SignalState::Good,
                at: 500,
            },
            sample: Some(500),
            time_s: Some(2.0),
        });
        let plain = lines(&e, &look(false));
        assert_eq!(plain, ["state       2.000 s  good -> no signal"]);
        let painted = lines(&e, &look(true));
        assert_eq!(painted, [format!("\x1b[31m{}\x1b[0m", plain[0])]);
        assert!(lines(&seen(BeatFlags::CLIPPED, Some(800.0)), &look(true))[0].contains('\x1b'));
        assert!(!lines(&seen(0, Some(800.0)), &look(true))[0].contains('\x1b'));
    }
}
