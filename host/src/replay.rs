//! Replaying a recording through the very pipeline the firmware runs, and
//! writing what it found.

use crate::channel::{choose, ChannelChoice};
use crate::motion::{self, MotionSignals};
use plethwire_dsp::hrv::{hrv, HrvStats};
use plethwire_dsp::pipeline::{BeatEvent, Config, MotionPipeline, Output, Pipeline, StateEvent};
use plethwire_dsp::pipeline::{PipelineError, MAX_RATE_HZ, MIN_RATE_HZ};
use plethwire_records::resample::ResampleReport;
use plethwire_records::{
    annotation_path, csv_column_names, read_csv_signal, read_csv_signals, write_annotations,
    Annotation, ColumnRef, CsvSignalOptions, LoadedSignal, Rate, Record, TimeUnit,
};
use serde::Serialize;
use std::fmt;
use std::path::{Path, PathBuf};

/// Annotator name of the beat files we write, unless told otherwise.
pub const DEFAULT_ANNOTATOR: &str = "pwire";

/// Where a recording's samples come from.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Source {
    /// Which signal: one name (WFDB signal, default `PLETH`, or CSV value
    /// column); a comma-separated list to choose among ([`crate::channel`]);
    /// `auto` to choose among all (a CSV's columns but the time column, a
    /// record's signals). For a CSV file `None` means `auto`.
    pub signal: Option<String>,
    /// CSV: the sample rate, Hz; with a time column, the rate of the
    /// uniform grid the rows are resampled onto.
    pub rate: Option<f64>,
    /// CSV: a column of times to take the rate from. Without it (and
    /// without `rate`) a column named `time`, `time_s`, `time_ms` or
    /// `time_us` (any case) is taken.
    pub time_column: Option<String>,
    /// CSV: the time column's unit, `s`, `ms` or `us` (default: seconds for
    /// a time column named on the command line; see [`load`]).
    pub time_unit: Option<String>,
    /// Which way the pulse points in the file.
    pub polarity: Polarity,
    /// Accelerometer signals (x, y, z in g) of the same recording, as the
    /// pipeline's motion reference ([`crate::motion`]); `None`: none.
    pub motion: Option<[String; 3]>,
}

/// Which way a pulse points in the recorded signal.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Polarity {
    /// Up for WFDB signals and CSV columns in general; down for CSV columns
    /// named `R`, `G`, `B`, `red`, `green` or `blue` (any case): a camera's
    /// brightness, which falls as blood fills the finger with each beat.
    #[default]
    Auto,
    /// Systolic peaks are maxima (a pulse oximeter's plethysmogram).
    Up,
    /// Systolic peaks are minima (light through or off the finger): the
    /// signal is negated before the pipeline.
    Down,
}

/// Camera colour channel names, whose pulse points down.
const COLOUR_CHANNELS: [&str; 6] = ["r", "g", "b", "red", "green", "blue"];

/// How the samples were got from the file, for summaries.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct InputInfo {
    /// The CSV time column used, if any.
    pub time_column: Option<String>,
    /// Its unit.
    pub time_unit: Option<TimeUnit>,
    /// Where the unit came from: `"given"`, `"default"`, `"column name"` or
    /// `"guessed from the frame steps"`.
    pub time_unit_from: Option<&'static str>,
    /// What resampling did, when the times were uneven or a grid rate given.
    pub resampled: Option<ResampleReport>,
    /// The channel choice, when there were several candidates.
    pub channel: Option<ChannelChoice>,
    /// Whether the signal was negated (its pulse pointed down).
    pub inverted: bool,
}

/// A loaded recording.
#[derive(Debug, Clone, PartialEq)]
pub struct Recording {
    /// Record name (file stem).
    pub name: String,
    /// The record's path without extension (WFDB) or the CSV file.
    pub path: PathBuf,
    /// The signal.
    pub signal: LoadedSignal,
    /// How it was got.
    pub input: InputInfo,
    /// The accelerometer, when one was asked for.
    pub motion: Option<MotionSignals>,
}

/// A recording that could not be loaded or replayed; one line.
#[derive(Debug, Clone, PartialEq)]
pub struct ReplayError(pub String);

impl fmt::Display for ReplayError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for ReplayError {}

