//! A made-up bench session shown on the live page, without a board: a
//! synthetic finger on a 12-bit ADC at 250 Hz (the finger lifted at 40 s
//! for 5 s), run through the same pipeline as the boards, paced to the
//! clock and handed to the page as `listen` would hand it the board's
//! events. The checks are the bring-up computations over the last 10 s of
//! input; the ambient level and the LED drive loop are not measurable
//! here, the pretend board has no LED.
//!
//! `cargo run -p plethwire --example live_view_feeder -- [PORT] [SECONDS]`
//! (PORT 0 = any free port; SECONDS: how long, 120 unless given).

use plethwire::bringup::{self, AdcRange, Block, Check};
use plethwire::listen::view::View;
use plethwire::listen::{BeatSeen, Event, Sink, StateSeen};
use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::{Cascade, Df2t};
use plethwire_dsp::pipeline::{Config, Pipeline};
use plethwire_dsp::wire::{DecodeStats, Hello, SampleBlock, Status, SAMPLES_PER_BLOCK};
use plethwire_synth::{generate, FingerOff, HrSchedule, SynthOptions};
use serde_json::{json, Value};
use std::time::{Duration, Instant};

const RATE: f64 = 250.0;
const FULL: f64 = 4095.0;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let port: u16 = args.next().map_or(Ok(0), |a| a.parse())?;
    let seconds: f64 = args.next().map_or(Ok(120.0), |a| a.parse())?;
    let signal = generate(&SynthOptions {
        sample_rate_hz: RATE,
        duration_s: seconds,
        hr: HrSchedule::from_points(&[(0.0, 66.0), (seconds, 82.0)]),
        pulse_amplitude: 60.0,
        dc_level: 2300.0,
        wander_amplitude: 6.0,
        noise_sd: 1.5,
        finger_off: vec![FingerOff {
            start_s: 40.0,
            duration_s: 5.0,
        }],
        finger_off_level: 120.0,
        finger_off_noise_sd: 2.0,
        ..SynthOptions::default()
    })?;
    let view = View::start(port)?;
    eprintln!("live view: {}", view.url());
    feed(&view, &signal.samples)
}

/// Runs `samples` through the pipeline at their own pace onto the page.
fn feed(view: &View, samples: &[f32]) -> Result<(), Box<dyn std::error::Error>> {
    let mut config = Config::new(RATE as f32);
    config.options.rails = Some((0.0, FULL as f32));
    let mut pipeline = Pipeline::new(config)?;
    let mut band: Cascade<Df2t<f32>, 4> = butterworth_bandpass(2, 0.5, 8.0, RATE)?.cascade()?;
    let mut sink = view.sink();
    let mut link = DecodeStats::default();
    sink.event(&Event::Opened {
        port: "pretend-board".into(),
        again_after: None,
    })?;
    let hello = Hello {
        firmware_version: [0, 0, 0],
        sample_rate_hz: RATE as f32,
        adc_bits: 12,
        options: config.options,
    };
    send(&mut sink, &mut link, Event::Hello(hello))?;
    let started = Instant::now();
    let mut amplitudes = Vec::new();
    for (b, chunk) in samples.chunks(SAMPLES_PER_BLOCK).enumerate() {
        let first = (b * SAMPLES_PER_BLOCK) as u64;
        let mut block = sample_block(first, chunk.len());
        for (i, &x) in chunk.iter().enumerate() {
            block.raw[i] = x;
            block.filtered[i] = band.process(x);
            let out = pipeline.push(x);
            if let Some(beat) = out.beat {
                amplitudes.push(f64::from(beat.amplitude));
                let seen = BeatSeen {
                    beat,
                    peak: Some(beat.peak_index),
                    time_s: Some(beat.peak_index as f64 / RATE),
                };
                send(&mut sink, &mut link, Event::Beat(seen))?;
            }
            if let Some(change) = out.state {
                let seen = StateSeen {
                    change,
                    sample: Some(change.at),
                    time_s: Some(change.at as f64 / RATE),
                };
                send(&mut sink, &mut link, Event::State(seen))?;
            }
        }
        let e = Event::Samples {
            start: first as i64,
            block,
            rate_hz: RATE,
        };
        send(&mut sink, &mut link, e)?;
        let end = first as usize + chunk.len();
        if end % (RATE as usize) < SAMPLES_PER_BLOCK {
            let recent = &samples[end.saturating_sub(10 * RATE as usize)..end];
            let status = demo_status(recent, pipeline.clipped_samples() as u32);
            let counters = link;
            send(
                &mut sink,
                &mut link,
                Event::Status {
                    status,
                    link: counters,
                },
            )?;
            let tail = &amplitudes[amplitudes.len().saturating_sub(8)..];
            // Too short a block for the spectrum in the first seconds.
            if let Ok(r) = report(recent, tail, status) {
                view.set_checks(&r);
            }
        }
        let due = started + Duration::from_secs_f64(end as f64 / RATE);
        std::thread::sleep(due.saturating_duration_since(Instant::now()));
    }
    Ok(())
}

