//! The page: header of key figures, the sections in order (those around
//! a figure are in `views`), the tables of HRV and score, the cautions.
//! The header's navigation lists the sections the page has, and its cards
//! the headline figures it has (a score only with a reference).

use super::band::BandPass;
use super::excerpt::Excerpt;
use super::figures::Figures;
use super::html::{count, escape, fig, table, STYLE};
use super::sections::{heading, section};
use super::views::{
    excerpt_section, filter_section, poincare_section, quality_section, trend_sections,
};
use super::ReportInput;
use crate::plot::{units_kept, PlotError};

fn card(label: &str, value: String) -> String {
    format!("<div><dt>{}</dt><dd>{value}</dd></div>", escape(label))
}

/// The summary cards of the page's header, one per headline figure.
fn summary_cards(f: &Figures) -> Vec<String> {
    let hr = match f.hr_mean_bpm {
        Some(_) => format!(
            "{} <small>bpm</small>",
            fig("median_hr_mean_bpm", f.hr_mean_bpm, 1)
        ),
        None => format!(
            "{} <small>no good beats</small>",
            fig("median_hr_mean_bpm", None, 1)
        ),
    };
    let range = format!(
        "{}–{} <small>bpm</small>",
        fig("median_hr_min_bpm", f.hr_min_bpm, 1),
        fig("median_hr_max_bpm", f.hr_max_bpm, 1)
    );
    let mut cards = vec![
        card(
            "duration",
            format!(
                "{} <small>s</small>",
                fig("duration_s", Some(f.duration_s), 1)
            ),
        ),
        card(
            "sample rate",
            format!(
                "{} <small>Hz</small>",
                fig("sample_rate_hz", Some(f.sample_rate_hz), 1)
            ),
        ),
        card(
            "detector",
            format!(
                r#"<span data-figure="detector">{}</span>"#,
                escape(&f.detector)
            ),
        ),
        card(
            "beats",
            format!(
                "{} <small>{} good</small>",
                count("beats", Some(f.beats)),
                count("good_beats", Some(f.good_beats))
            ),
        ),
        card(
            "good share",
            format!(
                "{} <small>%</small>",
                fig("good_share_percent", Some(f.good_share_percent), 1)
            ),
        ),
        card("median HR, mean", hr),
        card("median HR range", range),
        card(
            "latency, peak to event",
            format!(
                "{} <small>ms (median)</small>",
                fig("latency_median_ms", f.latency_median_ms, 0)
            ),
        ),
    ];
    cards.extend(score_cards(f));
    cards
}

/// The score's cards: the same figures `plethwire report` prints against
/// the reference, each when there is one.
fn score_cards(f: &Figures) -> Vec<String> {
    let Some(s) = &f.score else {
        return Vec::new();
    };
    let mut cards = Vec::new();
    if s.f1_percent.is_some() {
        cards.push(card(
            "F1 against reference",
            format!("{} <small>%</small>", fig("f1_percent", s.f1_percent, 2)),
        ));
    }
    if s.hr_mae_bpm.is_some() {
        cards.push(card(
            "heart-rate error against reference",
            format!(
                "{} <small>bpm (MAE)</small>",
                fig("hr_mae_bpm", s.hr_mae_bpm, 2)
            ),
        ));
    }
    cards
}

