//! `--json`: one JSON object per line for every event, tagged by `event`.

use serde::Serialize;

use super::event::Event;
use super::fields::{HelloFields, LinkFields, StatusFields};
use crate::bringup::live::Report;
use crate::vocabulary::flag_list;

#[derive(Serialize)]
#[serde(tag = "event", rename_all = "snake_case")]
enum Line<'a> {
    Opened {
        port: &'a str,
        again_after_s: Option<f64>,
    },
    Lost {
        port: &'a str,
        reason: &'a str,
        retry_every_s: f64,
        give_up_after_s: f64,
    },
    Quiet {
        for_s: f64,
    },
    Notice {
        text: &'a str,
    },
    Hello(HelloFields),
    Beat {
        time_s: Option<f64>,
        sample: Option<u64>,
        board_sample: u64,
        onset_board_sample: Option<u64>,
        latency_samples: u64,
        ibi_ms: Option<f32>,
        hr_bpm: Option<f32>,
        #[serde(rename = "median_hr_bpm")]
        hr_smoothed_bpm: Option<f32>,
        amplitude: f32,
        quality: f32,
        verdict: &'static str,
        flags: Vec<&'static str>,
    },
    State {
        time_s: Option<f64>,
        sample: Option<u64>,
        board_sample: u64,
        state: &'static str,
        previous: &'static str,
    },
    Status {
        #[serde(flatten)]
        status: StatusFields,
        link: LinkFields,
    },
    Link(LinkFields),
    Restart {
        sample: u64,
    },
}

/// The live checks' report as one `"event": "checks"` line.
pub fn checks(report: &Report) -> Option<String> {
    #[derive(Serialize)]
    struct Checks<'a> {
        event: &'static str,
        #[serde(flatten)]
        report: &'a Report,
    }
    serde_json::to_string(&Checks {
        event: "checks",
        report,
    })
    .ok()
}

/// The JSON line of `event` (no newline); `None` for events that are not
/// shown (sample blocks). `retry` is (retry interval, give-up time), s.
pub fn line(event: &Event, retry: (f64, f64)) -> Option<String> {
    let l = match event {
        Event::Opened { port, again_after } => Line::Opened {
            port,
            again_after_s: again_after.map(|d| d.as_secs_f64()),
        },
        Event::Lost { port, reason } => Line::Lost {
            port,
            reason,
            retry_every_s: retry.0,
            give_up_after_s: retry.1,
        },
        Event::Quiet { for_time } => Line::Quiet {
            for_s: for_time.as_secs_f64(),
        },
        Event::Notice(text) => Line::Notice { text },
        Event::Hello(h) => Line::Hello(h.into()),
        Event::Beat(b) => Line::Beat {
            time_s: b.time_s,
            sample: b.peak,
            board_sample: b.beat.peak_index,
            onset_board_sample: b.beat.onset_index,
            latency_samples: b.beat.emitted_at.saturating_sub(b.beat.peak_index),
            ibi_ms: b.beat.ibi_ms,
            hr_bpm: b.beat.hr_bpm,
            hr_smoothed_bpm: b.beat.hr_smoothed_bpm,
            amplitude: b.beat.amplitude,
            quality: b.beat.quality,
            verdict: b.beat.flags.verdict(),
            flags: flag_list(b.beat.flags),
        },
        Event::State(s) => Line::State {
            time_s: s.time_s,
            sample: s.sample,
            board_sample: s.change.at,
            state: s.change.state.name(),
            previous: s.change.previous.name(),
        },
        Event::Status { status, link } => Line::Status {
            status: status.into(),
            link: (*link).into(),
        },
        Event::Link(stats) => Line::Link((*stats).into()),
        Event::Restart { sample } => Line::Restart { sample: *sample },
        Event::Samples { .. } => return None,
    };
    serde_json::to_string(&l).ok()
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::{BeatEvent, BeatFlags};

    #[test]
    fn a_beat_line_has_our_fields() {
        let beat = BeatEvent {
            peak_index: 3085,
            onset_index: None,
            emitted_at: 3120,
            ibi_ms: Some(812.0),
            hr_bpm: Some(73.9),
            hr_smoothed_bpm: None,
            amplitude: 41.5,
            quality: 0.25,
            flags: BeatFlags(BeatFlags::CLIPPED | BeatFlags::LOW_CORRELATION),
        };
        let e = Event::Beat(crate::listen::BeatSeen {
            beat,
            peak: Some(3085),
            time_s: Some(12.34),
        });
        let v: serde_json::Value = serde_json::from_str(&line(&e, (0.5, 30.0)).unwrap()).unwrap();
        assert_eq!(v["event"], "beat");
        assert_eq!(v["time_s"], 12.34);
        assert_eq!(v["hr_bpm"].to_string(), "73.9");
        assert_eq!(v["median_hr_bpm"], serde_json::Value::Null);
        assert_eq!(v["latency_samples"], 35);
        assert_eq!(v["verdict"], "bad");
        assert_eq!(
            v["flags"],
            serde_json::json!(["clipped", "low_correlation"])
        );
        let moved = Event::Beat(crate::listen::BeatSeen {
            beat: BeatEvent {
                flags: BeatFlags(BeatFlags::MOTION),
                ..beat
            },
            peak: Some(3085),
            time_s: Some(12.34),
        });
        let v: serde_json::Value =
            serde_json::from_str(&line(&moved, (0.5, 30.0)).unwrap()).unwrap();
        assert_eq!(v["verdict"], "bad");
        assert_eq!(v["flags"], serde_json::json!(["motion"]));
    }
}
