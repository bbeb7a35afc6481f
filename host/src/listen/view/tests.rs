//! The live page's server over real sockets, and its state alone. No
//! test asserts on time: reads have a generous timeout only so a broken
//! server fails instead of hanging.

use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options, SignalState, StateEvent};
use plethwire_dsp::wire::{DecodeStats, Hello, SampleBlock, Status, SAMPLES_PER_BLOCK};
use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::{Ipv4Addr, TcpListener, TcpStream};
use std::time::Duration;

use super::live::Live;
use super::{View, ViewError, ENDED};
use crate::listen::{BeatSeen, Event, Sink, StateSeen};

const RATE: f64 = 250.0;
const GUARD: Duration = Duration::from_secs(20);

// Local constructors: the wire format's new fields are one line each here.
fn block(first: u64, count: usize, value: impl Fn(u64) -> f32) -> SampleBlock {
    let mut b = SampleBlock {
        first_index: first,
        count: count as u8,
        stride: 1,
        raw: [0.0; SAMPLES_PER_BLOCK],
        filtered: [0.0; SAMPLES_PER_BLOCK],
    };
    for i in 0..count {
        b.raw[i] = value(first + i as u64);
        b.filtered[i] = -value(first + i as u64);
    }
    b
}

fn status(dc_level: f32) -> Status {
    Status {
        led_drive: 32_768,
        dc_level,
        clipped_samples: 0,
        adc_overruns: 0,
        dropped_frames: 0,
        rejected_samples: 0,
        ambient_level: 0.0,
        measured: Status::MEASURED_ALL,
    }
}

fn hello() -> Hello {
    Hello {
        firmware_version: [0, 4, 1],
        sample_rate_hz: RATE as f32,
        adc_bits: 12,
        options: Options::default(),
    }
}

fn beat(peak: u64, median: Option<f32>) -> Event {
    Event::Beat(BeatSeen {
        beat: BeatEvent {
            peak_index: peak,
            onset_index: None,
            emitted_at: peak + 40,
            ibi_ms: Some(800.0),
            hr_bpm: Some(75.0),
            hr_smoothed_bpm: median,
            amplitude: 12.0,
            quality: 0.93,
            flags: BeatFlags(0),
        },
        peak: Some(peak),
        time_s: Some(peak as f64 / RATE),
    })
}

/// `seconds` of samples from record sample `from` on, value = index.
fn feed_samples(sink: &mut impl Sink, from: u64, seconds: f64) {
    let n = (seconds * RATE) as u64;
    for first in (from..from + n).step_by(SAMPLES_PER_BLOCK) {
        let count = SAMPLES_PER_BLOCK.min((from + n - first) as usize);
        let e = Event::Samples {
            start: first as i64,
            block: block(first, count, |i| i as f32),
            rate_hz: RATE,
        };
        sink.event(&e).unwrap();
    }
}

fn feed_session(sink: &mut impl Sink) {
    let opened = Event::Opened {
        port: "/dev/ttyTEST".into(),
        again_after: None,
    };
    sink.event(&opened).unwrap();
    sink.event(&Event::Hello(hello())).unwrap();
    feed_samples(sink, 0, 2.0);
    sink.event(&beat(300, Some(74.5))).unwrap();
    let state = Event::State(StateSeen {
        change: StateEvent {
            state: SignalState::Good,
            previous: SignalState::Acquiring,
            at: 320,
        },
        sample: Some(320),
        time_s: Some(1.28),
    });
    sink.event(&state).unwrap();
    let link = DecodeStats {
        frames: 40,
        damaged: 2,
        lost_frames: 1,
        ..DecodeStats::default()
    };
    let st = Event::Status {
        status: status(0.52),
        link,
    };
    sink.event(&st).unwrap();
}

/// A raw request; the whole answer as text.
fn request(view: &View, head: &str) -> String {
    let mut s = TcpStream::connect(view.addr()).unwrap();
    s.set_read_timeout(Some(GUARD)).unwrap();
    s.write_all(head.as_bytes()).unwrap();
    let mut answer = String::new();
    s.read_to_string(&mut answer).unwrap();
    answer
}

fn get(view: &View, path: &str) -> String {
    let port = view.addr().port();
    request(
        view,
        &format!("GET {path} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nAccept: */*\r\n\r\n"),
    )
}

