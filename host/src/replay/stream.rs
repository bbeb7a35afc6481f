//! Replaying a recording a block of samples at a time, so a long record
//! is never in memory whole: a WFDB record's signal is read in blocks
//! ([`plethwire_records::Record::physical_blocks`]) and fed to the
//! pipeline as it comes; what the replay keeps (its beats and state
//! changes) grows with the beats, not the samples. A choice among several
//! signals streams each candidate once through the judge first; an
//! accelerometer streams beside the pulse (`motion_stream`).
//!
//! A CSV file streams too (`csv_stream`): at a given rate, or on the time
//! base of its time column (measured in passes over the file, or
//! resampled onto a grid as the rows come), with its accelerometer when
//! asked for.

use super::csv_stream::{open_csv, CsvColumn};
use super::feed::{Kept, StreamError, BLOCK_FRAMES};
use super::load::{is_csv, wanted_signals, Wanted};
use super::motion_stream::{self, motion_axes};
use super::read_ahead::read_ahead;
use super::{InputInfo, Polarity, Recording, Replay, ReplayError, Source};
use crate::channel::{choose_among, ChannelChoice, Judge};
use plethwire_dsp::pipeline::{Config, Pipeline};
use plethwire_records::{BlockSample, LoadedSignal, Record};
use std::path::Path;

/// A recording opened for streaming.
#[derive(Debug)]
pub struct Streamed {
    /// Everything about the recording but its samples: `head.signal.samples`
    /// stays empty (the samples come from [`Streamed::blocks`]) and so does
    /// `head.motion` (an accelerometer streams beside the pulse:
    /// [`Streamed::motion_names`]).
    pub head: Recording,
    /// The signal's samples.
    pub len: u64,
    pub(super) samples: Samples,
}

#[derive(Debug)]
pub(super) enum Samples {
    /// A column of a CSV file (with its accelerometer's, when asked for).
    Csv(Box<CsvColumn>),
    /// Signal `index` of a WFDB record, negated when `negate`, with the
    /// accelerometer's signals and names when asked for.
    Wfdb {
        record: Box<Record>,
        index: usize,
        negate: bool,
        motion: Option<([usize; 3], [String; 3])>,
    },
}

/// Open `path` as [`load`] would load it (the same signal, polarity and
/// refusals), reading no samples yet when it is a WFDB record (with one
/// signal named or the default; with or without an accelerometer), or
/// only what the choice among several signals takes (each candidate
/// streamed once through [`crate::channel::Judge`]); a CSV file is read
/// through as its checks and time base take, a pass at a time.
pub fn open(path: &Path, source: &Source) -> Result<Streamed, ReplayError> {
    if is_csv(path) {
        let (head, column, samples) = open_csv(path, source)?;
        return Ok(Streamed {
            len: samples,
            head,
            samples: Samples::Csv(Box::new(column)),
        });
    }
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let record_path = if path.extension().is_some_and(|e| e == "hea") {
        path.with_extension("")
    } else {
        path.to_path_buf()
    };
    let record = Record::open_with(&record_path, &source.record_options)?;
    let (index, channel) = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(name) => (record.pick_signal(name)?, None),
        Wanted::Among(names) => choose_streamed(path, &record, names)?,
    };
    let spec = &record.signals()[index];
    let head = Recording {
        name: stem,
        path: record_path,
        signal: LoadedSignal {
            name: spec.description.clone().unwrap_or_default(),
            units: Some(spec.units.clone()),
            fs: record.signal_fs(index),
            samples: Vec::new(),
        },
        input: InputInfo {
            channel,
            ..InputInfo::default()
        },
        motion: None,
        record_options: source.record_options.clone(),
    };
    let negate = source.polarity == Polarity::Down;
    let mut head = head;
    head.input.inverted = negate;
    let motion = match &source.motion {
        Some(names) => Some((motion_axes(path, &record, names, index)?, names.clone())),
        None => None,
    };
    Ok(Streamed {
        len: record.len() as u64 * u64::from(spec.samples_per_frame),
        head,
        samples: Samples::Wfdb {
            record: Box::new(record),
            index,
            negate,
            motion,
        },
    })
}