/// The header: title, input line, cards, and links to the sections
/// `rendered` (ids, in page order).
fn header(input: &ReportInput<'_>, f: &Figures, rendered: &[&str]) -> String {
    let cards = summary_cards(f);
    let units = input
        .units
        .map(|u| format!(" ({})", escape(u)))
        .unwrap_or_default();
    let nav: String = rendered
        .iter()
        .map(|id| format!(r##"<a href="#{id}">{}</a>"##, heading(id)))
        .collect();
    let no_score = if f.score.is_none() {
        "<p class=\"sub\">No reference beats or heart-rate series were given or found beside the \
         record, so the page has no score.</p>\n"
    } else {
        ""
    };
    format!(
        "<header id=\"summary\">\n<h1><span data-figure=\"record\">{name}</span><span class=\"tool\">plethwire report</span></h1>\n\
         <p class=\"sub\">signal <span data-figure=\"signal\">{signal}</span>{units}; input: {} samples replaced (not a number), {} at the rails, {} filter restarts</p>\n\
         {no_score}<dl class=\"cards\">{}</dl>\n<nav>{nav}</nav>\n</header>\n",
        count("replaced_samples", Some(f.rejected_samples as usize)),
        count("clipped_samples", Some(f.clipped_samples as usize)),
        count("restarts", Some(f.restarts as usize)),
        cards.concat(),
        name = escape(&f.record),
        signal = escape(&f.signal),
    )
}
fn hrv_section(f: &Figures) -> String {
    let h = &f.hrv;
    let rows = table(&[
        ("NN intervals", count("nn_intervals", Some(h.nn_intervals))),
        (
            "successive differences",
            count("successive_differences", Some(h.successive_differences)),
        ),
        (
            "mean NN",
            format!("{} ms", fig("mean_nn_ms", h.mean_nn_ms, 1)),
        ),
        ("SDNN", format!("{} ms", fig("sdnn_ms", h.sdnn_ms, 1))),
        ("RMSSD", format!("{} ms", fig("rmssd_ms", h.rmssd_ms, 1))),
        ("NN50", count("nn50", Some(h.nn50))),
        (
            "pNN50",
            format!("{} %", fig("pnn50_percent", h.pnn50_percent, 1)),
        ),
    ]);
    section(
        "hrv",
        &format!(
            "<div class=\"row\">{rows}\n<p class=\"note\">Time-domain measures as defined by the Task Force of the ESC \
             and NASPE (1996) over the whole recording. An interval is normal-to-normal (NN) when the beats at both \
             its ends are good; successive differences are formed only between adjacent NN intervals. Pulse intervals \
             from a finger sensor stand in for the ECG's RR intervals here, and recordings of a few minutes give \
             short-term figures only.</p></div>"
        ),
    )
}
/// The score against the reference; none without one.
fn score_section(input: &ReportInput<'_>, f: &Figures) -> Option<String> {
    let (Some(s), Some(r)) = (&f.score, input.reference) else {
        return None;
    };
    let mut rows: Vec<(&str, String)> = Vec::new();
    if s.reference_beats.is_some() {
        rows.push((
            "reference beats",
            format!(
                "{} ({})",
                count("reference_beats", s.reference_beats),
                escape(&r.beats_source)
            ),
        ));
        rows.push(("true positives (TP)", count("tp", s.tp)));
        rows.push(("false positives (FP)", count("fp", s.fp)));
        rows.push(("false negatives (FN)", count("fn", s.fn_)));
        rows.push((
            "sensitivity Se",
            format!("{} %", fig("se_percent", s.se_percent, 2)),
        ));
        rows.push((
            "positive predictivity +P",
            format!("{} %", fig("ppv_percent", s.ppv_percent, 2)),
        ));
        rows.push(("F1", format!("{} %", fig("f1_percent", s.f1_percent, 2))));
    }
    if s.hr_seconds.is_some() {
        rows.push(("heart-rate series", escape(&r.rate_source)));
        rows.push((
            "heart-rate MAE",
            format!("{} bpm", fig("hr_mae_bpm", s.hr_mae_bpm, 2)),
        ));
        rows.push(("seconds compared", count("hr_seconds", s.hr_seconds)));
    }
    Some(section(
        "score",
        &format!(
            "<div class=\"row\">{}\n<p class=\"note\">Beats match one to one within ±150 ms, closest pairs first \
             (ANSI/AAMI EC57 practice); Se = TP/(TP+FN), +P = TP/(TP+FP), F1 = 2TP/(2TP+FP+FN). The heart-rate error \
             compares, at each second of the reference series, the median HR the pipeline had last reported; \
             seconds without a reference value or before the first report are left out.</p></div>",
            table(&rows)
        ),
    ))
}

const CAUTIONS: &str = "<footer id=\"cautions\">\n<p><strong>plethwire is not a medical device.</strong> This report \
is not for diagnosis, treatment or monitoring of anyone's health; its numbers are engineering estimates for checking \
a sensor and its software. Local regulations and qualified practice decide what may be built and used on people.</p>\n";

/// The whole page.
pub fn page(
    input: &ReportInput<'_>,
    f: &Figures,
    e: Excerpt,
    band: &BandPass,
) -> Result<String, PlotError> {
    let body = [
        Some(excerpt_section(input, f, e, band)?),
        Some(trend_sections(input)?),
        Some(poincare_section(input, f)?),
        Some(quality_section(input, f)?),
        Some(hrv_section(f)),
        Some(filter_section(input, f, band)?),
        score_section(input, f),
    ]
    .into_iter()
    .flatten()
    .collect::<String>();
    let rendered = super::sections::ids_in(&body);
    let page = format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n\
         <title>{} · plethwire report</title>\n<style>{STYLE}</style>\n</head>\n<body>\n{}<main>\n{body}</main>\n\
         {CAUTIONS}<p>Made by plethwire {} from {} samples.</p>\n</footer>\n</body>\n</html>\n",
        escape(&f.record),
        header(input, f, &rendered),
        env!("CARGO_PKG_VERSION"),
        input.sample_count(),
    );
    // No line breaks between a number and its unit anywhere on the page.
    Ok(units_kept(&page))
}