/// An open event stream.
struct Events(BufReader<TcpStream>);

impl Events {
    fn open(view: &View) -> Self {
        let mut s = TcpStream::connect(view.addr()).unwrap();
        s.set_read_timeout(Some(GUARD)).unwrap();
        let port = view.addr().port();
        let head = format!("GET /events HTTP/1.1\r\nHost: localhost:{port}\r\n\r\n");
        s.write_all(head.as_bytes()).unwrap();
        let mut r = BufReader::new(s);
        let mut status = String::new();
        r.read_line(&mut status).unwrap();
        assert_eq!(status, "HTTP/1.1 200 OK\r\n");
        let mut line = String::new();
        let mut kind = None;
        while line != "\r\n" {
            line.clear();
            r.read_line(&mut line).unwrap();
            if line.starts_with("Content-Type:") {
                kind = Some(line.clone());
            }
        }
        assert_eq!(kind.unwrap(), "Content-Type: text/event-stream\r\n");
        Self(r)
    }

    /// The next `data:` message; `None` when the server closed.
    fn next(&mut self) -> Option<Value> {
        loop {
            let mut line = String::new();
            if self.0.read_line(&mut line).unwrap() == 0 {
                return None;
            }
            if let Some(data) = line.strip_prefix("data: ") {
                return Some(serde_json::from_str(data.trim_end()).unwrap());
            }
        }
    }

    /// Messages until one has `key`, the others' samples gathered too.
    fn until(&mut self, key: &str, samples: &mut Vec<Value>) -> Value {
        for _ in 0..500 {
            let m = self.next().expect("the stream ended");
            if let Some(Value::Array(s)) = m.get("samples") {
                samples.extend(s.iter().cloned());
            }
            if m.get(key).is_some() {
                return m;
            }
        }
        panic!("no message with {key} in 500");
    }
}

#[test]
fn the_page_holds_the_cautions_and_every_contract_element_and_nothing_from_outside() {
    let view = View::start(0).unwrap();
    let answer = get(&view, "/");
    let (head, body) = answer.split_once("\r\n\r\n").unwrap();
    assert!(head.starts_with("HTTP/1.1 200 OK\r\n"), "{head}");
    assert!(
        head.contains("Content-Type: text/html; charset=utf-8"),
        "{head}"
    );
    assert!(
        head.contains("Content-Security-Policy: default-src 'none'"),
        "{head}"
    );
    assert!(
        head.contains(&format!("Content-Length: {}", body.len())),
        "{head}"
    );
    for caution in [
        "Not a medical device",
        "IEC 62471",
        "battery",
        "USB isolator",
        "IEC 60601-1 practice",
        "Local rules and qualified practice decide",
    ] {
        assert!(body.contains(caution), "no {caution:?} on the page");
    }
    for id in [
        "wave", "hr", "quality", "state", "advice", "link", "board", "pause", "cautions",
    ] {
        assert!(body.contains(&format!("id=\"{id}\"")), "no #{id}");
    }
    for g in super::GAUGES {
        assert!(
            body.contains(&format!("data-gauge=\"{g}\"")),
            "no gauge {g}"
        );
    }
    for c in [
        "perfusion",
        "pulse_bits",
        "snr",
        "hum",
        "clipping",
        "ambient",
        "settling",
    ] {
        assert!(
            body.contains(&format!("data-check=\"{c}\"")),
            "no check {c}"
        );
    }
    // Style and script are inside; nothing names another site.
    assert!(!body.contains("/*STYLE*/") && !body.contains("/*SCRIPT*/"));
    assert!(body.contains("new EventSource('/events')"));
    assert!(!body.contains("http://") && !body.contains("https://"));
    assert!(!body.contains("src=") && !body.contains("@import") && !body.contains("url("));
}

