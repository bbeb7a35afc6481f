//! A WFDB record replayed with its accelerometer, a block at a time: the
//! pulse signal and the three motion signals read in step, each motion
//! sample fed just before its pulse sample, as
//! [`super::replay_with_motion`] feeds them from memory (the same values,
//! so the same beats).

use std::path::Path;

use super::feed::{Kept, StreamError, BLOCK_FRAMES};
use super::Replay;
use crate::motion::MotionLoadError;
use plethwire_dsp::pipeline::{Config, MotionPipeline};
use plethwire_records::Record;

/// The signals `names` of `record` (opened from `path`) as the motion
/// reference of its signal `pulse`: their indices, refused as
/// [`crate::motion::load_wfdb`] refuses them (a name the record lacks, a
/// rate or length that differs from the pulse's), without reading them.
pub(super) fn motion_axes(
    path: &Path,
    record: &Record,
    names: &[String; 3],
    pulse: usize,
) -> Result<[usize; 3], MotionLoadError> {
    let mut axes = [0; 3];
    for (axis, name) in axes.iter_mut().zip(names) {
        *axis = record
            .pick_signal(Some(name))
            .map_err(MotionLoadError::Read)?;
    }
    let len = |i: usize| record.len() * record.signals()[i].samples_per_frame as usize;
    let name = |i: usize| record.signals()[i].description.clone().unwrap_or_default();
    for &a in &axes {
        if record.signal_fs(a) != record.signal_fs(pulse) || len(a) != len(pulse) {
            return Err(MotionLoadError::Mismatch {
                path: path.to_path_buf(),
                motion: name(a),
                motion_len: len(a),
                motion_fs: record.signal_fs(a),
                pulse: name(pulse),
                pulse_len: len(pulse),
                pulse_fs: record.signal_fs(pulse),
            });
        }
    }
    Ok(axes)
}

/// Replay signal `index` of `record` (negated when `negate`), at `fs`,
/// with `axes` as its accelerometer (checked by [`motion_axes`]).
pub(super) fn replay(
    (record, index, negate): (&Record, usize, bool),
    axes: [usize; 3],
    fs: f64,
    config: Config,
) -> Result<Replay, StreamError> {
    let mut p = MotionPipeline::new(config, fs as f32)?;
    // Four signals read at once: blocks a quarter as long, so the four
    // together keep what one signal's blocks keep.
    let read = |i: usize| record.physical_blocks(i, BLOCK_FRAMES / 4);
    let mut pulse = read(index).map_err(super::ReplayError::from)?;
    let mut motion = [read(axes[0]), read(axes[1]), read(axes[2])];
    let (mut x, mut m) = (Vec::<f32>::new(), [(); 3].map(|()| Vec::<f32>::new()));
    let mut kept = Kept::default();
    let mut samples = 0u64;
    while pulse.read_into(&mut x).map_err(super::ReplayError::from)? {
        for (blocks, block) in motion.iter_mut().zip(&mut m) {
            let blocks = blocks
                .as_mut()
                .map_err(|e| super::ReplayError::from(e.clone()))?;
            blocks.read_into(block).map_err(super::ReplayError::from)?;
        }
        if negate {
            x.iter_mut().for_each(|v| *v = -*v);
        }
        // As `MotionSignals::at`: a motion sample past the end is missing.
        let at = |a: usize, k: usize| m[a].get(k).copied().unwrap_or(f32::NAN);
        for (k, &v) in x.iter().enumerate() {
            p.push_motion([at(0, k), at(1, k), at(2, k)]);
            kept.keep(p.push(v));
        }
        samples += x.len() as u64;
    }
    p.finish(|b| kept.closed(b));
    Ok(kept.into_replay(p.pipeline(), config, samples))
}
