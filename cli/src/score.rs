//! `plethwire score`: detected beats and heart rate against references.

use clap::Args;
use std::io::Write;
use std::path::PathBuf;

use super::pipeline_opts::{MotionOpts, PipelineOpts};
use super::Failure;
use plethwire::ecg::EcgScore;
use plethwire::score::records::{score_all, ReferenceKind, References, Scores};
use plethwire::score::timing::PeakTiming;
use plethwire::score::windows::{ReplayWindows, WindowScore};
use plethwire::score::{MatchCounts, RateError};

const EXAMPLES: &str = "\
Examples:
  plethwire score ../shared/data/capnobase
  plethwire score ../shared/data/bidmc --rate-column pulse_bpm --json
  plethwire score rec1 rec2 --reference atr --detector zong
  plethwire score ../shared/data/phonefinger
  plethwire score ../shared/data/bidmc --ecg II
  plethwire score ../shared/data/exercise --signal PPG1 --ecg ECG
  plethwire score ../shared/data/exercise --signal PPG1 --motion ACCX,ACCY,ACCZ

Each record is replayed through the pipeline. Beats are matched one to one
within ±150 ms (ANSI/AAMI EC57 practice) against <record>.<reference>;
heart rate, once per reference row, against column --rate-column of
<record><rate-suffix> (the latest median heart rate reported by then).
Peak timing: our matched peak minus the reference beat, ms. Heart rate in
reference windows (<record><window-suffix>: window_start_s,window_end_s,bpm)
when that table exists: 60000 / median of the intervals of the beats whose
peak lies in the window, at least 2 intervals, from good beats and from all.
Folders give their WFDB records and CSV files. Where <record><strap-suffix>
(R-R intervals in ms, one a line, from a chest strap on a clock of its own)
exists, it is aligned to the detected beats and a table compares
intervals, heart rate and HRV (see plethwire::score::strap).
With --ecg, the pulses are also scored against the R peaks of that ECG
signal of the same record (Pan and Tompkins; same sample rate needed),
each R peak moved by the local pulse-arrival delay (the densest R-to-pulse
offset over 60 s); stretches with no R peak for over 3 s, or with the
ECG at its rails for over 0.2 s, are left out ('excl s'). 'PAT ms' is the
median matched pulse minus R peak. Records without one of the references
are scored on the others; a reference named with an option must exist for
every record, and a record with no reference at all, or a run that could
compare nothing, is refused, naming the files. A record given twice is
scored once. With --motion, the accelerometer of the same
record is the pipeline's motion reference (beats that cannot be told
apart from strong motion are not good; the beats found stay the same). Exit
status: 0 done, 1 a record could not be read, a reference is missing or
nothing could be scored, 2 the command line could not be understood.";

/// Options of `plethwire score`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct ScoreArgs {
    /// WFDB records or folders of records.
    #[arg(value_name = "PATH", required = true)]
    pub paths: Vec<PathBuf>,

    /// Annotator of the reference beats; once named, every record must
    /// have them [default: peak, where it exists].
    #[arg(long, value_name = "NAME")]
    pub reference: Option<String>,

    /// Suffix of the reference heart-rate table next to each record; once
    /// named, every record must have it [default: n.csv, where it exists].
    #[arg(long, value_name = "SUFFIX")]
    pub rate_suffix: Option<String>,

    /// Column of that table with the reference heart rate, bpm [default:
    /// pulse_bpm].
    #[arg(long, value_name = "NAME")]
    pub rate_column: Option<String>,

    /// Suffix of the reference window table next to each record
    /// (`window_start_s,window_end_s,bpm`); once named, every record must
    /// have it [default: bpm.csv, where it exists].
    #[arg(long, value_name = "SUFFIX")]
    pub window_suffix: Option<String>,
    /// Suffix of a chest strap's R-R interval list next to each recording;
    /// once named, every recording must have it [default: .rr.txt, where
    /// it exists].
    #[arg(long, value_name = "SUFFIX")]
    pub strap_suffix: Option<String>,
    /// ECG signal of the same record to score the pulses against.
    #[arg(long, value_name = "SIGNAL")]
    pub ecg: Option<String>,

    /// Print the scores as JSON.
    #[arg(long)]
    pub json: bool,

    /// Signal source and pipeline settings.
    #[command(flatten)]
    pub pipeline: PipelineOpts,

    /// The accelerometer.
    #[command(flatten)]
    pub motion: MotionOpts,
}