#[test]
fn the_stream_carries_samples_beats_and_the_rest_after_a_feed() {
    let view = View::start(0).unwrap();
    let mut events = Events::open(&view);
    let first = events.next().unwrap();
    assert_eq!(first["snapshot"], true);
    assert_eq!(first["board"]["connected"], false);
    assert!(first.get("samples").is_none());
    feed_session(&mut view.sink());
    let mut samples = Vec::new();
    let m = events.until("status", &mut samples);
    assert_eq!(
        m["link"],
        json!({"frames": 40, "damaged": 2, "lost": 1, "crc_errors": 0})
    );
    assert_eq!(m["gauges"]["dc"], 0.52);
    assert_eq!(m["gauges"]["pulse_codes"], Value::Null);
    while samples.len() < 500 {
        events.until("samples", &mut samples);
    }
    // Every sample once, in order: [index, raw, filtered].
    assert_eq!(samples.len(), 500);
    for (i, s) in samples.iter().enumerate() {
        assert_eq!(*s, json!([i, i as f32, -(i as f32)]));
    }
    // A second page gets the beat, the state and the hello at once.
    let snap = Events::open(&view).next().unwrap();
    assert_eq!(snap["beats"][0]["median_hr_bpm"], 74.5);
    assert_eq!(snap["beats"][0]["peak"], 300);
    assert_eq!(snap["beats"][0]["verdict"], "good");
    assert_eq!(snap["state"], "good");
    assert_eq!(snap["rate_hz"], RATE);
    assert_eq!(snap["hello"]["firmware"], "0.4.1");
    assert_eq!(
        snap["board"],
        json!({"connected": true, "quiet": false, "port": "/dev/ttyTEST"})
    );
}

#[test]
fn two_pages_at_once_get_the_same_news() {
    let view = View::start(0).unwrap();
    let mut a = Events::open(&view);
    let mut b = Events::open(&view);
    assert_eq!(a.next().unwrap()["snapshot"], true);
    assert_eq!(b.next().unwrap()["snapshot"], true);
    let mut sink = view.sink();
    feed_samples(&mut sink, 0, 1.0);
    let (mut got_a, mut got_b) = (Vec::new(), Vec::new());
    while got_a.len() < 250 {
        a.until("samples", &mut got_a);
    }
    while got_b.len() < 250 {
        b.until("samples", &mut got_b);
    }
    assert_eq!(got_a, got_b);
}

#[test]
fn a_reload_starts_from_a_snapshot_of_the_last_ten_seconds() {
    let view = View::start(0).unwrap();
    let mut sink = view.sink();
    feed_session(&mut sink);
    feed_samples(&mut sink, 500, 11.0); // to sample 3249
    sink.event(&beat(3000, Some(76.25))).unwrap();
    for _ in 0..2 {
        // A page, then the same page reloaded: both start full.
        let snap = Events::open(&view).next().unwrap();
        assert_eq!(snap["snapshot"], true);
        let s = snap["samples"].as_array().unwrap();
        assert_eq!(s.len(), 2500, "10 s at 250 Hz");
        assert_eq!(s[0][0], 750);
        assert_eq!(s[2499][0], 3249);
        // The beat at 300 is out of the window; the one at 3000 is in.
        assert_eq!(snap["beats"].as_array().unwrap().len(), 1);
        assert_eq!(snap["beats"][0]["median_hr_bpm"], 76.25);
        assert_eq!(snap["state"], "good");
        assert!(snap["gauges"].is_object() && snap["link"].is_object());
    }
}

#[test]
fn it_listens_on_loopback_only_and_refuses_a_taken_port() {
    let view = View::start(0).unwrap();
    assert_eq!(view.addr().ip(), Ipv4Addr::LOCALHOST);
    let port = view.addr().port();
    assert_eq!(view.url(), format!("http://127.0.0.1:{port}/"));
    // Not on the IPv6 loopback, nor on every address.
    assert!(TcpStream::connect(("::1", port)).is_err());
    let held = TcpListener::bind((Ipv4Addr::LOCALHOST, 0)).unwrap();
    let taken = held.local_addr().unwrap().port();
    match View::start(taken) {
        Err(e @ ViewError::InUse { .. }) => {
            assert_eq!(
                e.to_string(),
                format!("127.0.0.1:{taken} is already in use by another program")
            );
        }
        other => panic!("{:?}", other.map(|v| v.url())),
    }
}