impl From<plethwire_records::Error> for ReplayError {
    fn from(e: plethwire_records::Error) -> Self {
        Self(e.to_string())
    }
}

fn is_csv(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
}

/// Load `path`: a WFDB record (`dir/name` or `dir/name.hea`) or a CSV file.
///
/// A CSV file needs a rate or a time column. A time column named by the
/// caller is in seconds unless `time_unit` says otherwise. When the caller
/// names neither, a column named `time`, `time_s`, `time_ms` or `time_us`
/// (any case) is the time column; its unit is `time_unit`, else the one in
/// its name, else (plain `time`) the one of s, ms and us that puts the
/// median frame rate within the pipeline's 25–1000 Hz (the three ranges
/// do not overlap, so at most one does). The grid rate must lie in that
/// range too.
pub fn load(path: &Path, source: &Source) -> Result<Recording, ReplayError> {
    let mut rec = load_as_recorded(path, source)?;
    let down = match source.polarity {
        Polarity::Up => false,
        Polarity::Down => true,
        Polarity::Auto => {
            is_csv(path)
                && COLOUR_CHANNELS
                    .iter()
                    .any(|c| rec.signal.name.eq_ignore_ascii_case(c))
        }
    };
    if down {
        rec.signal.samples.iter_mut().for_each(|x| *x = -*x);
        rec.input.inverted = true;
    }
    Ok(rec)
}

/// [`load`] without the polarity.
fn load_as_recorded(path: &Path, source: &Source) -> Result<Recording, ReplayError> {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    if is_csv(path) {
        return load_csv(path, stem, source);
    }
    let record = if path.extension().is_some_and(|e| e == "hea") {
        path.with_extension("")
    } else {
        path.to_path_buf()
    };
    let opened = Record::open(&record)?;
    let (signal, channel) = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(name) => (opened.load_signal(name)?, None),
        Wanted::Among(names) => {
            let names = names.unwrap_or_else(|| opened.signal_names());
            let signals = names
                .iter()
                .map(|n| opened.load_signal(Some(n)))
                .collect::<plethwire_records::Result<Vec<_>>>()?;
            pick(path, signals)?
        }
    };
    let motion = match &source.motion {
        Some(names) => Some(motion::load_wfdb(path, &opened, names, &signal)?),
        None => None,
    };
    Ok(Recording {
        name: stem,
        path: record,
        signal,
        input: InputInfo {
            channel,
            ..InputInfo::default()
        },
        motion,
    })
}

/// The signals asked for.
enum Wanted<'a> {
    /// One by name (`None`: the reader's default).
    One(Option<&'a str>),
    /// A choice among these (`None`: all there are).
    Among(Option<Vec<String>>),
}

fn wanted_signals(spec: Option<&str>) -> Wanted<'_> {
    match spec {
        None => Wanted::One(None),
        Some(s) if s.trim().eq_ignore_ascii_case("auto") => Wanted::Among(None),
        Some(s) if s.contains(',') => Wanted::Among(Some(
            s.split(',')
                .map(|n| n.trim().to_string())
                .filter(|n| !n.is_empty())
                .collect(),
        )),
        Some(s) => Wanted::One(Some(s)),
    }
}

/// The chosen signal among `signals` and the choice.
fn pick(
    path: &Path,
    mut signals: Vec<LoadedSignal>,
) -> Result<(LoadedSignal, Option<ChannelChoice>), ReplayError> {
    if signals.len() == 1 {
        return Ok((signals.remove(0), None));
    }
    let (i, choice) = choose(&signals)
        .ok_or_else(|| ReplayError(format!("{}: no signals to choose from", path.display())))?;
    Ok((signals.swap_remove(i), Some(choice)))
}

/// Names of a time column found without being asked for, and their units.
const TIME_COLUMN_NAMES: [(&str, Option<TimeUnit>); 4] = [
    ("time", None),
    ("time_s", Some(TimeUnit::S)),
    ("time_ms", Some(TimeUnit::Ms)),
    ("time_us", Some(TimeUnit::Us)),
];