impl ScoreArgs {
    /// The references to look for: the defaults, with each one the user
    /// named required of every record.
    fn references(&self) -> References {
        let d = References::default();
        let named = [
            (ReferenceKind::Beats, self.reference.is_some()),
            (
                ReferenceKind::Rate,
                self.rate_suffix.is_some() || self.rate_column.is_some(),
            ),
            (ReferenceKind::Windows, self.window_suffix.is_some()),
            (ReferenceKind::Strap, self.strap_suffix.is_some()),
        ];
        let or = |v: &Option<String>, default: String| v.clone().unwrap_or(default);
        References {
            annotator: or(&self.reference, d.annotator),
            rate_suffix: or(&self.rate_suffix, d.rate_suffix),
            rate_column: or(&self.rate_column, d.rate_column),
            window_suffix: or(&self.window_suffix, d.window_suffix),
            strap_suffix: or(&self.strap_suffix, d.strap_suffix),
            ecg: self.ecg.clone(),
            required: named.into_iter().filter(|n| n.1).map(|n| n.0).collect(),
        }
    }

    /// Run the command.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        let refs = self.references();
        let (bar, progress) = progress_line();
        let scores = score_all(
            &self.paths,
            &self.pipeline.source_with(&self.motion),
            self.pipeline.config(100.0),
            &refs,
            progress,
        );
        bar.finish_and_clear();
        let scores = scores.map_err(Failure::refused)?;
        let text = if self.json {
            serde_json::to_string_pretty(&scores).unwrap_or_default() + "\n"
        } else {
            table(&scores)
                + &super::score_strap::strap_table(&scores)
                + &super::score_strap::input_lines(&scores)
        };
        out.write_all(text.as_bytes()).map_err(Failure::output)
    }
}

/// A spinner naming the record being scored, on stderr when it is a
/// terminal (hidden otherwise, so pipes and JSON stay clean).
fn progress_line() -> (indicatif::ProgressBar, impl FnMut(&str)) {
    use std::io::IsTerminal;
    let bar = if std::io::stderr().is_terminal() {
        indicatif::ProgressBar::new_spinner()
    } else {
        indicatif::ProgressBar::hidden()
    };
    let handle = bar.clone();
    (bar, move |name: &str| {
        handle.set_message(format!("scoring {name}"));
        handle.tick();
    })
}

fn pct(v: Option<f64>) -> String {
    v.map_or("-".into(), |v| format!("{:.2}", 100.0 * v))
}

fn beats_cells(b: &Option<MatchCounts>, n: Option<usize>) -> String {
    match b {
        Some(m) => format!(
            "{:>6} {:>6} {:>4} {:>4} {:>7} {:>7} {:>7}",
            n.unwrap_or(0),
            m.tp,
            m.fp,
            m.fn_,
            pct(m.se()),
            pct(m.ppv()),
            pct(m.f1())
        ),
        None => format!(
            "{:>6} {:>6} {:>4} {:>4} {:>7} {:>7} {:>7}",
            "-", "-", "-", "-", "-", "-", "-"
        ),
    }
}

fn rate_cells(r: &Option<RateError>) -> String {
    match r.as_ref().and_then(|r| r.mae().map(|m| (m, r.count))) {
        Some((m, n)) => format!("{m:>8.2} {n:>6}"),
        None => format!("{:>8} {:>6}", "-", "-"),
    }
}

/// The ECG columns of a row: R peaks, Se, +P, F1, median delay and its
/// quartiles, time left out.
fn ecg_cells(counts: Option<&MatchCounts>, e: Option<&EcgScore>) -> String {
    let Some(m) = counts else {
        return format!(
            " {:>6} {:>7} {:>7} {:>7} {:>6} {:>9} {:>6}",
            "-", "-", "-", "-", "-", "-", "-"
        );
    };
    let r = e.map_or("-".into(), |e| e.r_peaks.to_string());
    let delay = e
        .and_then(|e| e.delay_ms)
        .map_or("-".into(), |d| format!("{d:.0}"));
    let iqr = e
        .and_then(|e| e.delay_iqr_ms)
        .map_or("-".into(), |(a, b)| format!("{a:.0}-{b:.0}"));
    let excl = e.map_or("-".into(), |e| format!("{:.0}", e.excluded_s));
    format!(
        " {r:>6} {:>7} {:>7} {:>7} {delay:>6} {iqr:>9} {excl:>6}",
        pct(m.se()),
        pct(m.ppv()),
        pct(m.f1())
    )
}

