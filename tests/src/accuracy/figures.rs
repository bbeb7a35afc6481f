//! The figures of one beat list (the pipeline's or the baseline's) on
//! every shared dataset, taken from the scores both got from the same
//! code, and how each is named, measured and shown.

use plethwire::score::records::{RecordScore, Scores};
use plethwire::score::timing::PeakTiming;
use plethwire::score::windows::WindowScore;
use plethwire::score::{MatchCounts, RateError};

use super::datasets::DatasetId;

/// Whose beats.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The streaming pipeline's.
    Ours,
    /// The plain scipy baseline's.
    Baseline,
}

/// The phone-camera figures against the chest strap's R-R lists.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StrapFigures {
    /// Recordings.
    pub recordings: usize,
    /// Recordings whose mean heart rate is within [`HR_WITHIN_BPM`] of
    /// the strap's.
    pub hr_within: usize,
    /// The largest per-recording median |IBI − RR| over good matched
    /// intervals, ms, and its recording.
    pub worst_ibi_median: Option<(f64, String)>,
    /// Recordings with any good matched interval.
    pub with_good_intervals: usize,
    /// Recordings whose RMSSD is within [`RMSSD_WITHIN_SHARE`] of the
    /// strap's.
    pub rmssd_within: usize,
}

/// Mean heart rate counted as agreeing with the strap's, bpm (the
/// beat-accuracy issue's figure).
pub const HR_WITHIN_BPM: f64 = 3.0;
/// RMSSD counted as agreeing with the strap's, share of the strap's (the
/// beat-accuracy issue's figure).
pub const RMSSD_WITHIN_SHARE: f64 = 0.25;
/// Good intervals a recording needs for its median |IBI − RR| to be
/// judged (our choice): with fewer, its quality figures already say that
/// it cannot be trusted (the beat-accuracy issue asks a recording that
/// cannot meet the figures to say so), and a median of one or two
/// intervals says nothing.
pub const MIN_GOOD_INTERVALS: usize = 10;

/// Every figure of one beat list.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SideFigures {
    /// CapnoBase: pooled counts against the expert peaks.
    pub capno_counts: MatchCounts,
    /// CapnoBase: the record with the lowest F1, and that F1.
    pub capno_worst: Option<(f64, String)>,
    /// CapnoBase: offsets of every matched pair, pooled.
    pub capno_timing: PeakTiming,
    /// CapnoBase: the largest per-record median event latency, ms, and its
    /// record (the pipeline only: the baseline works offline).
    pub capno_latency: Option<(f64, String)>,
    /// BIDMC: pooled counts against the R peaks of lead II.
    pub bidmc_ecg: MatchCounts,
    /// BIDMC: heart rate against the monitor's `pulse_bpm`.
    pub bidmc_rate: RateError,
    /// Exercise: heart rate in the ECG's 8 s windows, from good beats.
    pub exercise_windows: WindowScore,
    /// Exercise: pooled counts against the R peaks of the chest ECG.
    pub exercise_ecg: MatchCounts,
    /// Phone camera against the strap.
    pub strap: StrapFigures,
}

fn worst(
    records: &[RecordScore],
    figure: impl Fn(&RecordScore) -> Option<f64>,
    larger_is_worse: bool,
) -> Option<(f64, String)> {
    records
        .iter()
        .filter_map(|r| figure(r).map(|v| (v, r.record.clone())))
        .reduce(|a, b| {
            let b_worse = if larger_is_worse {
                b.0 > a.0
            } else {
                b.0 < a.0
            };
            if b_worse {
                b
            } else {
                a
            }
        })
}

fn strap_figures(s: &Scores) -> StrapFigures {
    let straps: Vec<_> = s.records.iter().map(|r| r.strap.as_ref()).collect();
    let within = |v: Option<f64>, strap: Option<f64>, limit: &dyn Fn(f64) -> f64| matches!((v, strap), (Some(v), Some(r)) if (v - r).abs() <= limit(r));
    StrapFigures {
        recordings: s.records.len(),
        hr_within: straps
            .iter()
            .flatten()
            .filter(|x| within(x.mean_hr_bpm.ours, x.mean_hr_bpm.strap, &|_| HR_WITHIN_BPM))
            .count(),
        worst_ibi_median: worst(
            &s.records,
            |r| {
                let good = &r.strap.as_ref()?.intervals_good;
                (good.count >= MIN_GOOD_INTERVALS).then_some(good.median_abs_ms)?
            },
            true,
        ),
        with_good_intervals: straps
            .iter()
            .flatten()
            .filter(|x| x.intervals_good.count >= MIN_GOOD_INTERVALS)
            .count(),
        rmssd_within: straps
            .iter()
            .flatten()
            .filter(|x| {
                within(x.rmssd_ms.ours, x.rmssd_ms.strap, &|r| {
                    RMSSD_WITHIN_SHARE * r
                })
            })
            .count(),
    }
}