fn load_csv(path: &Path, name: String, source: &Source) -> Result<Recording, ReplayError> {
    let fail = |m: String| ReplayError(format!("{}: {m}", path.display()));
    let given_unit = source
        .time_unit
        .as_deref()
        .map(TimeUnit::parse)
        .transpose()
        .map_err(fail)?;
    let names = csv_column_names(path)?;
    // The time column, its unit and where the unit came from.
    let time: Option<(String, Option<TimeUnit>, &'static str)> = match (
        &source.time_column,
        source.rate,
    ) {
        (Some(t), _) => Some((t.clone(), Some(given_unit.unwrap_or_default()), {
            if given_unit.is_some() {
                "given"
            } else {
                "default"
            }
        })),
        (None, Some(_)) => None,
        (None, None) => {
            let found = names.iter().find_map(|n| {
                TIME_COLUMN_NAMES
                    .iter()
                    .find(|(t, _)| n.eq_ignore_ascii_case(t))
                    .map(|(_, unit)| (n.clone(), *unit))
            });
            let (column, unit) = found.ok_or_else(|| {
                    fail("a CSV recording needs --rate HZ or --time-column NAME (no column named time, time_s, time_ms or time_us)".into())
                })?;
            Some(match (given_unit, unit) {
                (Some(u), _) => (column, Some(u), "given"),
                (None, Some(u)) => (column, Some(u), "column name"),
                (None, None) => (column, None, "guessed from the frame steps"),
            })
        }
    };
    let values: Vec<String> = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(Some(n)) => vec![n.to_string()],
        Wanted::Among(Some(list)) => list,
        Wanted::One(None) | Wanted::Among(None) => names
            .iter()
            .filter(|n| time.as_ref().is_none_or(|(t, _, _)| *n != t))
            .cloned()
            .collect(),
    };
    if values.is_empty() {
        return Err(fail("no value column besides the time column".into()));
    }
    let columns: Vec<ColumnRef> = values.iter().cloned().map(ColumnRef::Name).collect();
    let mut options = CsvSignalOptions::with_rate(columns[0].clone(), source.rate.unwrap_or(1.0));
    let mut input = InputInfo::default();
    if let Some((column, unit, unit_from)) = &time {
        let unit = match unit {
            Some(u) => *u,
            None => guess_unit(path, column)?,
        };
        let time_ref = ColumnRef::Name(column.clone());
        options.rate = match source.rate {
            Some(fs) => Rate::Resample { time: time_ref, fs },
            None => Rate::FromTime(time_ref),
        };
        options.time_unit = unit;
        input.time_column = Some(column.clone());
        input.time_unit = Some(unit);
        input.time_unit_from = Some(unit_from);
    }
    let read = read_csv_signals(path, &columns, &options)?;
    input.resampled = read.time.and_then(|t| t.resampled);
    let fs = read.signals[0].fs;
    if !(f64::from(MIN_RATE_HZ)..=f64::from(MAX_RATE_HZ)).contains(&fs) {
        let hint = if time.is_some() {
            " (check --time-unit, or give the grid rate with --rate)"
        } else {
            ""
        };
        return Err(fail(format!(
            "sample rate {fs:.4} Hz is outside the pipeline's {MIN_RATE_HZ}-{MAX_RATE_HZ} Hz{hint}"
        )));
    }
    let (signal, channel) = pick(path, read.signals)?;
    input.channel = channel;
    let motion = match &source.motion {
        Some(names) => Some(motion::load_csv(path, names, &options, &signal)?),
        None => None,
    };
    Ok(Recording {
        name,
        path: path.to_path_buf(),
        signal,
        input,
        motion,
    })
}

/// The unit of s, ms and us that puts the median step of `column` within
/// the pipeline's rates.
fn guess_unit(path: &Path, column: &str) -> Result<TimeUnit, ReplayError> {
    let raw = read_csv_signal(
        path,
        &CsvSignalOptions::with_rate(ColumnRef::Name(column.to_string()), 1.0),
    )?;
    let mut steps: Vec<f64> = raw
        .signal
        .samples
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|d| *d > 0.0)
        .collect();
    steps.sort_by(f64::total_cmp);
    let step = steps.get(steps.len() / 2).copied();
    [TimeUnit::S, TimeUnit::Ms, TimeUnit::Us]
        .into_iter()
        .find(|u| {
            step.is_some_and(|d| {
                let hz = 1.0 / (d * u.seconds());
                (f64::from(MIN_RATE_HZ)..=f64::from(MAX_RATE_HZ)).contains(&hz)
            })
        })
        .ok_or_else(|| {
            ReplayError(format!(
                "{}: column {column:?}: no time unit (s, ms, us) puts its median step within {MIN_RATE_HZ}-{MAX_RATE_HZ} Hz; give --time-unit and --rate",
                path.display()
            ))
        })
}

