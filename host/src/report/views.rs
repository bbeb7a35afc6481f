//! The sections built around a figure: signal excerpt, heart-rate trend,
//! tachogram, Poincaré plot, quality timeline, band-pass response.

use super::band::BandPass;
use super::charts::{self, SignalPlot};
use super::excerpt::Excerpt;
use super::figures::Figures;
use super::html::{count, escape, fig, legend, table, Mark};
use super::poincare::{nn_pairs, poincare};
use super::sections::section;
use super::timeline::{spans, state_name, STATES};
use super::traces::ExcerptTraces;
use super::ReportInput;
use crate::plot::theme::{BANDED, FLAGGED, GOOD, GUIDE, HEART, LINE, RAW, REFERENCE};
use crate::plot::{PlotError, Rgb};
use plethwire_dsp::pipeline::quality::MIN_CORRELATION;

/// The signal excerpt with the beats marked.
pub fn excerpt_section(
    input: &ReportInput<'_>,
    f: &Figures,
    e: Excerpt,
    band: &BandPass,
) -> Result<String, PlotError> {
    let made;
    let traces = match input.traces {
        Some(t) => t,
        None => {
            let beats = &input.replay.beats;
            made = ExcerptTraces::of_samples(input.samples, f.sample_rate_hz, e, band, beats);
            &made
        }
    };
    let reference = input.reference.and_then(|r| r.beats.as_deref());
    let svg = charts::signal_svg(&SignalPlot {
        traces,
        fs: f.sample_rate_hz,
        excerpt: e,
        beats: &input.replay.beats,
        reference,
        units: input.units.unwrap_or("input"),
    })?;
    let how = if input.excerpt.is_some() {
        "as asked".to_owned()
    } else {
        format!(
            "chosen as the {:.0} s with the most good beats",
            super::DEFAULT_EXCERPT_S
        )
    };
    let mut marks = vec![
        (Mark::Line, RAW, "input"),
        (Mark::Line, BANDED, "band-passed"),
        (Mark::Dot, GOOD, "good beat (at its peak)"),
        (Mark::Cross, FLAGGED, "bad beat"),
    ];
    if reference.is_some() {
        marks.push((Mark::Triangle, REFERENCE, "reference beat"));
    }
    let restarts = if f.restarts > 0 {
        " The pipeline restarted its filters after steps in the input; this band-passed trace does not."
    } else {
        ""
    };
    let reference_count = match f.excerpt.excerpt_reference_beats {
        Some(n) => format!(
            ", {} reference beats",
            count("excerpt_reference_beats", Some(n))
        ),
        None => String::new(),
    };
    let body = format!(
        "<p>From {} s for {} s ({how}): {} beats{reference_count}.</p>\n{}\n<figure>{svg}</figure>\n\
         <p class=\"note\">Beats are marked where the pipeline placed their systolic peak (on the lightly smoothed \
         input), at the same instants in both panels: an offset between a mark and the band-passed peak is the \
         filter's doing. The band-passed trace is the pipeline's own band-pass run over the recording from its \
         start.{restarts} Traces are thinned to the lowest and highest sample of each screen column, so every \
         peak and trough keeps its height.</p>",
        fig("excerpt_start_s", Some(e.start_s), 1),
        fig("excerpt_length_s", Some(e.length_s), 1),
        count("excerpt_beats", Some(f.excerpt.excerpt_beats)),
        legend(&marks),
    );
    Ok(section("excerpt", &body))
}

/// The heart-rate trend and the interval tachogram.
pub fn trend_sections(input: &ReportInput<'_>) -> Result<String, PlotError> {
    let run = input.replay;
    let reference = input
        .reference
        .map(|r| r.rate_points())
        .filter(|p| !p.is_empty());
    let hr = charts::heart_rate_svg(run, reference.as_deref())?;
    let mut marks = vec![
        (Mark::Dot, GOOD, "HR, good beat"),
        (Mark::Cross, FLAGGED, "HR, bad beat"),
        (
            Mark::Line,
            LINE,
            "median HR (of the good intervals of the last 12 s)",
        ),
    ];
    let source = input
        .reference
        .map(|r| format!("reference ({})", r.rate_source));
    if let (Some(_), Some(s)) = (&reference, &source) {
        marks.push((Mark::Line, REFERENCE, s.as_str()));
    }
    let hr_body = format!(
        "{}\n<figure>{hr}</figure>\n<p class=\"note\">HR is 60000 / interval at each beat's peak; \
         the median HR is drawn when the pipeline reported it. Bad beats beyond the axis are drawn on its edge.</p>",
        legend(&marks)
    );
    let tach = charts::tachogram_svg(run)?;
    let tach_body = format!(
        "{}\n<figure>{tach}</figure>\n<p class=\"note\">Each beat's interval from the previous beat's peak. \
         Bad beats beyond the axis are drawn on its edge.</p>",
        legend(&[
            (Mark::Dot, GOOD, "good beat"),
            (Mark::Cross, FLAGGED, "bad beat"),
        ])
    );
    Ok(section("heart-rate", &hr_body) + &section("intervals", &tach_body))
}

