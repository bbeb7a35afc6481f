//! Figures of two beat lists side by side (the pipeline's and the
//! baseline's, or any two) against the same reference, and the tables
//! they are printed in. Functions take bare peak lists so that other
//! references (beats from an ECG, a strap's R-R series) plug in as they
//! come.
//!
//! Beats match within ±150 ms (ANSI/AAMI EC57 practice,
//! `plethwire::score::match_pairs`); timing offsets are detected −
//! reference in ms; window figures follow `plethwire::score::windows`.

use plethwire::score::timing::PeakTiming;
use plethwire::score::windows::{score_peak_windows, RateWindow, ReplayWindows, WindowScore};
use plethwire::score::{match_pairs, MatchCounts, MATCH_WINDOW_S};

/// One beat list against a reference.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BeatFigures {
    /// One-to-one match counts.
    pub counts: MatchCounts,
    /// Offsets of the matched pairs.
    pub timing: PeakTiming,
}

impl BeatFigures {
    /// Score `detected` against `reference` (sample indices at `fs` Hz).
    pub fn score(reference: &[u64], detected: &[u64], fs: f64) -> Self {
        let tol = (MATCH_WINDOW_S * fs).round() as u64;
        let pairs = match_pairs(reference, detected, tol);
        Self {
            counts: MatchCounts {
                tp: pairs.len(),
                fp: detected.len() - pairs.len(),
                fn_: reference.len() - pairs.len(),
            },
            timing: PeakTiming::from_pairs(&pairs, fs),
        }
    }

    /// Pool several: counts summed, offsets taken together.
    pub fn pooled<'a>(parts: impl IntoIterator<Item = &'a BeatFigures> + Clone) -> Self {
        let mut counts = MatchCounts::default();
        for p in parts.clone() {
            counts.add(&p.counts);
        }
        Self {
            counts,
            timing: PeakTiming::pooled(parts.into_iter().map(|p| &p.timing)),
        }
    }
}

/// A row of the beats table: one record, the pipeline and the baseline.
#[derive(Debug, Clone, PartialEq)]
pub struct BeatsRow {
    /// Record name (or `pooled`).
    pub name: String,
    /// The pipeline's beats against the reference.
    pub pipeline: BeatFigures,
    /// The baseline's (refined) beats against the reference.
    pub baseline: BeatFigures,
}

impl BeatsRow {
    /// Score both peak lists of one record against its reference.
    pub fn score(
        name: &str,
        fs: f64,
        reference: &[u64],
        pipeline: &[u64],
        baseline: &[u64],
    ) -> Self {
        Self {
            name: name.into(),
            pipeline: BeatFigures::score(reference, pipeline, fs),
            baseline: BeatFigures::score(reference, baseline, fs),
        }
    }

    /// The pooled row of `rows`.
    pub fn pooled(rows: &[BeatsRow]) -> Self {
        Self {
            name: "pooled".into(),
            pipeline: BeatFigures::pooled(rows.iter().map(|r| &r.pipeline)),
            baseline: BeatFigures::pooled(rows.iter().map(|r| &r.baseline)),
        }
    }
}

fn num(v: Option<f64>, scale: f64, digits: usize, width: usize) -> String {
    v.map_or(format!(" {:>width$}", "-"), |v| {
        format!(" {:>width$.digits$}", scale * v)
    })
}

fn beat_cells(f: &BeatFigures) -> String {
    format!(" {:>6} {:>4} {:>4}", f.counts.tp, f.counts.fp, f.counts.fn_)
        + &num(f.counts.f1(), 100.0, 2, 7)
        + &num(f.timing.median_ms, 1.0, 1, 7)
        + &num(f.timing.abs_median_ms, 1.0, 1, 7)
        + &num(f.timing.abs_p95_ms, 1.0, 1, 7)
}

/// The beats table: `title`, a header, the rows and their pooled row.
pub fn beats_table(title: &str, rows: &[BeatsRow]) -> String {
    let half = |who: &str| {
        format!(
            " {:>6} {:>4} {:>4} {:>7} {:>7} {:>7} {:>7}",
            format!("{who} TP"),
            "FP",
            "FN",
            "F1 %",
            "dt med",
            "|dt|med",
            "|dt|p95"
        )
    };
    let mut t = format!(
        "{title}\n{:<10} |{}  |{}\n",
        "record",
        half("pipe"),
        half("base")
    );
    for r in rows.iter().cloned().chain([BeatsRow::pooled(rows)]) {
        t += &format!(
            "{:<10} |{}  |{}\n",
            r.name,
            beat_cells(&r.pipeline),
            beat_cells(&r.baseline)
        );
    }
    t + "dt: detected peak minus reference beat, ms (signed median; median and p95 of |dt|).\n"
}

/// A row of the windows table: one record's reference windows, the
/// pipeline (good beats and all beats) and the baseline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WindowsRow<'a> {
    /// Record name (or `pooled`).
    pub name: &'a str,
    /// The pipeline's window figures.
    pub pipeline: ReplayWindows,
    /// The baseline's.
    pub baseline: WindowScore,
}

