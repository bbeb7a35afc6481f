//! The bytes a board puts on the line, from encoded frames: the table in
//! docs/wire-format.md ("Bandwidth") and its headroom on 115200 baud.

use plethwire_dsp::pipeline::{BeatEvent, BeatFlags};
use plethwire_dsp::wire::{
    sample_stride, Encoder, Message, SampleBlock, Status, MAX_FRAME, SAMPLES_PER_BLOCK,
};

/// 115200 baud at 8N1: ten bits a byte (start, 8 data, stop; common
/// practice for UART framing).
const LINE_BYTES_PER_S: f64 = 115_200.0 / 10.0;

fn on_wire(m: &Message) -> f64 {
    let mut buf = [0u8; MAX_FRAME];
    Encoder::new().encode(m, &mut buf).unwrap().len() as f64
}

/// Bytes per second at `rate`: full sample blocks at the board's stride,
/// beats at 180 bpm, a status every 2 s.
fn bytes_per_s(rate: f64) -> f64 {
    let stride = sample_stride(rate as f32);
    let block = Message::Samples(SampleBlock {
        first_index: 1 << 40,
        count: SAMPLES_PER_BLOCK as u8,
        stride,
        raw: [-1234.0; SAMPLES_PER_BLOCK],
        filtered: [12.5; SAMPLES_PER_BLOCK],
    });
    let beat = Message::Beat(BeatEvent {
        peak_index: 1 << 30,
        onset_index: Some(1 << 30),
        emitted_at: 1 << 30,
        ibi_ms: Some(333.0),
        hr_bpm: Some(180.0),
        hr_smoothed_bpm: Some(180.0),
        amplitude: 300.0,
        quality: 0.9,
        flags: BeatFlags(0),
    });
    let status = Message::Status(Status {
        led_drive: 30_000,
        dc_level: 0.5,
        ambient_level: 0.02,
        measured: Status::MEASURED_ALL,
        clipped_samples: 1,
        adc_overruns: 1,
        dropped_frames: 1,
        rejected_samples: 1,
    });
    let blocks = rate / f64::from(stride) / SAMPLES_PER_BLOCK as f64;
    blocks * on_wire(&block) + 3.0 * on_wire(&beat) + on_wire(&status) / 2.0
}

#[test]
fn frames_are_the_sizes_the_document_gives() {
    // 146 raw bytes + 1 COBS code byte + the delimiter.
    let block = SampleBlock {
        first_index: 0,
        count: 16,
        stride: 1,
        raw: [0.0; 16],
        filtered: [0.0; 16],
    };
    assert_eq!(on_wire(&Message::Samples(block)), 148.0);
}

#[test]
fn the_line_keeps_at_least_30_percent_headroom_at_every_rate() {
    for rate in 25..=1000 {
        let share = bytes_per_s(f64::from(rate)) / LINE_BYTES_PER_S;
        assert!(share <= 0.70, "{rate} Hz uses {:.1} %", share * 100.0);
    }
}

#[test]
fn the_documented_table_holds() {
    // docs/wire-format.md, "Bandwidth": total bytes per second.
    for (rate, total) in [
        (125.0, 1343.0),
        (250.0, 2499.0),
        (300.0, 2962.0),
        (500.0, 4812.0),
        (1000.0, 4812.0),
    ] {
        let got = bytes_per_s(rate);
        assert!((got - total).abs() < 1.0, "{rate} Hz: {got:.1} B/s");
    }
    let headroom = 1.0 - bytes_per_s(250.0) / LINE_BYTES_PER_S;
    assert!((headroom - 0.783).abs() < 0.001, "{headroom}");
}