impl Streamed {
    /// The accelerometer's signal names, when the replay takes one (read
    /// whole into `head.motion`, or streamed beside the pulse).
    pub fn motion_names(&self) -> Option<&[String; 3]> {
        match &self.samples {
            Samples::Wfdb {
                motion: Some((_, names)),
                ..
            } => Some(names),
            Samples::Csv(column) => column.motion.as_ref().map(|(_, names)| names),
            _ => self.head.motion.as_ref().map(|m| &m.names),
        }
    }

    /// Hand the samples to `each`, a block at a time, in order, for as
    /// long as it answers `true`.
    pub fn blocks(&self, each: impl FnMut(&[f64]) -> bool) -> Result<(), ReplayError> {
        self.blocks_as(each)
    }

    /// [`blocks`](Self::blocks) as `f64` or as `f32` (the `f64` values
    /// rounded, as the pipeline takes them); a WFDB record's next block is
    /// read on a second thread meanwhile (`read_ahead`), into the few
    /// buffers kept for the whole record.
    pub fn blocks_as<T: BlockSample>(
        &self,
        mut each: impl FnMut(&[T]) -> bool,
    ) -> Result<(), ReplayError> {
        match &self.samples {
            Samples::Csv(column) => {
                let mut block: Vec<T> = Vec::with_capacity(BLOCK_FRAMES);
                column.blocks(|values| {
                    block.clear();
                    block.extend(values.iter().map(|&x| T::from_f64(x)));
                    each(&block)
                })?;
            }
            Samples::Wfdb {
                record,
                index,
                negate,
                ..
            } => {
                read_ahead(record, *index, BLOCK_FRAMES, *negate, each)?;
            }
        }
        Ok(())
    }

    /// The replay of the recording ([`super::replay_recording`] of it
    /// loaded whole gives the same).
    pub fn replay(&self, config: Config) -> Result<Replay, StreamError> {
        if let Samples::Csv(column) = &self.samples {
            if let Some((axes, _)) = &column.motion {
                return column.replay_with_motion(axes, self.head.signal.fs, config);
            }
        }
        if let Samples::Wfdb {
            record,
            index,
            negate,
            motion: Some((axes, _)),
        } = &self.samples
        {
            let pulse = (record.as_ref(), *index, *negate);
            return motion_stream::replay(pulse, *axes, self.head.signal.fs, config);
        }
        let mut p = Pipeline::new(config)?;
        let mut kept = Kept::default();
        // The board hands the pipeline f32 samples; so does the replay.
        self.blocks_as(|block: &[f32]| {
            feed_runs(&mut p, block, &mut kept);
            true
        })?;
        p.finish(|b| kept.closed(b));
        Ok(kept.into_replay(&p, config, self.len))
    }
}

/// The signal of `record` chosen among `names` (all its signals for
/// `None`) as [`load`] chooses it, and the choice (none for a single
/// name): each candidate judged as its blocks stream past.
fn choose_streamed(
    path: &Path,
    record: &Record,
    names: Option<Vec<String>>,
) -> Result<(usize, Option<ChannelChoice>), ReplayError> {
    let names = names.unwrap_or_else(|| record.signal_names());
    let indices = names
        .iter()
        .map(|n| record.pick_signal(Some(n)))
        .collect::<plethwire_records::Result<Vec<usize>>>()?;
    if let [one] = indices[..] {
        return Ok((one, None));
    }
    let mut candidates = Vec::with_capacity(indices.len());
    for &i in &indices {
        let name = record.signals()[i].description.clone().unwrap_or_default();
        let mut judge = Judge::new(&name, record.signal_fs(i));
        read_ahead(record, i, BLOCK_FRAMES, false, |block: &[f64]| {
            judge.push(block);
            true
        })?;
        candidates.push(judge.finish());
    }
    let (best, choice) = choose_among(candidates).ok_or_else(|| {
        ReplayError::Refused(format!("{}: no signals to choose from", path.display()))
    })?;
    Ok((indices[best], Some(choice)))
}

/// `block` through `p` in runs that end on its detector-rate samples
/// (`Pipeline::push_until_block`: the events of one `push` after another,
/// with the per-sample call paid once a run).
fn feed_runs(p: &mut Pipeline, block: &[f32], kept: &mut Kept) {
    let mut rest = block;
    while !rest.is_empty() {
        let take = p.block_remaining().min(rest.len());
        kept.keep(p.push_until_block(&rest[..take]));
        rest = &rest[take..];
    }
}