impl<'a> WindowsRow<'a> {
    /// Score the baseline's `peaks` at `fs` Hz beside the pipeline's
    /// figures.
    pub fn score(
        name: &'a str,
        windows: &[RateWindow],
        pipeline: ReplayWindows,
        peaks: &[u64],
        fs: f64,
    ) -> Self {
        Self {
            name,
            pipeline,
            baseline: score_peak_windows(windows, peaks, fs),
        }
    }
}

fn window_cells(w: &WindowScore) -> String {
    num(w.coverage(), 100.0, 1, 6) + &num(w.within_share(), 100.0, 1, 6) + &num(w.mae(), 1.0, 2, 6)
}

/// The windows table: `title`, a header, the rows and their pooled row.
pub fn windows_table(title: &str, rows: &[WindowsRow]) -> String {
    let half = |who: &str| format!(" {:>6} {:>6} {:>6}", format!("{who}cov"), "in10 %", "MAE");
    let mut t = format!(
        "{title}\n{:<10} {:>5} |{} |{} |{}\n",
        "record",
        "win",
        half("good "),
        half("all "),
        half("base ")
    );
    let mut pooled = WindowsRow {
        name: "pooled",
        pipeline: ReplayWindows::default(),
        baseline: WindowScore::default(),
    };
    for r in rows {
        pooled.pipeline.add(&r.pipeline);
        pooled.baseline.add(&r.baseline);
    }
    for r in rows.iter().chain([&pooled]) {
        t += &format!(
            "{:<10} {:>5} |{} |{} |{}\n",
            r.name,
            r.baseline.windows,
            window_cells(&r.pipeline.good),
            window_cells(&r.pipeline.all),
            window_cells(&r.baseline)
        );
    }
    t + "cov: share of windows with a rate (2+ intervals), %; in10: share of those within 10 bpm, %; MAE: bpm.\n"
}

/// A heart-rate track from bare peaks at `fs` Hz, made the way the
/// pipeline smooths its own: at each peak, 60000 / the median of the
/// intervals that ended within the last `window_s` seconds, `(time_s,
/// bpm)`. For `plethwire::score::rate_error` against a monitor's series.
pub fn peak_rate_track(peaks: &[u64], fs: f64, window_s: f64) -> Vec<(f64, f64)> {
    let mut p = peaks.to_vec();
    p.sort_unstable();
    let mut track = Vec::new();
    for k in 1..p.len() {
        let now = p[k] as f64 / fs;
        let mut ivals: Vec<f64> = (1..=k)
            .rev()
            .take_while(|&j| now - p[j] as f64 / fs <= window_s)
            .map(|j| (p[j] - p[j - 1]) as f64 * 1000.0 / fs)
            .collect();
        ivals.sort_by(f64::total_cmp);
        let m = ivals.len() / 2;
        let median = if ivals.len() % 2 == 1 {
            ivals[m]
        } else {
            0.5 * (ivals[m - 1] + ivals[m])
        };
        track.push((now, 60_000.0 / median));
    }
    track
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_lists_are_scored_against_the_same_reference() {
        // 100 Hz, tolerance 15 samples. Pipeline 2 samples late on each
        // beat; baseline misses one and adds one far away.
        let reference = [100, 200, 300];
        let r = BeatsRow::score("r", 100.0, &reference, &[102, 202, 302], &[100, 300, 900]);
        assert_eq!(r.pipeline.counts.f1(), Some(1.0));
        assert_eq!(r.pipeline.timing.median_ms, Some(20.0));
        assert_eq!(
            (
                r.baseline.counts.tp,
                r.baseline.counts.fp,
                r.baseline.counts.fn_
            ),
            (2, 1, 1)
        );
        let p = BeatsRow::pooled(&[r.clone(), r]);
        assert_eq!(p.pipeline.counts.tp, 6);
        assert_eq!(p.baseline.timing.pairs, 4);
        let table = beats_table("demo", &[p]);
        assert!(table.lines().count() == 5, "{table}");
    }

    #[test]
    fn the_rate_track_takes_the_median_of_recent_intervals() {
        // 10 Hz: intervals 1.0, 1.0, 0.5 s; at the last peak (2.5 s) all
        // three ended within 12 s: median 1 s, 60 bpm. With 0.6 s the
        // last two (1.0, 0.5 s: 80 bpm), with 0.4 s only the last (120).
        let track = peak_rate_track(&[0, 10, 20, 25], 10.0, 12.0);
        assert_eq!(track, vec![(1.0, 60.0), (2.0, 60.0), (2.5, 60.0)]);
        let peaks = [0, 10, 20, 25];
        assert_eq!(peak_rate_track(&peaks, 10.0, 0.6)[2], (2.5, 80.0));
        assert_eq!(peak_rate_track(&peaks, 10.0, 0.4)[2], (2.5, 120.0));
    }
}
