//! `plethwire filter` with the human-readable report: the SVG, the const
//! block, its JSON twin and the response table, each checked against
//! plethwire-dsp called directly.

mod common;

use common::{const_block, const_sections, plethwire, stdout_of_success, table_rows};
use plethwire_dsp::design::{butterworth_bandpass, notch, MAX_SECTIONS};
use plethwire_dsp::filter::{Biquad, Delta};
use plethwire_dsp::response::response;
use plethwire_dsp::Design;

const RATE: f64 = 250.0;

fn band_and_notch() -> Design {
    butterworth_bandpass(2, 0.5, 8.0, RATE)
        .unwrap()
        .then(&notch(50.0, 30.0, RATE).unwrap())
        .unwrap()
}

fn report(dir: &std::path::Path, extra: &[&str]) -> String {
    let mut args = vec![
        "filter", "--rate", "250", "--band", "0.5:8", "--notch", "50",
    ];
    args.extend_from_slice(extra);
    stdout_of_success(&plethwire(dir, &args))
}

#[test]
fn writes_a_parseable_svg_with_the_title_and_all_curves() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--plot", "my plot.svg"]);
    assert!(
        text.trim_end().ends_with("Plot written to my plot.svg"),
        "{text}"
    );
    let svg = std::fs::read_to_string(dir.path().join("my plot.svg")).unwrap();
    assert!(svg.starts_with("<svg"));
    let doc = roxmltree::Document::parse(&svg).expect("well-formed XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let title = "plethwire filter: Butterworth band-pass 0.5-8 Hz (order 2), then notch 50 Hz (Q 30) at 250 Hz";
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        // Numbers and units are held together by no-break spaces.
        .filter_map(|n| n.text().map(|t| t.trim().replace('\u{a0}', " ")))
        .collect();
    // Long titles wrap over lines at the top of the picture.
    assert!(texts.join(" ").contains(title), "no title in {texts:?}");
    assert!(texts[0].starts_with("plethwire filter: "), "{texts:?}");
    for panel in ["magnitude", "phase (unwrapped)", "group delay"] {
        assert!(texts.iter().any(|t| t == panel), "no {panel} panel");
    }
    // Design and board curve in each of the three panels.
    let curves = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .count();
    assert!(curves >= 6, "{curves} polylines");
}

#[test]
fn default_plot_path_is_in_the_working_directory() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &[]);
    assert!(text.contains("Plot written to plethwire-filter.svg"));
    assert!(dir.path().join("plethwire-filter.svg").is_file());
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--no-plot"]);
    assert!(text.contains("No plot written."));
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn header_names_kind_corners_order_rate_and_sections() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--no-plot"]);
    assert_eq!(
        text.lines().next().unwrap(),
        "Designed Butterworth band-pass 0.5-8 Hz (order 2), then notch 50 Hz (Q 30) at 250 Hz sampling: 3 sections"
    );
}

#[test]
fn const_block_numbers_parse_back_to_the_design_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--no-plot", "--name", "FINGER_BAND"]);
    let block = const_block(&text);
    let mut lines = block.lines();
    assert_eq!(
        lines.next().unwrap(),
        "// Made by: plethwire filter --rate 250 --band 0.5:8 --notch 50 --no-plot --name FINGER_BAND"
    );
    assert_eq!(lines.next().unwrap(), "use plethwire_dsp::filter::Biquad;");
    assert!(block.contains("pub const FINGER_BAND: [Biquad<f64>; 3] = ["));
    let design = band_and_notch();
    let parsed = const_sections(&block);
    assert_eq!(parsed.len(), design.len());
    for (p, s) in parsed.iter().zip(design.sections()) {
        let want = [s.b0, s.b1, s.b2, s.a1, s.a2];
        for (a, b) in p.iter().zip(want) {
            assert_eq!(a.to_bits(), b.to_bits(), "{a} printed for {b}");
        }
    }
}

#[test]
fn sections_json_matches_the_design_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--no-plot"]);
    let line = text
        .lines()
        .skip_while(|l| *l != "Sections as JSON:")
        .nth(1)
        .expect("a JSON line");
    let v: serde_json::Value = serde_json::from_str(line).unwrap();
    assert_eq!(v["sample_rate_hz"], RATE);
    let sections = v["sections"].as_array().unwrap();
    let design = band_and_notch();
    assert_eq!(sections.len(), design.len());
    for (j, s) in sections.iter().zip(design.sections()) {
        let num = |k: &str, i: usize| j[k][i].as_f64().unwrap();
        assert_eq!([num("b", 0), num("b", 1), num("b", 2)], [s.b0, s.b1, s.b2]);
        assert_eq!([num("a", 0), num("a", 1), num("a", 2)], [1.0, s.a1, s.a2]);
    }
}

fn assert_printed(printed: Option<f64>, exact: f64, decimals: i32, what: &str) {
    let printed = printed.unwrap_or_else(|| panic!("{what} missing"));
    let half_step = 0.5 * 10f64.powi(-decimals) * (1.0 + 1e-9);
    assert!(
        (printed - exact).abs() <= half_step,
        "{what}: printed {printed}, response() gives {exact}"
    );
}

#[test]
fn table_values_are_the_response_of_design_and_board() {
    let dir = tempfile::tempdir().unwrap();
    let text = report(dir.path(), &["--no-plot", "--at", "0.3,0.5,1.2,8,49,61"]);
    let design = band_and_notch();
    let board: [Biquad<f64>; MAX_SECTIONS] =
        design.cascade::<Delta, MAX_SECTIONS>().unwrap().realised();
    let board = &board[..design.len()];
    let rows = table_rows(&text);
    assert_eq!(rows.len(), 6);
    for row in rows {
        let f = row[0].unwrap();
        for (offset, sections, who) in [(1, design.sections(), "design"), (4, board, "board")] {
            let r = response(sections, f, RATE);
            let at = |k: usize, what: &str| (row[offset + k], format!("{who} {what} at {f} Hz"));
            let (v, w) = at(0, "gain");
            assert_printed(v, r.magnitude_db, 4, &w);
            let (v, w) = at(1, "phase");
            assert_printed(v, r.phase_rad.to_degrees(), 2, &w);
            let (v, w) = at(2, "delay");
            assert_printed(v, r.group_delay_s * 1000.0, 3, &w);
        }
    }
}

#[test]
fn default_table_frequencies_are_useful_ones_and_corners_below_nyquist() {
    let dir = tempfile::tempdir().unwrap();
    let text = stdout_of_success(&plethwire(
        dir.path(),
        &[
            "filter",
            "--rate",
            "100",
            "--dc-block",
            "0.3",
            "--low-pass",
            "12",
            "--no-plot",
        ],
    ));
    let freqs: Vec<f64> = table_rows(&text).iter().map(|r| r[0].unwrap()).collect();
    assert_eq!(freqs, [0.1, 0.3, 0.5, 1.0, 2.0, 3.7, 8.0, 12.0, 20.0]);
}
