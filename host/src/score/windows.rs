//! Heart rate in reference windows: our beats against a table of
//! `window_start_s,window_end_s,bpm` rows (the exercise recordings' ECG
//! heart rate in 8 s windows every 2 s).
//!
//! Our heart rate in a window is 60000 / the median of the intervals of
//! the beats whose peak lies in the window (`start ≤ t < end`), an
//! interval belonging to the beat that ends it. A window has a rate only
//! when at least [`MIN_INTERVALS`] such intervals exist ("covered"). For
//! the pipeline it is taken twice: from the beats marked good
//! (`BeatFlags::is_good`, their own `ibi_ms`), and from all beats. Any
//! list of peak indices is scored the same way, an interval being the
//! distance to the previous peak. Figures: coverage (covered / windows),
//! the share of covered windows within [`WITHIN_BPM`] of the reference,
//! and the mean absolute error over covered windows.

use std::path::Path;

use serde::Serialize;

use crate::replay::{Replay, ReplayError};
use plethwire_records::read_numerics;

/// Intervals a window needs for a rate of its own.
pub const MIN_INTERVALS: usize = 2;

/// Agreement counted as a hit, bpm (common practice for wrist heart rate
/// during exercise).
pub const WITHIN_BPM: f64 = 10.0;

/// One row of a reference window table.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RateWindow {
    /// Window start, s.
    pub start_s: f64,
    /// Window end, s (exclusive).
    pub end_s: f64,
    /// Reference heart rate, bpm.
    pub bpm: f64,
}

/// Read a window table: header `window_start_s,window_end_s,bpm`, one
/// window a row, every cell a finite number, each window ending after it
/// starts. A malformed table is a one-line error naming the file.
pub fn read_rate_windows(path: &Path) -> Result<Vec<RateWindow>, ReplayError> {
    let n = read_numerics(path)?;
    let bad = |what: String| ReplayError::Refused(format!("{}: {what}", path.display()));
    if n.time_name != "window_start_s" {
        return Err(bad(format!(
            "first column is '{}', expected window_start_s",
            n.time_name
        )));
    }
    let column = |name: &str| {
        n.column(name).ok_or_else(|| {
            bad(format!(
                "no column '{name}' (columns: {})",
                n.names.join(", ")
            ))
        })
    };
    let (ends, bpms) = (column("window_end_s")?, column("bpm")?);
    let mut out = Vec::with_capacity(n.len());
    for (row, &start_s) in n.time_s.iter().enumerate() {
        let (Some(end_s), Some(bpm)) = (ends[row], bpms[row]) else {
            return Err(bad(format!("window {} has an empty cell", row + 1)));
        };
        if !(end_s.is_finite() && bpm.is_finite() && end_s > start_s) {
            return Err(bad(format!(
                "window {} ({start_s} to {end_s} s, {bpm} bpm) is not a window with a rate",
                row + 1
            )));
        }
        out.push(RateWindow {
            start_s,
            end_s,
            bpm,
        });
    }
    Ok(out)
}

/// A beat as windows see it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WindowBeat {
    /// Peak time, s.
    pub peak_s: f64,
    /// Interval ending at this beat, ms, when it has one.
    pub interval_ms: Option<f64>,
}

/// The replay's beats with their own intervals: the good ones only, or all.
pub fn replay_beats(run: &Replay, good_only: bool) -> Vec<WindowBeat> {
    let mut beats: Vec<WindowBeat> = run
        .beats
        .iter()
        .filter(|b| !good_only || b.flags.is_good())
        .map(|b| WindowBeat {
            peak_s: b.peak_index as f64 / run.fs,
            interval_ms: b.ibi_ms.map(f64::from),
        })
        .collect();
    beats.sort_by(|a, b| a.peak_s.total_cmp(&b.peak_s));
    beats
}

/// Beats from bare peak indices at `fs` Hz: each interval is the distance
/// to the previous peak (the first has none).
pub fn peak_beats(peaks: &[u64], fs: f64) -> Vec<WindowBeat> {
    let mut p = peaks.to_vec();
    p.sort_unstable();
    let mut previous: Option<u64> = None;
    p.iter()
        .map(|&i| {
            let beat = WindowBeat {
                peak_s: i as f64 / fs,
                interval_ms: previous.map(|q| (i - q) as f64 * 1000.0 / fs),
            };
            previous = Some(i);
            beat
        })
        .collect()
}

/// Our heart rate in each window (see the module's definition), `None`
/// where fewer than [`MIN_INTERVALS`] intervals lie in it. `beats` sorted
/// by peak time.
pub fn window_rates(windows: &[RateWindow], beats: &[WindowBeat]) -> Vec<Option<f64>> {
    windows
        .iter()
        .map(|w| {
            let from = beats.partition_point(|b| b.peak_s < w.start_s);
            let to = beats.partition_point(|b| b.peak_s < w.end_s);
            let mut ivals: Vec<f64> = beats[from..to.max(from)]
                .iter()
                .filter_map(|b| b.interval_ms)
                .filter(|i| *i > 0.0)
                .collect();
            (ivals.len() >= MIN_INTERVALS).then(|| 60_000.0 / median(&mut ivals))
        })
        .collect()
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let m = v.len() / 2;
    if v.len() % 2 == 1 {
        v[m]
    } else {
        0.5 * (v[m - 1] + v[m])
    }
}

/// Window figures of one beat list (or several pooled). In JSON the
/// counts come with `coverage`, `within_share` (0 to 1) and `hr_mae_bpm`.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct WindowScore {
    /// Reference windows.
    pub windows: usize,
    /// Windows with a rate of ours.
    pub covered: usize,
    /// Covered windows within [`WITHIN_BPM`] of the reference.
    pub within: usize,
    /// Sum of absolute differences over covered windows, bpm.
    pub abs_sum: f64,
}