fn table(s: &Scores) -> String {
    let mut t = String::new();
    t += &format!(
        "{:<12} {:>6} {:>6} {:>6} {:>4} {:>4} {:>7} {:>7} {:>7} {:>8} {:>6}{}\n",
        "record",
        "beats",
        "ref",
        "TP",
        "FP",
        "FN",
        "Se %",
        "+P %",
        "F1 %",
        "HR MAE",
        "secs",
        timing_header(),
    );
    for r in &s.records {
        t += &format!(
            "{:<12} {:>6} {} {}{}\n",
            r.record,
            r.summary.beats,
            beats_cells(&r.beats, r.reference_beats),
            rate_cells(&r.heart_rate),
            timing_cells(&r.peak_timing),
        );
    }
    let refs: usize = s.records.iter().filter_map(|r| r.reference_beats).sum();
    let beats: usize = s.records.iter().map(|r| r.summary.beats).sum();
    t += &format!(
        "{:<12} {:>6} {} {}{}\n",
        "pooled",
        beats,
        beats_cells(&s.pooled_beats, Some(refs)),
        rate_cells(&s.pooled_heart_rate),
        timing_cells(&s.pooled_peak_timing),
    );
    t += "HR MAE: mean absolute difference in bpm of the median HR from the reference series, over 'secs' compared rows.\n";
    t += "dt: our matched peak minus the reference beat, ms: signed median, median and p95 of |dt|.\n";
    if s.pooled_windows.is_some() {
        t += &format!("\n{:<12}{}\n", "record", windows_header());
        for r in s.records.iter().filter(|r| r.windows.is_some()) {
            t += &format!("{:<12}{}\n", r.record, windows_cells(&r.windows));
        }
        t += &format!("{:<12}{}\n", "pooled", windows_cells(&s.pooled_windows));
        t += "win: reference windows; cov: share with a rate (2+ intervals), in10: share of those within 10 bpm, WMAE: bpm; from good beats, then 'all' beats.\n";
    }
    if s.pooled_ecg.is_some() {
        t += &format!(
            "\n{:<12} {:>6} {:>7} {:>7} {:>7} {:>6} {:>9} {:>6}\n",
            "record", "ECG R", "ECG Se", "ECG +P", "ECG F1", "PAT ms", "PAT IQR", "excl s"
        );
        for r in &s.records {
            t += &format!(
                "{:<12}{}\n",
                r.record,
                ecg_cells(r.ecg.as_ref().map(|e| &e.counts), r.ecg.as_ref())
            );
        }
        t += &format!(
            "{:<12}{}\n",
            "pooled",
            ecg_cells(s.pooled_ecg.as_ref(), None)
        );
        t += "ECG: pulses against R peaks moved by the local arrival delay; PAT: matched pulse minus R peak, ms (median, quartiles); excl s: ECG time left out (no R peak for over 3 s, ECG at its rails).\n";
    }
    t
}

fn cell(v: Option<f64>, digits: usize, width: usize) -> String {
    v.map_or(format!(" {:>width$}", "-"), |v| {
        format!(" {v:>width$.digits$}")
    })
}

fn timing_header() -> String {
    format!(" {:>7} {:>7} {:>7}", "dt med", "|dt|med", "|dt|p95")
}

fn timing_cells(t: &Option<PeakTiming>) -> String {
    match t {
        Some(t) => [t.median_ms, t.abs_median_ms, t.abs_p95_ms]
            .map(|v| cell(v, 1, 7))
            .concat(),
        None => cell(None, 1, 7).repeat(3),
    }
}

fn windows_header() -> String {
    format!(
        " {:>5} {:>6} {:>6} {:>6} {:>7} {:>8} {:>7}",
        "win", "cov %", "in10 %", "WMAE", "all cov", "all in10", "all MAE"
    )
}

fn window_cells(w: &WindowScore, widths: [usize; 3]) -> String {
    let share = |v: Option<f64>| v.map(|v| 100.0 * v);
    cell(share(w.coverage()), 1, widths[0])
        + &cell(share(w.within_share()), 1, widths[1])
        + &cell(w.mae(), 2, widths[2])
}

fn windows_cells(w: &Option<ReplayWindows>) -> String {
    match w {
        Some(w) => {
            format!(" {:>5}", w.good.windows)
                + &window_cells(&w.good, [6, 6, 6])
                + &window_cells(&w.all, [7, 8, 7])
        }
        None => {
            format!(" {:>5}", "-")
                + &cell(None, 0, 6).repeat(3)
                + &cell(None, 0, 7)
                + &cell(None, 0, 8)
                + &cell(None, 0, 7)
        }
    }
}