/// Everything the pipeline said about a recording.
#[derive(Debug, Clone, PartialEq)]
pub struct Replay {
    /// Sample rate, Hz.
    pub fs: f64,
    /// Samples fed.
    pub samples: u64,
    /// Beats, in the order emitted (including those closed by the end of
    /// the recording).
    pub beats: Vec<BeatEvent>,
    /// Signal state changes.
    pub states: Vec<StateEvent>,
    /// Non-finite samples replaced.
    pub rejected: u64,
    /// Samples marked clipped.
    pub clipped: u64,
    /// Filter restarts after steps in the input.
    pub restarts: u64,
}

/// Feed `samples` (at `config.sample_rate_hz`) through the pipeline, one at
/// a time as the board would, and close open beats at the end.
pub fn replay(samples: &[f64], config: Config) -> Result<Replay, PipelineError> {
    replay_with_motion(samples, None, config)
}

/// [`replay`] of a loaded recording, with its accelerometer when it has
/// one (at `config.sample_rate_hz`, the pulse signal's rate).
pub fn replay_recording(rec: &Recording, config: Config) -> Result<Replay, PipelineError> {
    replay_with_motion(&rec.signal.samples, rec.motion.as_ref(), config)
}

/// [`replay`], with each sample's accelerometer sample fed just before it
/// when `motion` is given (at the same rate).
pub fn replay_with_motion(
    samples: &[f64],
    motion: Option<&MotionSignals>,
    config: Config,
) -> Result<Replay, PipelineError> {
    let (mut beats, mut states) = (Vec::new(), Vec::new());
    let mut keep = |out: Output| {
        beats.extend(out.beat);
        states.extend(out.state);
    };
    // The board hands the pipeline f32 samples; so does the replay.
    let counts = |p: &Pipeline| (p.rejected_samples(), p.clipped_samples(), p.restarts());
    let (rejected, clipped, restarts) = match motion {
        Some(m) => {
            let mut p = MotionPipeline::new(config, m.fs as f32)?;
            for (n, &x) in samples.iter().enumerate() {
                p.push_motion(m.at(n));
                keep(p.push(x as f32));
            }
            p.finish(|b| {
                keep(Output {
                    beat: Some(b),
                    state: None,
                })
            });
            counts(p.pipeline())
        }
        None => {
            let mut p = Pipeline::new(config)?;
            for &x in samples {
                keep(p.push(x as f32));
            }
            p.finish(|b| {
                keep(Output {
                    beat: Some(b),
                    state: None,
                })
            });
            counts(&p)
        }
    };
    Ok(Replay {
        fs: config.sample_rate_hz as f64,
        samples: samples.len() as u64,
        beats,
        states,
        rejected,
        clipped,
        restarts,
    })
}

/// Heart rate over a recording, bpm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RateSummary {
    /// Mean of the smoothed heart rate reported with each good beat.
    pub mean: f64,
    /// Lowest smoothed heart rate reported.
    pub min: f64,
    /// Highest smoothed heart rate reported.
    pub max: f64,
}

/// The numbers a replay is summed up by.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Recording length, seconds.
    pub duration_s: f64,
    /// Beats detected.
    pub beats: usize,
    /// Beats with no quality flag that makes them unfit.
    pub good_beats: usize,
    /// `good_beats / beats`, 0 to 1.
    pub good_share: f64,
    /// Smoothed heart rate statistics, if any was reported.
    pub heart_rate_bpm: Option<RateSummary>,
    /// Time-domain HRV over the whole recording, normal-to-normal intervals
    /// only (both beats good), Task Force of the ESC and NASPE 1996.
    pub hrv: HrvSummary,
    /// Median delay from a beat's peak to its event, ms.
    pub latency_median_ms: Option<f64>,
    /// Non-finite samples replaced.
    pub rejected_samples: u64,
    /// Samples at the rails.
    pub clipped_samples: u64,
    /// Filter restarts after steps in the input.
    pub restarts: u64,
}

