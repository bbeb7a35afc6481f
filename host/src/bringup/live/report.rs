//! One live report: the ADC range as the board tells it, the seven checks
//! over the window and the gauges.

use serde::Serialize;

use super::super::ambient::ambient_share;
use super::super::clipping::{clipped_share, share_check};
use super::super::hum::mains_hum;
use super::super::perfusion::perfusion_of;
use super::super::pulse_bits::bits_of;
use super::super::settling::drive_settling;
use super::super::snr::{heart_snr, MIN_SECONDS};
use super::super::{AdcRange, Block, Check, Verdict};
use super::{BoardInfo, Levels};

/// The checks' names, in the order a report lists them (the live page's
/// `data-check` values).
pub const CHECK_NAMES: [&str; 7] = [
    "perfusion",
    "pulse_bits",
    "snr",
    "hum",
    "clipping",
    "ambient",
    "settling",
];

/// One check of a report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckLine {
    /// One of [`CHECK_NAMES`].
    pub name: &'static str,
    /// The number: % (perfusion), bits, dB (snr, hum against the pulse),
    /// share 0 to 1 (clipping, ambient), s (settling).
    pub value: Option<f64>,
    /// The verdict.
    pub verdict: Verdict,
    /// One line for the builder.
    pub message: String,
}

/// The bring-up gauges; `None` where not known.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Gauges {
    /// DC level at the ADC input, share of its range (0 to 1).
    pub dc: Option<f64>,
    /// Pulse peak to peak, ADC codes.
    pub pulse_codes: Option<f64>,
    /// Pulse peak to peak, share of the ADC range.
    pub pulse_share: Option<f64>,
    /// Share of samples at the rails (0 to 1).
    pub clipped: Option<f64>,
    /// Ambient (LED-off) level, share of ADC full scale.
    pub ambient: Option<f64>,
    /// LED drive, share of full drive.
    pub led_drive: Option<f64>,
}

/// What the live checks found over the last window.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Report {
    /// Record time of the newest sample, s.
    pub time_s: f64,
    /// Seconds of samples the checks looked at.
    pub window_s: f64,
    /// How the ADC range was found, in words.
    pub range: String,
    /// The checks, in the order of [`CHECK_NAMES`].
    pub checks: Vec<CheckLine>,
    /// The gauges.
    pub gauges: Gauges,
    /// The advice lines (none without a circuit file).
    pub advice: Vec<String>,
    /// Why the circuit file does not fit the board, when it does not.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mismatch: Option<String>,
}

/// What a report is made from.
pub(super) struct Facts<'a> {
    pub samples: &'a [f64],
    /// The band-passed trace over the same samples, when the board sent it.
    pub filtered: Option<&'a [f64]>,
    pub rate_hz: f64,
    pub end_s: f64,
    pub board: BoardInfo,
    pub levels: Levels,
    /// Whether any status frame came.
    pub status_seen: bool,
    /// The clipped share the board's own count gives, when known.
    pub board_clipped: Option<f64>,
    /// The LED drive at each sample from the first one seen.
    pub settling: Vec<f64>,
}

fn line(name: &'static str, c: Check) -> CheckLine {
    CheckLine {
        name,
        value: c.value,
        verdict: c.verdict,
        message: c.message,
    }
}

fn not_measurable(name: &'static str, message: String) -> CheckLine {
    line(name, Check::new(None, Verdict::NotMeasurable, message))
}

/// The ADC range in the samples' unit and how it was found, or why there
/// is none.
pub(super) fn range_of(board: &BoardInfo, samples: &[f64]) -> Result<(AdcRange, String), String> {
    if let Some(bits) = board.adc_bits.filter(|b| *b > 0) {
        let full = 2f64.powi(i32::from(bits)) - 1.0;
        let range = AdcRange::new(0.0, full, 1.0).map_err(|e| e.to_string())?;
        return Ok((range, format!("{bits}-bit ADC, 0 to {full} codes")));
    }
    let why = match board.adc_bits {
        Some(_) => "no ADC on the board (emulated)",
        None => "the board does not say its ADC width",
    };
    let Some((lo, hi)) = board.rails.filter(|(lo, hi)| hi > lo) else {
        return Err(format!(
            "ADC range not known: {why} and sends no rails, so the checks against the range \
             cannot be made"
        ));
    };
    let step = smallest_step(samples).unwrap_or(hi - lo).min(hi - lo);
    let range = AdcRange::new(lo, hi, step).map_err(|e| e.to_string())?;
    Ok((
        range,
        format!("the board's rails {lo} to {hi} ({why}); one step taken as the smallest difference between samples, {step}"),
    ))
}

/// The smallest difference between two sample values: a recording's own
/// quantisation step.
fn smallest_step(samples: &[f64]) -> Option<f64> {
    let mut sorted = samples.to_vec();
    sorted.sort_by(f64::total_cmp);
    sorted
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|d| *d > 0.0)
        .min_by(f64::total_cmp)
}