impl SideFigures {
    /// The figures of `side` from its scores of each dataset.
    pub fn of(side: Side, scores: &[(DatasetId, &Scores)]) -> Self {
        let mut f = SideFigures::default();
        for &(id, s) in scores {
            match id {
                DatasetId::Capnobase => {
                    f.capno_counts = s.pooled_beats.unwrap_or_default();
                    f.capno_worst = worst(&s.records, |r| r.beats?.f1(), false);
                    f.capno_timing = s.pooled_peak_timing.clone().unwrap_or_default();
                    f.capno_latency = match side {
                        Side::Ours => worst(&s.records, |r| r.summary.latency_median_ms, true),
                        Side::Baseline => None,
                    };
                }
                DatasetId::Bidmc => {
                    f.bidmc_ecg = s.pooled_ecg.unwrap_or_default();
                    f.bidmc_rate = s.pooled_heart_rate.unwrap_or_default();
                }
                DatasetId::Exercise => {
                    f.exercise_windows = s.pooled_windows.unwrap_or_default().good;
                    f.exercise_ecg = s.pooled_ecg.unwrap_or_default();
                }
                DatasetId::Phonefinger => f.strap = strap_figures(s),
            }
        }
        f
    }
}

/// How a figure's value reads.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Unit {
    /// A share, 0 to 1, shown in %.
    Percent,
    /// Milliseconds.
    Ms,
    /// Beats per minute.
    Bpm,
    /// Recordings of a dataset's.
    Recordings,
}

impl Unit {
    /// `v` in this unit, `digits` decimals.
    pub fn show(self, v: f64, digits: usize) -> String {
        match self {
            Unit::Percent => format!("{:.digits$} %", 100.0 * v),
            Unit::Ms => format!("{v:.digits$} ms"),
            Unit::Bpm => format!("{v:.digits$} bpm"),
            Unit::Recordings => format!("{v:.0}"),
        }
    }
}

/// One figure of the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Figure {
    /// CapnoBase pooled F1.
    CapnoPooledF1,
    /// CapnoBase lowest per-record F1.
    CapnoWorstF1,
    /// CapnoBase median |detected − expert peak|, pooled.
    CapnoOffsetMedian,
    /// CapnoBase 95th percentile of the same.
    CapnoOffsetP95,
    /// CapnoBase largest per-record median latency of the beat events.
    CapnoLatency,
    /// BIDMC pooled Se against lead II.
    BidmcSe,
    /// BIDMC pooled +P against lead II.
    BidmcPpv,
    /// BIDMC pooled F1 against lead II.
    BidmcF1,
    /// BIDMC heart-rate MAE against the monitor's `pulse_bpm`.
    BidmcRateMae,
    /// Exercise: share of covered windows within 10 bpm (good beats).
    ExerciseWindowsWithin,
    /// Exercise pooled Se against the chest ECG.
    ExerciseSe,
    /// Exercise pooled +P against the chest ECG.
    ExercisePpv,
    /// Phone camera: recordings with mean HR within 3 bpm of the strap's.
    StrapHrWithin,
    /// Phone camera: largest per-recording median |IBI − RR|, good beats.
    StrapIbiMedian,
    /// Phone camera: recordings with RMSSD within 25 % of the strap's.
    StrapRmssdWithin,
}

/// Every figure, in the table's order.
pub const FIGURES: [Figure; 15] = [
    Figure::CapnoPooledF1,
    Figure::CapnoWorstF1,
    Figure::CapnoOffsetMedian,
    Figure::CapnoOffsetP95,
    Figure::CapnoLatency,
    Figure::BidmcSe,
    Figure::BidmcPpv,
    Figure::BidmcF1,
    Figure::BidmcRateMae,
    Figure::ExerciseWindowsWithin,
    Figure::ExerciseSe,
    Figure::ExercisePpv,
    Figure::StrapHrWithin,
    Figure::StrapIbiMedian,
    Figure::StrapRmssdWithin,
];

fn pct(v: Option<f64>) -> String {
    v.map_or("–".into(), |v| Unit::Percent.show(v, 2))
}

impl Figure {
    /// The dataset it is measured on.
    pub fn dataset(self) -> DatasetId {
        use Figure::*;
        match self {
            CapnoPooledF1 | CapnoWorstF1 | CapnoOffsetMedian | CapnoOffsetP95 | CapnoLatency => {
                DatasetId::Capnobase
            }
            BidmcSe | BidmcPpv | BidmcF1 | BidmcRateMae => DatasetId::Bidmc,
            ExerciseWindowsWithin | ExerciseSe | ExercisePpv => DatasetId::Exercise,
            StrapHrWithin | StrapIbiMedian | StrapRmssdWithin => DatasetId::Phonefinger,
        }
    }