#[test]
fn other_paths_methods_and_hosts_are_refused_politely() {
    let view = View::start(0).unwrap();
    let port = view.addr().port();
    let answer = get(&view, "/favicon.ico");
    assert!(answer.starts_with("HTTP/1.1 404 Not Found\r\n"), "{answer}");
    assert!(answer.ends_with("nothing else.\n"), "{answer}");
    let post = format!("POST / HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nContent-Length: 0\r\n\r\n");
    let answer = request(&view, &post);
    assert!(
        answer.starts_with("HTTP/1.1 405 Method Not Allowed\r\n"),
        "{answer}"
    );
    assert!(answer.contains("\r\nAllow: GET\r\n"), "{answer}");
    let rebound = "GET / HTTP/1.1\r\nHost: pulse.example:80\r\n\r\n";
    assert!(request(&view, rebound).starts_with("HTTP/1.1 403 Forbidden\r\n"));
    assert!(request(&view, "hello\r\n\r\n").starts_with("HTTP/1.1 400 Bad Request\r\n"));
    // The query string of a cache-buster is no other path.
    assert!(get(&view, "/?t=1").starts_with("HTTP/1.1 200 OK\r\n"));
}

#[test]
fn an_open_page_is_told_when_listen_ends() {
    let view = View::start(0).unwrap();
    let mut events = Events::open(&view);
    events.next().unwrap();
    drop(view);
    let mut last = None;
    while let Some(m) = events.next() {
        last = Some(m);
    }
    assert_eq!(last.unwrap()["notices"], json!([ENDED]));
}

#[test]
fn the_state_sends_only_news_and_a_report_replaces_the_gauges() {
    let mut live = Live::default();
    let c0 = live.cursor();
    live.status((&status(0.25)).into());
    let m = live.since(&c0);
    let led = serde_json::to_value(&m.gauges).unwrap()["led_drive"].clone();
    // The f32 fraction with its own shortest digits, not the f64 widening.
    assert_eq!(led.to_string(), (32_768f32 / 65_535.0).to_string());
    let c1 = live.cursor();
    assert_eq!(live.since(&c1), super::Message::default());
    let report = json!({
        "checks": [{"name": "snr", "value": 14.0, "verdict": "clear", "message": "heart band 14 dB over the rest"}],
        "gauges": {"pulse_codes": 310.0},
        "advice": ["feedback resistor 1 MΩ → 2.2 MΩ"],
    });
    live.report(&report);
    let m = serde_json::to_value(live.since(&c1)).unwrap();
    assert_eq!(m["checks"], report["checks"]);
    assert_eq!(m["advice"], report["advice"]);
    assert_eq!(m["gauges"]["pulse_codes"], 310.0);
    assert_eq!(
        m["gauges"]["dc"],
        Value::Null,
        "the report's gauges, not the status's"
    );
    // From now on a status no longer overwrites the report's gauges.
    let c2 = live.cursor();
    live.status((&status(0.5)).into());
    assert!(live.since(&c2).gauges.is_none());
    // Numbers going backwards start the trace over.
    live.samples(RATE, [(10, 1.0, 1.0), (11, 1.0, 1.0), (5, 2.0, 2.0)]);
    assert_eq!(live.snapshot().samples, vec![(5, 2.0, 2.0)]);
}

#[test]
fn unplugging_and_replugging_show_on_the_board() {
    let view = &View::start(0).unwrap();
    let mut sink = view.sink();
    let port = "/dev/ttyTEST".to_string();
    let mut events = Events::open(view);
    events.next().unwrap();
    let steps = [
        Event::Opened {
            port: port.clone(),
            again_after: None,
        },
        Event::Lost {
            port: port.clone(),
            reason: "device gone".into(),
        },
        Event::Opened {
            port: port.clone(),
            again_after: Some(Duration::from_secs(2)),
        },
    ];
    let mut seen = Vec::new();
    for e in &steps {
        sink.event(e).unwrap();
        let m = events.until("board", &mut Vec::new());
        seen.push(m["board"]["connected"].as_bool().unwrap());
    }
    assert_eq!(seen, [true, false, true]);
}

#[test]
fn a_message_comes_every_tick_even_with_no_news() {
    let view = View::start(0).unwrap();
    let mut events = Events::open(&view);
    assert_eq!(events.next().unwrap()["snapshot"], true);
    // Nothing fed: each tick still sends one, empty, so the page can tell
    // a quiet board from a dead server.
    for _ in 0..3 {
        assert_eq!(events.next().unwrap(), json!({}));
    }
}
