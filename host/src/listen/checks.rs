//! The live bring-up checks fed `listen`'s events.

use super::event::Event;
use crate::bringup::live::{BoardInfo, Levels, LiveChecks, Report};

impl LiveChecks {
    /// Takes one event of `listen` (hello, status, samples); returns a
    /// report when one is due.
    pub fn event(&mut self, event: &Event) -> Option<Report> {
        match event {
            Event::Hello(h) => {
                self.board(BoardInfo::of(h));
                None
            }
            Event::Status { status, .. } => {
                self.status(Levels::of(status));
                None
            }
            Event::Samples {
                start,
                block,
                rate_hz,
            } => self.sample_block(*start, block, *rate_hz),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bringup::live::WINDOW_S;
    use plethwire_dsp::pipeline::Options;
    use plethwire_dsp::wire::{Hello, SampleBlock};
    use std::f64::consts::PI;

    /// A sample block as the wire carries it, every input sample.
    fn sample_block(first: u64, raw: &[f32], filtered: &[f32]) -> SampleBlock {
        let mut b = SampleBlock {
            first_index: first,
            count: raw.len() as u8,
            stride: 1,
            raw: [0.0; 16],
            filtered: [0.0; 16],
        };
        b.raw[..raw.len()].copy_from_slice(raw);
        b.filtered[..filtered.len()].copy_from_slice(filtered);
        b
    }

    /// A pulse of `pp` peak to peak at 1.2 Hz on `dc`.
    fn pulse(dc: f64, pp: f64) -> impl Fn(f64) -> f64 {
        move |t| dc + pp / 2.0 * (2.0 * PI * 1.2 * t).sin()
    }

    #[test]
    fn events_of_a_board_without_an_adc_feed_the_checks() {
        // No ADC width (adc_bits 0): the rails decide; a lost block is
        // bridged, so the window stays 10 s long. The input drifts 300 codes
        // over the 12 s; the band-passed trace beside it holds the pulse
        // alone, 100 codes peak to peak, and that is the pulse.
        let mut c = LiveChecks::new();
        let hello = Hello {
            firmware_version: [0, 4, 2],
            sample_rate_hz: 250.0,
            adc_bits: 0,
            options: Options {
                rails: Some((0.0, 4095.0)),
                ..Options::default()
            },
        };
        assert!(c.event(&Event::Hello(hello)).is_none());
        let f = pulse(0.0, 100.0);
        let drift = |t: f64| 2000.0 + 300.0 * t / 12.0;
        let mut last = None;
        for b in (0..3000u64).step_by(16).filter(|b| *b != 1600) {
            let t = |i: u64| i as f64 / 250.0;
            let raw: Vec<f32> = (b..b + 16)
                .map(|i| (drift(t(i)) + f(t(i))).round() as f32)
                .collect();
            let filtered: Vec<f32> = (b..b + 16).map(|i| f(t(i)) as f32).collect();
            let e = Event::Samples {
                start: b as i64,
                block: sample_block(b, &raw, &filtered),
                rate_hz: 250.0,
            };
            last = c.event(&e).or(last);
        }
        let r = last.unwrap();
        assert_eq!(c.latest(), Some(&r));
        assert!((r.window_s - WINDOW_S).abs() < 1e-9, "{}", r.window_s);
        assert!(r
            .range
            .starts_with("the board's rails 0 to 4095 (no ADC on the board (emulated))"));
        // Whole codes: one step is 1, so 100 codes are 6.6 bits (the input's
        // own peak to peak, drift and all, is some 350).
        let bits = r
            .checks
            .iter()
            .find(|c| c.name == "pulse_bits")
            .unwrap()
            .value
            .unwrap();
        assert!((bits - 100f64.log2()).abs() < 0.01, "{bits}");
        assert!((r.gauges.pulse_codes.unwrap() - 100.0).abs() < 0.01);
    }
}