impl WindowScore {
    /// Covered / windows, 0 to 1.
    pub fn coverage(&self) -> Option<f64> {
        (self.windows > 0).then(|| self.covered as f64 / self.windows as f64)
    }
    /// Within / covered, 0 to 1.
    pub fn within_share(&self) -> Option<f64> {
        (self.covered > 0).then(|| self.within as f64 / self.covered as f64)
    }
    /// Mean absolute error over covered windows, bpm.
    pub fn mae(&self) -> Option<f64> {
        (self.covered > 0).then(|| self.abs_sum / self.covered as f64)
    }
    /// Pool with another.
    pub fn add(&mut self, o: &WindowScore) {
        self.windows += o.windows;
        self.covered += o.covered;
        self.within += o.within;
        self.abs_sum += o.abs_sum;
    }
}

impl Serialize for WindowScore {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        let mut st = serializer.serialize_struct("WindowScore", 7)?;
        st.serialize_field("windows", &self.windows)?;
        st.serialize_field("covered", &self.covered)?;
        st.serialize_field("within", &self.within)?;
        st.serialize_field("abs_sum", &self.abs_sum)?;
        st.serialize_field("coverage", &self.coverage())?;
        st.serialize_field("within_share", &self.within_share())?;
        st.serialize_field("hr_mae_bpm", &self.mae())?;
        st.end()
    }
}

/// Score `beats` (sorted by peak time) against `windows`.
pub fn score_windows(windows: &[RateWindow], beats: &[WindowBeat]) -> WindowScore {
    let mut s = WindowScore {
        windows: windows.len(),
        ..WindowScore::default()
    };
    for (w, ours) in windows.iter().zip(window_rates(windows, beats)) {
        if let Some(h) = ours {
            let e = (h - w.bpm).abs();
            s.covered += 1;
            s.within += usize::from(e <= WITHIN_BPM);
            s.abs_sum += e;
        }
    }
    s
}

/// Score bare peak indices at `fs` Hz (a baseline, another detector).
pub fn score_peak_windows(windows: &[RateWindow], peaks: &[u64], fs: f64) -> WindowScore {
    score_windows(windows, &peak_beats(peaks, fs))
}

/// The pipeline's window figures: from good beats and from all beats.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct ReplayWindows {
    /// From the beats marked good.
    pub good: WindowScore,
    /// From every beat.
    pub all: WindowScore,
}

impl ReplayWindows {
    /// Score a replay against `windows`.
    pub fn of(windows: &[RateWindow], run: &Replay) -> Self {
        Self {
            good: score_windows(windows, &replay_beats(run, true)),
            all: score_windows(windows, &replay_beats(run, false)),
        }
    }
    /// Pool with another.
    pub fn add(&mut self, o: &ReplayWindows) {
        self.good.add(&o.good);
        self.all.add(&o.all);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn w(start_s: f64, bpm: f64) -> RateWindow {
        RateWindow {
            start_s,
            end_s: start_s + 8.0,
            bpm,
        }
    }

    #[test]
    fn a_window_needs_two_intervals_and_takes_their_median() {
        // 100 Hz; peaks every 1 s (60 bpm) from 0 to 5 s, then one at 5.5 s.
        let peaks = [0, 100, 200, 300, 400, 500, 550];
        let beats = peak_beats(&peaks, 100.0);
        let windows = [
            w(0.0, 60.0),
            RateWindow {
                start_s: 0.0,
                end_s: 1.5,
                bpm: 60.0,
            },
            w(4.0, 80.0),
        ];
        let rates = window_rates(&windows, &beats);
        // Intervals 1000 ×5 and 500: median 1000 ms.
        assert_eq!(rates[0], Some(60.0));
        // Only the beat at 1 s has an interval in [0, 1.5).
        assert_eq!(rates[1], None);
        // Beats at 4, 5, 5.5 s: intervals 1000, 1000, 500 → 60 bpm.
        assert_eq!(rates[2], Some(60.0));
        let s = score_windows(&windows, &beats);
        assert_eq!((s.windows, s.covered, s.within), (3, 2, 1));
        assert_eq!(s.mae(), Some(10.0));
        assert_eq!(s.coverage(), Some(2.0 / 3.0));
        assert_eq!(s.within_share(), Some(0.5));
        let json = serde_json::to_value(s).unwrap();
        assert_eq!(json["within_share"], 0.5);
        assert_eq!(json["hr_mae_bpm"], 10.0);
    }

    #[test]
    fn a_malformed_table_is_one_line_naming_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let good = dir.path().join("r01bpm.csv");
        std::fs::write(
            &good,
            "window_start_s,window_end_s,bpm\n0,8,70.5\n2,10,71\n",
        )
        .unwrap();
        let t = read_rate_windows(&good).unwrap();
        assert_eq!(t[1], w(2.0, 71.0));
        for (text, says) in [
            ("window_start_s,bpm\n0,70\n", "no column 'window_end_s'"),
            (
                "time_s,window_end_s,bpm\n0,8,70\n",
                "expected window_start_s",
            ),
            ("window_start_s,window_end_s,bpm\n0,8,\n", "empty cell"),
            ("window_start_s,window_end_s,bpm\n0,0,70\n", "not a window"),
            ("window_start_s,window_end_s,bpm\n0,8,fast\n", "fast"),
        ] {
            let bad = dir.path().join("bad.csv");
            std::fs::write(&bad, text).unwrap();
            let e = read_rate_windows(&bad).unwrap_err().to_string();
            assert!(e.contains("bad.csv") && e.contains(says), "{e}");
            assert!(!e.contains('\n'), "{e}");
        }
    }
}