/// HRV figures for the summary.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HrvSummary {
    /// Normal-to-normal intervals used.
    pub nn_intervals: usize,
    /// SDNN, ms (N−1 denominator).
    pub sdnn_ms: Option<f32>,
    /// RMSSD, ms.
    pub rmssd_ms: Option<f32>,
    /// pNN50, % of successive differences.
    pub pnn50_percent: Option<f32>,
}

impl From<HrvStats> for HrvSummary {
    fn from(s: HrvStats) -> Self {
        Self {
            nn_intervals: s.nn_count,
            sdnn_ms: s.sdnn_ms,
            rmssd_ms: s.rmssd_ms,
            pnn50_percent: s.pnn50_percent,
        }
    }
}

impl Replay {
    /// `(time_s, bpm)` of every smoothed heart rate, at the moment it was
    /// reported.
    pub fn heart_rate_track(&self) -> Vec<(f64, f64)> {
        self.beats
            .iter()
            .filter_map(|b| {
                b.hr_smoothed_bpm
                    .map(|h| (b.emitted_at as f64 / self.fs, h as f64))
            })
            .collect()
    }

    /// Peak sample of every beat, in time order.
    pub fn peaks(&self) -> Vec<u64> {
        let mut p: Vec<u64> = self.beats.iter().map(|b| b.peak_index).collect();
        p.sort_unstable();
        p
    }

    /// HRV over the whole recording: an interval is normal-to-normal when
    /// the beats at both of its ends are good. A beat without an interval
    /// (the signal came back, the filters restarted) breaks the succession,
    /// so no successive difference spans the gap before it.
    pub fn hrv(&self) -> HrvStats {
        let mut ibi = Vec::new();
        let mut good = Vec::new();
        let mut previous_good = false;
        for b in &self.beats {
            match b.ibi_ms {
                Some(i) => {
                    ibi.push(i);
                    good.push(b.flags.is_good() && previous_good);
                }
                // A bad placeholder: `hrv` forms no difference across it.
                None if !ibi.is_empty() => {
                    ibi.push(f32::NAN);
                    good.push(false);
                }
                None => {}
            }
            previous_good = b.flags.is_good();
        }
        hrv(&ibi, Some(&good)).unwrap_or_default()
    }

    /// The summary.
    pub fn summary(&self) -> Summary {
        let good_beats = self.beats.iter().filter(|b| b.flags.is_good()).count();
        let rates: Vec<f64> = self
            .beats
            .iter()
            .filter(|b| b.flags.is_good())
            .filter_map(|b| b.hr_smoothed_bpm.map(f64::from))
            .collect();
        let heart_rate_bpm = (!rates.is_empty()).then(|| RateSummary {
            mean: rates.iter().sum::<f64>() / rates.len() as f64,
            min: rates.iter().copied().fold(f64::INFINITY, f64::min),
            max: rates.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        });
        let mut lat: Vec<f64> = self
            .beats
            .iter()
            .map(|b| (b.emitted_at.saturating_sub(b.peak_index)) as f64 * 1000.0 / self.fs)
            .collect();
        lat.sort_by(f64::total_cmp);
        Summary {
            duration_s: self.samples as f64 / self.fs,
            beats: self.beats.len(),
            good_beats,
            good_share: if self.beats.is_empty() {
                0.0
            } else {
                good_beats as f64 / self.beats.len() as f64
            },
            heart_rate_bpm,
            hrv: self.hrv().into(),
            latency_median_ms: lat.get(lat.len() / 2).copied(),
            rejected_samples: self.rejected,
            clipped_samples: self.clipped,
            restarts: self.restarts,
        }
    }
}

/// Write the beats as a WFDB annotation file `<record>.<annotator>` in
/// `dir` (symbol `N` at each systolic peak); returns its path.
pub fn write_beat_annotations(
    dir: &Path,
    record_name: &str,
    annotator: &str,
    replay: &Replay,
) -> Result<PathBuf, ReplayError> {
    let path = annotation_path(&dir.join(record_name), annotator);
    let annotations: Vec<Annotation> = replay
        .peaks()
        .into_iter()
        .map(|p| Annotation::beat(p as i64))
        .collect();
    write_annotations(&path, &annotations)?;
    Ok(path)
}