/// One frame's event, counted as decoded.
fn send(sink: &mut dyn Sink, link: &mut DecodeStats, e: Event) -> std::io::Result<()> {
    link.frames += 1;
    sink.event(&e)
}

/// A block of `count` samples from `first` on (filled in by the caller).
fn sample_block(first: u64, count: usize) -> SampleBlock {
    SampleBlock {
        first_index: first,
        count: count as u8,
        stride: 1,
        raw: [0.0; SAMPLES_PER_BLOCK],
        filtered: [0.0; SAMPLES_PER_BLOCK],
    }
}

/// The pretend board's status: DC as a share of the range, a fixed drive.
fn demo_status(recent: &[f32], clipped: u32) -> Status {
    let mean = recent.iter().map(|&x| f64::from(x)).sum::<f64>() / recent.len().max(1) as f64;
    Status {
        led_drive: 26_000,
        dc_level: (mean / FULL) as f32,
        clipped_samples: clipped,
        adc_overruns: 0,
        dropped_frames: 0,
        rejected_samples: 0,
        ambient_level: 0.0,
        measured: Status::MEASURED_LED_DRIVE | Status::MEASURED_DC_LEVEL,
    }
}

fn check(name: &str, c: &Check) -> Value {
    json!({"name": name, "value": c.value, "verdict": c.verdict.name().replace(' ', "_"), "message": c.message})
}

/// The checks over the last seconds of input, as the live page takes them.
fn report(
    recent: &[f32],
    amplitudes: &[f64],
    status: Status,
) -> Result<Value, bringup::BringupError> {
    let x: Vec<f64> = recent.iter().map(|&v| f64::from(v)).collect();
    let block = Block::new(&x, RATE, AdcRange::new(0.0, FULL, 1.0)?)?;
    let clipping = bringup::clipping::clipped_share(&block);
    let mut checks = vec![
        check("perfusion", &bringup::perfusion::perfusion_index(&block)),
        check("pulse_bits", &bringup::pulse_bits::pulse_bits(&block)),
        check("snr", &bringup::snr::heart_snr(&block)?),
        check("clipping", &clipping),
    ];
    // The worse of the 50 and 60 Hz lines stands for both here.
    let hum = bringup::hum::mains_hum(&block)?;
    if let Some(h) = hum.iter().max_by(|a, b| {
        a.check
            .value
            .partial_cmp(&b.check.value)
            .unwrap_or(std::cmp::Ordering::Equal)
    }) {
        checks.push(check("hum", &h.check));
    }
    for name in ["ambient", "settling"] {
        checks.push(
            json!({"name": name, "value": null, "verdict": "not_measurable",
            "message": "the pretend board of this example has no LED"}),
        );
    }
    let pulse =
        (!amplitudes.is_empty()).then(|| amplitudes.iter().sum::<f64>() / amplitudes.len() as f64);
    Ok(json!({
        "checks": checks,
        "gauges": {
            "dc": status.dc_level, "pulse_codes": pulse, "pulse_share": pulse.map(|p| p / (FULL + 1.0)),
            "clipped": clipping.value, "ambient": null, "led_drive": f64::from(status.led_drive) / 65_535.0,
        },
        "advice": [],
    }))
}