impl Report {
    pub(super) fn of(f: &Facts) -> Report {
        let range = range_of(&f.board, f.samples);
        let range_words = match &range {
            Ok((_, words)) => words.clone(),
            Err(why) => why.clone(),
        };
        let mut gauges = Gauges {
            ambient: f.levels.ambient_level,
            led_drive: f.levels.led_drive,
            ..Gauges::default()
        };
        let checks = match block_of(f, range.as_ref().ok().map(|(r, _)| *r)) {
            Some(block) => {
                let checks = checks(f, &block, range.as_ref().err(), &mut gauges);
                if f.board.adc_bits.is_some_and(|b| b > 0) {
                    // A real ADC: the LED-on reading's DC as the board
                    // measures it, not the cancelled input's.
                    gauges.dc = f.levels.dc_level.or(gauges.dc);
                }
                checks
            }
            None => CHECK_NAMES
                .iter()
                .map(|n| not_measurable(n, "no samples yet".into()))
                .collect(),
        };
        Report {
            time_s: f.end_s,
            window_s: f.samples.len() as f64 / f.rate_hz,
            range: range_words,
            checks,
            gauges,
            advice: Vec::new(),
            mismatch: None,
        }
    }
}

/// The block the checks take; without a range, one spanning the samples
/// for the spectral checks alone (they do not use it).
fn block_of<'a>(f: &Facts<'a>, range: Option<AdcRange>) -> Option<Block<'a>> {
    let (lo, hi) = f
        .samples
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    let range = range.or_else(|| AdcRange::new(lo - 1.0, hi + 1.0, 1.0).ok())?;
    Block::new(f.samples, f.rate_hz, range).ok()
}

/// The seven checks, filling in the gauges they measure.
fn checks(f: &Facts, block: &Block, no_range: Option<&String>, g: &mut Gauges) -> Vec<CheckLine> {
    let ranged = |name: &'static str, check: &dyn Fn() -> Check| match no_range {
        Some(why) => not_measurable(name, why.clone()),
        None => line(name, check()),
    };
    // The pulse: the band-passed trace's peak to peak when it came (the
    // input's drift left out), else the input's.
    let pp = match f.filtered {
        Some(x) => {
            x.iter().fold(f64::NEG_INFINITY, |a, &v| a.max(v))
                - x.iter().fold(f64::INFINITY, |a, &v| a.min(v))
        }
        None => block.peak_to_peak(),
    };
    let adc = block.adc();
    if no_range.is_none() {
        let span = adc.high() - adc.low();
        g.pulse_codes = Some(pp / adc.step());
        g.pulse_share = Some(pp / span);
        g.dc = Some(((block.mean() - adc.low()) / span).clamp(0.0, 1.0));
    }
    let clipping = ranged("clipping", &|| {
        let samples = clipped_share(block);
        // A real ADC: a reading at a rail need not show in the
        // ambient-cancelled difference, but the board counts it.
        match f
            .board_clipped
            .filter(|_| f.board.adc_bits.is_some_and(|b| b > 0))
        {
            Some(share) if Some(share) > samples.value => share_check(share),
            _ => samples,
        }
    });
    g.clipped = clipping.value;
    vec![
        ranged("perfusion", &|| perfusion_of(pp, block.mean() - adc.low())),
        ranged("pulse_bits", &|| bits_of(pp, adc.step())),
        match heart_snr(block) {
            Ok(c) => line("snr", c),
            Err(_) => not_measurable("snr", too_short(block)),
        },
        hum(block),
        clipping,
        ambient(&f.levels),
        settling(&f.settling, f.rate_hz, f.status_seen),
    ]
}

fn too_short(block: &Block) -> String {
    format!(
        "needs {MIN_SECONDS:.0} s of samples, has {:.1} s so far",
        block.seconds()
    )
}

/// The worse of the 50 and 60 Hz checks that could be made, both said.
fn hum(block: &Block) -> CheckLine {
    let Ok(hums) = mains_hum(block) else {
        return not_measurable("hum", too_short(block));
    };
    let rank = |v: Verdict| match v {
        Verdict::NotMeasurable => 0,
        Verdict::Clear => 1,
        Verdict::Borderline => 2,
        Verdict::Trouble => 3,
    };
    let message = hums
        .iter()
        .map(|h| h.check.message.as_str())
        .collect::<Vec<_>>()
        .join("; ");
    let worst = hums
        .iter()
        .max_by_key(|h| rank(h.check.verdict))
        .map(|h| (h.check.value, h.check.verdict))
        .unwrap_or((None, Verdict::NotMeasurable));
    line("hum", Check::new(worst.0, worst.1, message))
}

fn ambient(levels: &Levels) -> CheckLine {
    match (levels.ambient_level, levels.dc_level) {
        (Some(a), Some(on)) => match ambient_share(a, on) {
            Ok(c) => line("ambient", c),
            Err(e) => not_measurable("ambient", format!("ambient share: {e}")),
        },
        _ => not_measurable(
            "ambient",
            "the board does not measure its LED-off level".into(),
        ),
    }
}

fn settling(series: &[f64], rate_hz: f64, status_seen: bool) -> CheckLine {
    let Ok(s) = drive_settling(series, rate_hz, 0.0) else {
        let why = if status_seen {
            "the board does not measure its LED drive"
        } else {
            "no status from the board yet"
        };
        return not_measurable("settling", why.into());
    };
    let steady = series.windows(2).all(|w| w[0] == w[1]);
    if !s.settled && steady {
        return not_measurable(
            "settling",
            format!("LED drive known for {:.1} s only", s.since_change_s),
        );
    }
    line("settling", s.check)
}
