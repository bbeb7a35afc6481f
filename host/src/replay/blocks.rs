//! The sample blocks a board sends for a recording, computed on the host.

use plethwire_dsp::pipeline::{Config, Pipeline, PipelineError};
use plethwire_dsp::wire::{sample_stride, SampleBlock, SampleTap};

/// The sample blocks the emulated board sends for `samples` (at
/// `config.sample_rate_hz`): the same `f32` values through the same
/// pipeline and `wire::SampleTap` at `wire::sample_stride`, the last
/// block flushed when the samples end (before `finish`, whose extra
/// values are not samples of the recording). They match the board's bit
/// for bit (`plethwire::emulate::compare`).
pub fn sample_blocks(samples: &[f64], config: Config) -> Result<Vec<SampleBlock>, PipelineError> {
    let mut p = Pipeline::new(config)?;
    let mut tap = SampleTap::new(sample_stride(config.sample_rate_hz));
    let mut blocks = Vec::with_capacity(samples.len() / 16 + 1);
    for &x in samples {
        // The board hands the pipeline f32 samples; so does the replay.
        let x = x as f32;
        p.push(x);
        blocks.extend(tap.push(x, &p));
    }
    blocks.extend(tap.flush());
    Ok(blocks)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_cover_every_sample_once_at_the_rates_stride() {
        let samples: Vec<f64> = (0..1000).map(|n| (n as f64 * 0.07).sin() * 100.0).collect();
        let at_250 = sample_blocks(&samples, Config::new(250.0)).unwrap();
        assert_eq!(at_250.len(), 63);
        assert!(at_250.iter().all(|b| b.stride == 1));
        assert_eq!(
            at_250.last().map(|b| (b.first_index, b.count)),
            Some((992, 8))
        );
        let raw: Vec<f64> = at_250
            .iter()
            .flat_map(|b| b.raw[..b.count as usize].iter().map(|&v| f64::from(v)))
            .collect();
        let as_f32: Vec<f64> = samples.iter().map(|&x| f64::from(x as f32)).collect();
        assert_eq!(raw, as_f32);
        // Above 500 Hz every second sample.
        let at_1000 = sample_blocks(&samples, Config::new(1000.0)).unwrap();
        assert_eq!(at_1000.len(), 32);
        assert!(at_1000.iter().all(|b| b.stride == 2));
        assert_eq!(at_1000[1].first_index, 32);
        assert_eq!(at_1000[1].raw[0], samples[32] as f32);
    }
}