/// The Poincaré plot with SD1/SD2.
pub fn poincare_section(input: &ReportInput<'_>, f: &Figures) -> Result<String, PlotError> {
    let pairs = nn_pairs(input.replay);
    let stats = poincare(&pairs);
    let svg = charts::poincare_svg(&pairs, &stats)?;
    let p = &f.poincare;
    let rows = table(&[
        (
            "pairs of successive NN intervals",
            count("poincare_pairs", Some(p.poincare_pairs)),
        ),
        (
            "SD1, across the identity line",
            format!("{} ms", fig("sd1_ms", p.sd1_ms, 1)),
        ),
        (
            "SD2, along the identity line",
            format!("{} ms", fig("sd2_ms", p.sd2_ms, 1)),
        ),
        ("SD2 / SD1", fig("sd2_sd1_ratio", p.sd2_sd1_ratio, 2)),
    ]);
    let body = format!(
        "<div class=\"row\"><figure class=\"square\">{svg}</figure>\n<div>{rows}\n{}\n\
         <p class=\"note\">Each point is one NN interval against the next (both beats of each interval good). \
         SD1 and SD2 are the sample standard deviations of the points rotated by 45°, after Brennan, Palaniswami \
         and Kamen, IEEE Trans. Biomed. Eng. 48(11):1342, 2001; the ellipse has them as its half-axes.</p></div></div>",
        legend(&[
            (Mark::Dot, GOOD, "pair of NN intervals"),
            (Mark::Dashed, GUIDE, "identity line"),
            (Mark::Line, LINE, "SD1/SD2 ellipse"),
            (Mark::Line, FLAGGED, "SD1"),
            (Mark::Line, REFERENCE, "SD2"),
        ])
    );
    Ok(section("poincare", &body))
}

/// The quality timeline and the time in each signal state.
pub fn quality_section(input: &ReportInput<'_>, f: &Figures) -> Result<String, PlotError> {
    let sp = spans(input.replay);
    let svg = charts::quality_svg(input.replay, &sp)?;
    let state_marks: Vec<(Mark, Rgb, &str)> = STATES
        .iter()
        .map(|&s| (Mark::Block, charts::state_colour(s), state_name(s)))
        .collect();
    let s = &f.states;
    let rows = table(&[
        ("good", format!("{} s", fig("good_s", Some(s.good_s), 1))),
        (
            "acquiring",
            format!("{} s", fig("acquiring_s", Some(s.acquiring_s), 1)),
        ),
        ("noisy", format!("{} s", fig("noisy_s", Some(s.noisy_s), 1))),
        (
            "saturated",
            format!("{} s", fig("saturated_s", Some(s.saturated_s), 1)),
        ),
        (
            "no signal",
            format!("{} s", fig("no_signal_s", Some(s.no_signal_s), 1)),
        ),
        (
            "state changes",
            count("state_changes", Some(s.state_changes)),
        ),
    ]);
    let body = format!(
        "{}\n{}\n<figure>{svg}</figure>\n<div class=\"row\">{rows}\n<p class=\"note\">Correlation of each pulse with \
         the running template of recent clean pulses; below {MIN_CORRELATION} (dashed) a beat is flagged low correlation. A beat is \
         good when no flag but “no interval” is set, bad otherwise. The state strip follows the pipeline's state events.</p></div>",
        legend(&[
            (Mark::Dot, GOOD, "good beat"),
            (Mark::Cross, FLAGGED, "bad beat"),
            (Mark::Dashed, GUIDE, "correlation threshold"),
        ]),
        legend(&state_marks),
    );
    Ok(section("quality", &body))
}

/// The band-pass and its response at the record's rate.
pub fn filter_section(
    input: &ReportInput<'_>,
    f: &Figures,
    band: &BandPass,
) -> Result<String, PlotError> {
    let heart = match (f.hr_min_bpm, f.filter.mean_hr_hz, f.hr_max_bpm) {
        (Some(lo), Some(mean), Some(hi)) => Some((lo / 60.0, mean, hi / 60.0)),
        _ => None,
    };
    let svg = charts::response_svg(band, heart)?;
    let x = &f.filter;
    let rows = table(&[
        (
            "Butterworth band-pass, order",
            count("band_order", Some(x.band_order)),
        ),
        (
            "lower edge",
            format!("{} Hz", fig("band_low_hz", Some(x.band_low_hz), 2)),
        ),
        (
            "upper edge",
            format!("{} Hz", fig("band_high_hz", Some(x.band_high_hz), 2)),
        ),
        (
            "mean heart rate as a frequency",
            format!("{} Hz", fig("mean_hr_hz", x.mean_hr_hz, 3)),
        ),
        (
            "gain there",
            format!("{} dB", fig("gain_at_mean_hr_db", x.gain_at_mean_hr_db, 2)),
        ),
        (
            "group delay there",
            format!(
                "{} ms",
                fig("delay_at_mean_hr_ms", x.delay_at_mean_hr_ms, 1)
            ),
        ),
    ]);
    let leaves = format!(
        "the gain leaves the axis (below {} dB)",
        charts::GAIN_FLOOR_DB
    );
    let body = format!(
        "<div class=\"row\">{rows}\n<p class=\"note\">The band-pass the pipeline ran on this recording, as the board \
         computes it ({} sections in f32, coefficients as rounded) at {} Hz. Dashed: the band edges.</p></div>\n{}\n<figure>{svg}</figure>",
        x.band_order,
        escape(&format!("{}", input.config.sample_rate_hz)),
        legend(&[
            (Mark::Line, LINE, "gain, group delay"),
            (Mark::Block, HEART, "this record's median HR, min to max"),
            (Mark::Line, HEART, "mean of the median HR"),
            (Mark::Dashed, GUIDE, "band edges"),
            // A band-pass's zeros at DC and Nyquist take every such curve
            // below the axis at both ends.
            (Mark::Leaves, LINE, &leaves),
        ])
    );
    Ok(section("filter", &body))
}
