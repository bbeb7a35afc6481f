//! `plethwire demo`: the whole tool on a recording of our own making.
//!
//! A finger-clip sensor on a rider on a bike trainer ([`scenario`]): the
//! ride is synthesised with known beats, streamed through the pipeline
//! sample by sample, scored against its truth, run through the emulated
//! board when QEMU is there (and compared bit for bit), saved as a WFDB
//! record, and summed up in a report page.

pub mod live;
pub mod scenario;

use plethwire::emulate::{
    compare, find_qemu, BoardEvents, Core, Emulation, Firmware, FirmwareError, Link,
};
use plethwire::replay::{sample_blocks, Replay, Summary};
use plethwire::report::{self, Reference, ReportInput};
use plethwire::score::{match_beats, MatchCounts, MATCH_WINDOW_S};
use plethwire::vocabulary::state_change_words;
use plethwire_dsp::pipeline::{BeatEvent, Config, Pipeline, SignalState, StateEvent};
use plethwire_records::{annotation_path, write_annotations, write_record, Annotation, NewSignal};
use serde::Serialize;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Stored units per physical unit of the saved ride (format 16): 1e-4
/// steps, so the 1.5-unit level and its pulse fit 16 bits with room.
pub const SAVED_GAIN: f64 = 10_000.0;

/// What the emulated board did (in JSON `agreed`, `disagreed` or
/// `not_run`).
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "snake_case")]
pub enum BoardOutcome {
    /// It ran and agreed with the host, bit for bit.
    Agreed {
        /// Beats compared.
        beats: usize,
        /// State changes compared.
        states: usize,
        /// Sample blocks compared.
        blocks: usize,
    },
    /// It ran and disagreed; the first difference.
    Disagreed(String),
    /// It could not be run; why, in words for the reader.
    NotRun(String),
}

/// Everything the demo found, for the screen and `--json`.
#[derive(Debug, Clone, Serialize)]
pub struct DemoResult {
    /// The pipeline's summary of the ride.
    pub summary: Summary,
    /// Beats against the ride's truth (±150 ms, ANSI/AAMI EC57 practice).
    pub against_truth: MatchCounts,
    /// Beats in the ride's truth.
    pub true_beats: usize,
    /// The emulated board.
    pub board: BoardOutcome,
    /// Files written.
    pub files: Vec<String>,
}