/// One beat as a row of our CSV and JSON beat files.
#[derive(Debug, Clone, Serialize)]
pub struct BeatRow {
    /// Peak sample.
    pub peak_sample: u64,
    /// Peak time, s.
    pub peak_s: f64,
    /// Onset sample, when the detector gives one.
    pub onset_sample: Option<u64>,
    /// Sample at which the event was emitted.
    pub emitted_sample: u64,
    /// Interval, ms.
    pub ibi_ms: Option<f32>,
    /// Instantaneous heart rate, bpm.
    pub hr_bpm: Option<f32>,
    /// Smoothed heart rate, bpm.
    pub hr_smoothed_bpm: Option<f32>,
    /// Pulse amplitude (input units).
    pub amplitude: f32,
    /// Template correlation, 0 to 1.
    pub quality: f32,
    /// Flag bits (see `plethwire_dsp::pipeline::BeatFlags`).
    pub flags: u8,
    /// Fit for heart rate and HRV.
    pub good: bool,
}

/// The beats as rows.
pub fn beat_rows(replay: &Replay) -> Vec<BeatRow> {
    replay
        .beats
        .iter()
        .map(|b| BeatRow {
            peak_sample: b.peak_index,
            peak_s: b.peak_index as f64 / replay.fs,
            onset_sample: b.onset_index,
            emitted_sample: b.emitted_at,
            ibi_ms: b.ibi_ms,
            hr_bpm: b.hr_bpm,
            hr_smoothed_bpm: b.hr_smoothed_bpm,
            amplitude: b.amplitude,
            quality: b.quality,
            flags: b.flags.0,
            good: b.flags.is_good(),
        })
        .collect()
}

/// Our beat CSV: a header line, then one row per beat.
pub fn beats_csv(replay: &Replay) -> String {
    let opt = |v: Option<f32>| v.map_or(String::new(), |v| format!("{v}"));
    let mut s = String::from(
        "peak_sample,peak_s,onset_sample,emitted_sample,ibi_ms,hr_bpm,hr_smoothed_bpm,amplitude,quality,flags,good\n",
    );
    for r in beat_rows(replay) {
        s.push_str(&format!(
            "{},{:.4},{},{},{},{},{},{},{},{},{}\n",
            r.peak_sample,
            r.peak_s,
            r.onset_sample.map_or(String::new(), |v| v.to_string()),
            r.emitted_sample,
            opt(r.ibi_ms),
            opt(r.hr_bpm),
            opt(r.hr_smoothed_bpm),
            r.amplitude,
            r.quality,
            r.flags,
            u8::from(r.good)
        ));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::BeatFlags;

    fn beat(peak: u64, ibi_ms: Option<f32>) -> BeatEvent {
        BeatEvent {
            peak_index: peak,
            onset_index: None,
            emitted_at: peak + 40,
            ibi_ms,
            hr_bpm: ibi_ms.map(|i| 60_000.0 / i),
            hr_smoothed_bpm: None,
            amplitude: 1.0,
            quality: 0.99,
            flags: BeatFlags(if ibi_ms.is_none() {
                BeatFlags::NO_INTERVAL
            } else {
                0
            }),
        }
    }

    #[test]
    fn hrv_forms_no_difference_across_a_gap() {
        // 800, 900 ms; then the signal was lost (a beat with no interval);
        // then 600, 700 ms. Differences: 100 and 100, never 900 → 600.
        let beats = vec![
            beat(0, None),
            beat(80, Some(800.0)),
            beat(170, Some(900.0)),
            beat(2000, None),
            beat(2060, Some(600.0)),
            beat(2130, Some(700.0)),
        ];
        let run = Replay {
            fs: 100.0,
            samples: 2200,
            beats,
            states: Vec::new(),
            rejected: 0,
            clipped: 0,
            restarts: 0,
        };
        let h = run.hrv();
        assert_eq!(h.nn_count, 4);
        assert_eq!(h.diff_count, 2);
        assert_eq!(h.rmssd_ms, Some(100.0));
    }
}