    /// What the table calls it.
    pub fn label(self) -> &'static str {
        use Figure::*;
        match self {
            CapnoPooledF1 => "pooled F1",
            CapnoWorstF1 => "worst record F1",
            CapnoOffsetMedian => "peak offset, median \\|dt\\|",
            CapnoOffsetP95 => "peak offset, p95 \\|dt\\|",
            CapnoLatency => "event latency, largest per-record median",
            BidmcSe | ExerciseSe => "Se against the ECG's R peaks",
            BidmcPpv | ExercisePpv => "+P against the ECG's R peaks",
            BidmcF1 => "F1 against the ECG's R peaks",
            BidmcRateMae => "heart-rate MAE against the monitor's pulse_bpm",
            ExerciseWindowsWithin => "8 s windows within 10 bpm, good beats (coverage)",
            StrapHrWithin => "mean HR within 3 bpm of the strap's",
            StrapIbiMedian => {
                "median \\|IBI − RR\\| over good beats, worst recording with 10 or more"
            }
            StrapRmssdWithin => "RMSSD within 25 % of the strap's",
        }
    }

    /// Its unit.
    pub fn unit(self) -> Unit {
        use Figure::*;
        match self {
            CapnoOffsetMedian | CapnoOffsetP95 | CapnoLatency | StrapIbiMedian => Unit::Ms,
            BidmcRateMae => Unit::Bpm,
            StrapHrWithin | StrapRmssdWithin => Unit::Recordings,
            _ => Unit::Percent,
        }
    }

    /// Its value for one beat list, `None` when it has none (no beat, no
    /// reference reached, or a figure that means nothing for that list).
    pub fn value(self, f: &SideFigures) -> Option<f64> {
        use Figure::*;
        match self {
            CapnoPooledF1 => f.capno_counts.f1(),
            CapnoWorstF1 => f.capno_worst.as_ref().map(|w| w.0),
            CapnoOffsetMedian => f.capno_timing.abs_median_ms,
            CapnoOffsetP95 => f.capno_timing.abs_p95_ms,
            CapnoLatency => f.capno_latency.as_ref().map(|w| w.0),
            BidmcSe => f.bidmc_ecg.se(),
            BidmcPpv => f.bidmc_ecg.ppv(),
            BidmcF1 => f.bidmc_ecg.f1(),
            BidmcRateMae => f.bidmc_rate.mae(),
            ExerciseWindowsWithin => f.exercise_windows.within_share(),
            ExerciseSe => f.exercise_ecg.se(),
            ExercisePpv => f.exercise_ecg.ppv(),
            StrapHrWithin => (f.strap.recordings > 0).then_some(f.strap.hr_within as f64),
            StrapIbiMedian => f.strap.worst_ibi_median.as_ref().map(|w| w.0),
            StrapRmssdWithin => (f.strap.recordings > 0).then_some(f.strap.rmssd_within as f64),
        }
    }

    /// Its value with what it is taken over, for the table.
    pub fn cell(self, f: &SideFigures) -> String {
        use Figure::*;
        let counts = |m: &MatchCounts| format!(" (TP {}, FP {}, FN {})", m.tp, m.fp, m.fn_);
        let of = |n: usize| format!("{n} of {}", f.strap.recordings);
        match self {
            CapnoPooledF1 => pct(f.capno_counts.f1()) + &counts(&f.capno_counts),
            CapnoWorstF1 | CapnoLatency => {
                let w = if self == CapnoWorstF1 {
                    &f.capno_worst
                } else {
                    &f.capno_latency
                };
                match w {
                    Some((v, record)) => {
                        let digits = if self == CapnoWorstF1 { 2 } else { 0 };
                        format!("{} ({record})", self.unit().show(*v, digits))
                    }
                    None if self == CapnoLatency => "– (offline)".into(),
                    None => "–".into(),
                }
            }
            CapnoOffsetMedian | CapnoOffsetP95 => self.value(f).map_or("–".into(), |v| {
                format!("{} ({} pairs)", Unit::Ms.show(v, 1), f.capno_timing.pairs)
            }),
            BidmcSe | BidmcPpv | ExerciseSe | ExercisePpv => pct(self.value(f)),
            BidmcF1 => pct(f.bidmc_ecg.f1()) + &counts(&f.bidmc_ecg),
            BidmcRateMae => f.bidmc_rate.mae().map_or("–".into(), |v| {
                format!("{} ({} s)", Unit::Bpm.show(v, 2), f.bidmc_rate.count)
            }),
            ExerciseWindowsWithin => format!(
                "{} ({})",
                pct(f.exercise_windows.within_share()),
                pct(f.exercise_windows.coverage())
            ),
            StrapHrWithin => of(f.strap.hr_within),
            StrapRmssdWithin => of(f.strap.rmssd_within),
            StrapIbiMedian => match &f.strap.worst_ibi_median {
                Some((v, record)) => format!(
                    "{} ({record}; {} with {MIN_GOOD_INTERVALS} or more good intervals)",
                    Unit::Ms.show(*v, 1),
                    of(f.strap.with_good_intervals)
                ),
                None => "– (no good interval)".into(),
            },
        }
    }
}