/// What the streaming loop tells its watcher.
pub enum Progress<'a> {
    /// A sample went in (its index).
    Sample(u64),
    /// A beat came out.
    Beat(&'a BeatEvent),
    /// The signal's state changed.
    State(&'a StateEvent),
    /// The ride entered a new phase.
    Phase(&'a scenario::Phase),
}

/// Feed the ride through the pipeline, telling `watch` what happens.
pub fn stream(samples: &[f64], config: Config, watch: &mut dyn FnMut(Progress<'_>)) -> Replay {
    let mut p = Pipeline::new(config).expect("the demo's rate is valid");
    let (mut beats, mut states) = (Vec::new(), Vec::new());
    let mut phase = 0;
    for (n, &x) in samples.iter().enumerate() {
        let t = n as f64 / config.sample_rate_hz as f64;
        while phase < scenario::PHASES.len() && scenario::PHASES[phase].start_s <= t {
            watch(Progress::Phase(&scenario::PHASES[phase]));
            phase += 1;
        }
        let out = p.push(x as f32);
        if let Some(s) = out.state {
            watch(Progress::State(&s));
            states.push(s);
        }
        if let Some(b) = out.beat {
            watch(Progress::Beat(&b));
            beats.push(b);
        }
        watch(Progress::Sample(n as u64));
    }
    p.finish(|b| beats.push(b));
    Replay {
        fs: config.sample_rate_hz as f64,
        samples: samples.len() as u64,
        beats,
        states,
        rejected: p.rejected_samples(),
        clipped: p.clipped_samples(),
        restarts: p.restarts(),
    }
}

/// Save the ride as a WFDB record with its true beats (`ride.truth`);
/// returns the samples as stored (what everything else then runs on, so
/// `plethwire replay` of the saved record finds the same beats).
pub fn save_ride(
    dir: &Path,
    ride: &plethwire_synth::Synthetic,
) -> Result<(Vec<f64>, Vec<String>), String> {
    let digital: Vec<i32> = ride
        .samples
        .iter()
        .map(|&v| (v as f64 * SAVED_GAIN).round().clamp(-32767.0, 32767.0) as i32)
        .collect();
    let stored: Vec<f64> = digital.iter().map(|&d| d as f64 / SAVED_GAIN).collect();
    let sig = NewSignal::new("PLETH", "NU", SAVED_GAIN, 0);
    write_record(dir, "ride", ride.sample_rate_hz, &[sig], &[digital])
        .map_err(|e| e.to_string())?;
    let truth = annotation_path(&dir.join("ride"), "truth");
    let beats: Vec<Annotation> = ride
        .beats
        .iter()
        .map(|b| Annotation::beat(b.peak as i64))
        .collect();
    write_annotations(&truth, &beats).map_err(|e| e.to_string())?;
    Ok((
        stored,
        vec![
            dir.join("ride.hea").display().to_string(),
            dir.join("ride.dat").display().to_string(),
            truth.display().to_string(),
        ],
    ))
}

/// Run the ride through the emulated board, if QEMU is there and
/// `firmware` finds (or builds) its firmware.
pub fn run_board(
    samples: &[f64],
    config: Config,
    host: &Replay,
    firmware: &mut dyn FnMut() -> Result<Firmware, FirmwareError>,
) -> BoardOutcome {
    let qemu = match find_qemu() {
        Ok(q) => q,
        Err(_) => {
            return BoardOutcome::NotRun(
                "QEMU (qemu-system-arm) is not installed, so the emulated board was not run; install it to see the board agree with the host".into(),
            )
        }
    };
    // Built first (a no-op when up to date): an ELF left from older
    // sources would disagree with this host for the wrong reason.
    let elf = match firmware() {
        Ok(f) => f.elf,
        Err(e) => return BoardOutcome::NotRun(e.to_string()),
    };
    let emu = Emulation {
        qemu,
        core: Core::M4f,
        elf,
        link: Link::File,
        count_instructions: false,
        timeout: Some(Duration::from_secs(120)),
    };
    let host_blocks = match sample_blocks(samples, config) {
        Ok(b) => b,
        Err(e) => return BoardOutcome::NotRun(format!("the pipeline refuses the ride: {e}")),
    };
    match emu.run(samples, config, &mut |_| {}) {
        Ok(session) => {
            let (beats, states, blocks) = (session.beats(), session.states(), session.blocks());
            let board = BoardEvents {
                beats: &beats,
                states: &states,
                blocks: &blocks,
            };
            match compare(board, host, &host_blocks) {
                Ok(a) => BoardOutcome::Agreed {
                    beats: a.beats,
                    states: a.states,
                    blocks: a.blocks,
                },
                Err(d) => BoardOutcome::Disagreed(d.to_string()),
            }
        }
        Err(e) => BoardOutcome::NotRun(format!("the emulated board could not run: {e}")),
    }
}

/// Score `replay` against the ride's truth.
pub fn against_truth(ride: &plethwire_synth::Synthetic, replay: &Replay) -> MatchCounts {
    let truth: Vec<u64> = ride.beats.iter().map(|b| b.peak as u64).collect();
    let tol = (MATCH_WINDOW_S * ride.sample_rate_hz).round() as u64;
    match_beats(&truth, &replay.peaks(), tol)
}

/// Write the report page for the ride; returns its path.
pub fn write_report(
    dir: &Path,
    samples: &[f64],
    config: Config,
    replay: &Replay,
    ride: &plethwire_synth::Synthetic,
) -> Result<PathBuf, String> {
    let reference = Reference {
        beats_source: "the synthetic ride's true beats".into(),
        beats: Some(ride.beats.iter().map(|b| b.peak as u64).collect()),
        rate_source: String::new(),
        rate: None,
    };
    let mut input = ReportInput::new("ride", samples, config, replay);
    input.signal = "PLETH";
    input.units = Some("NU");
    input.reference = Some(&reference);
    let path = dir.join("ride.report.html");
    report::write(&path, &input).map_err(|e| e.to_string())?;
    Ok(path)
}

/// A state change in words (`docs/vocabulary.md`), with what it likely
/// means on a bike: `good -> no signal (finger off?)`.
pub fn state_words(previous: SignalState, s: SignalState) -> String {
    let hint = match s {
        SignalState::NoSignal => " (finger off?)",
        SignalState::Saturated => " (at the ADC rails)",
        SignalState::Noisy => " (motion?)",
        SignalState::Acquiring | SignalState::Good => "",
    };
    format!("{}{hint}", state_change_words(previous, s))
}
