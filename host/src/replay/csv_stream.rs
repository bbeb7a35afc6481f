//! A CSV recording streamed a block of samples at a time
//! ([`plethwire_records::CsvBlocks`]), with a given rate or a time column
//! (measured, or resampled onto a grid), with or without an
//! accelerometer: the same signal, polarity, time base, refusals and
//! samples as [`super::load`] reads whole. Opening reads what the whole
//! read checks first: every cell of the wanted columns (a time column's
//! passes do so; at a given rate one pass reads them, counting the rows),
//! judging each column when there are several ([`crate::channel::Judge`]),
//! and the accelerometer's cells; the replay then reads the chosen column
//! again, with the accelerometer's beside it when asked for.

use std::path::Path;

use plethwire_dsp::pipeline::{check_sample_rate, Config, MotionPipeline};
use plethwire_records::{ColumnRef, CsvBlocks, LoadedSignal};

use super::csv_time::MEASURED_RATE_HINT;
use super::feed::{Kept, StreamError, BLOCK_FRAMES};
use super::load::{csv_plan, COLOUR_CHANNELS};
use super::{Polarity, Recording, Replay, ReplayError, Source};
use crate::channel::{choose_among, ChannelChoice, Judge};
use crate::motion::MotionLoadError;

/// The column of a CSV file a streamed replay reads, and the
/// accelerometer's beside it when asked for.
#[derive(Debug)]
pub(super) struct CsvColumn {
    /// The file opened on its time base: each read opens it like this.
    measured: CsvBlocks,
    column: ColumnRef,
    negate: bool,
    /// The accelerometer's columns and names.
    pub(super) motion: Option<([ColumnRef; 3], [String; 3])>,
}

/// The recording, its column and its samples, when `path` (a CSV file) is
/// replayed: refused as [`super::load`] refuses it.
pub(super) fn open_csv(
    path: &Path,
    source: &Source,
) -> Result<(Recording, CsvColumn, u64), ReplayError> {
    let fail = |m: String| ReplayError::Refused(format!("{}: {m}", path.display()));
    let (options, columns, mut input, time) = csv_plan(path, source)?;
    let mut blocks = CsvBlocks::open(path, &columns, &options)?;
    input.resampled = blocks.time().and_then(|t| t.resampled);
    let (fs, names) = (blocks.fs(), blocks.names());
    // The time passes read every cell already; at a given rate, or to
    // judge several columns, read them all now.
    let (samples, index) = match blocks.samples() {
        Some(n) if names.len() == 1 => (n, 0),
        _ => {
            let (rows, choice) = read_and_judge(&mut blocks, &names, fs)?;
            let index = choice.as_ref().map_or(0, |(i, _)| *i);
            input.channel = choice.map(|(_, c)| c);
            (rows, index)
        }
    };
    check_rate(fs, time.is_some()).map_err(fail)?;
    let name = names[index].clone();
    let negate = match source.polarity {
        Polarity::Up => false,
        Polarity::Down => true,
        Polarity::Auto => COLOUR_CHANNELS.iter().any(|c| name.eq_ignore_ascii_case(c)),
    };
    input.inverted = negate;
    let motion = match &source.motion {
        Some(axes) => Some((motion_columns(&blocks, axes)?, axes.clone())),
        None => None,
    };
    let head = Recording {
        name: path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default(),
        path: path.to_path_buf(),
        signal: LoadedSignal {
            name,
            units: None,
            fs,
            samples: Vec::new(),
        },
        input,
        motion: None,
        record_options: source.record_options.clone(),
    };
    let column = CsvColumn {
        measured: blocks,
        column: columns[index].clone(),
        negate,
        motion,
    };
    Ok((head, column, samples))
}

/// Every sample `blocks` reads, counted, each column judged when there are
/// several (`names`, at `fs`): the rows and the choice among them.
fn read_and_judge(
    blocks: &mut CsvBlocks,
    names: &[String],
    fs: f64,
) -> Result<(u64, Option<(usize, ChannelChoice)>), ReplayError> {
    let several = names.len() > 1;
    let mut judges: Vec<Judge> = names.iter().map(|n| Judge::new(n, fs)).collect();
    let mut out = vec![Vec::new(); names.len()];
    let mut rows = 0u64;
    // Several columns at once: blocks as much shorter.
    while blocks.read_into(BLOCK_FRAMES / names.len(), &mut out)? {
        rows += out[0].len() as u64;
        if several {
            judges.iter_mut().zip(&out).for_each(|(j, b)| j.push(b));
        }
    }
    let choice = several.then(|| {
        let figures = judges.into_iter().map(Judge::finish).collect();
        choose_among(figures).expect("several candidates")
    });
    Ok((rows, choice))
}

/// The accelerometer's columns `axes` of the file `blocks` reads, every
/// cell read once, refused as [`crate::motion::load_csv`] refuses them.
fn motion_columns(blocks: &CsvBlocks, axes: &[String; 3]) -> Result<[ColumnRef; 3], ReplayError> {
    let columns = axes.clone().map(ColumnRef::Name);
    let read = |e| ReplayError::Motion(MotionLoadError::Read(e));
    let mut motion = blocks.open_like(&columns).map_err(read)?;
    let mut out = vec![Vec::new(); 3];
    // Only checked, not kept: short blocks.
    while motion
        .read_into(BLOCK_FRAMES / 16, &mut out)
        .map_err(read)?
    {}
    Ok(columns)
}

/// The pipeline's range for a CSV rate, shown as the whole read shows it:
/// to 4 decimals unless that rounds it in; with a hint when the rate was
/// `measured` from a time column.
fn check_rate(fs: f64, measured: bool) -> Result<(), String> {
    check_sample_rate(fs).map_err(|mut e| {
        let shown = (fs * 1e4).round() / 1e4;
        if check_sample_rate(shown).is_err() {
            e.rate_hz = shown;
        }
        let hint = if measured { MEASURED_RATE_HINT } else { "" };
        format!("{e}{hint}")
    })?;
    Ok(())
}

impl CsvColumn {
    /// The column's values, `BLOCK_FRAMES` samples at a time, negated when
    /// asked, to `each` for as long as it answers `true`.
    pub(super) fn blocks(&self, mut each: impl FnMut(&[f64]) -> bool) -> Result<(), ReplayError> {
        let mut blocks = self
            .measured
            .open_like(std::slice::from_ref(&self.column))?;
        let mut out = [Vec::new()];
        while blocks.read_into(BLOCK_FRAMES, &mut out)? {
            if self.negate {
                out[0].iter_mut().for_each(|x| *x = -*x);
            }
            if !each(&out[0]) {
                break;
            }
        }
        Ok(())
    }

    /// The replay with the accelerometer's columns `axes` beside the
    /// pulse, each motion sample fed just before its pulse sample, as
    /// [`super::replay_with_motion`] feeds them from memory.
    pub(super) fn replay_with_motion(
        &self,
        axes: &[ColumnRef; 3],
        fs: f64,
        config: Config,
    ) -> Result<Replay, StreamError> {
        let mut p = MotionPipeline::new(config, fs as f32)?;
        let columns = [
            self.column.clone(),
            axes[0].clone(),
            axes[1].clone(),
            axes[2].clone(),
        ];
        let mut blocks = self
            .measured
            .open_like(&columns)
            .map_err(ReplayError::from)?;
        // Four columns at once: blocks a quarter as long.
        let mut out = vec![Vec::new(); 4];
        let mut kept = Kept::default();
        let mut samples = 0u64;
        while blocks
            .read_into(BLOCK_FRAMES / 4, &mut out)
            .map_err(ReplayError::from)?
        {
            for (k, &x) in out[0].iter().enumerate() {
                p.push_motion([1, 2, 3].map(|a| out[a][k] as f32));
                kept.keep(p.push(if self.negate { -x } else { x } as f32));
            }
            samples += out[0].len() as u64;
        }
        p.finish(|b| kept.closed(b));
        Ok(kept.into_replay(p.pipeline(), config, samples))
    }
}
