//! `plethwire frontend` through the real binary: the check values of the
//! trade, the heart band verdict, clipping, the plot, the matching
//! `plethwire filter` command, and one-line failures.

mod common;

use common::{plethwire, stdout_of_success};
use serde_json::Value;
use std::path::Path;

const EXAMPLE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/../examples/frontend-fingerclip.toml"
);

/// LED 5 V − 1.7 V over 470 Ω, a −10 kΩ transimpedance, a unity buffer and
/// an inverting stage of `rf` over 1 kΩ.
fn check_chain(rf: &str) -> Vec<String> {
    [
        "frontend",
        "--supply",
        "5",
        "--led-vf",
        "1.7",
        "--led-r",
        "470",
        "--tia",
        "10k",
        "--stage",
        "buffer",
        "--stage",
        &format!("inverting,rin=1k,rf={rf}"),
        "--pulse-ua",
        "1",
        "--no-plot",
        "--json",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect()
}

fn json(dir: &Path, args: &[String]) -> Value {
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    serde_json::from_str(&stdout_of_success(&plethwire(dir, &args))).expect("JSON")
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// The messages of the findings at level error or warning.
fn warnings(report: &Value) -> Vec<String> {
    report["findings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["level"] == "error" || f["level"] == "warning")
        .map(|f| f["message"].as_str().unwrap().to_owned())
        .collect()
}

#[test]
fn led_current_and_transimpedance_check_values() {
    let dir = tempfile::tempdir().unwrap();
    let r = json(dir.path(), &check_chain("470k"));
    // (5 V − 1.7 V) / 470 Ω ≈ 7.0 mA (common practice: Ohm's law).
    assert!((num(&r["led"]["current_ma"]) - 7.02).abs() < 0.005);
    // −10 kΩ × 1 × −470 = 4.7 MΩ, 4.7 V per µA (common practice).
    assert!((num(&r["midband_v_per_ua"]) - 4.7).abs() < 1e-9);
    // 1 µA gives 4.7 V p-p, more than the 3.3 V ADC range: clipping.
    assert!((num(&r["swing"]["swing_vpp"]) - 4.7).abs() < 1e-9);
    assert_eq!(r["swing"]["adc_clips"], true);
    let w = warnings(&r);
    assert!(
        w.iter()
            .any(|w| w.starts_with("clipping:") && w.contains("ADC input range")),
        "{w:?}"
    );

    let mut args = check_chain("47k");
    args.extend(["--led-parallel".to_owned(), "3".to_owned()]);
    let r = json(dir.path(), &args);
    // Three 470 Ω in parallel ≈ 21 mA; −10 kΩ × 1 × −47 = 470 kΩ, so 1 µA
    // gives 470 mV (common practice).
    assert!((num(&r["led"]["current_ma"]) - 21.06).abs() < 0.005);
    assert!((num(&r["chain"]["midband_v_per_a"]) - 470e3).abs() < 1e-6);
    assert!((num(&r["swing"]["swing_vpp"]) - 0.47).abs() < 1e-9);
    assert_eq!(r["swing"]["adc_clips"], false);
    assert!(!warnings(&r).iter().any(|w| w.starts_with("clipping")));
    // The same three as a list.
    let listed: Vec<String> = args
        .iter()
        .map(|a| {
            if a == "470" {
                "470,470,470".to_owned()
            } else {
                a.clone()
            }
        })
        .take_while(|a| a != "--led-parallel")
        .collect();
    let r = json(dir.path(), &listed);
    assert!((num(&r["led"]["current_ma"]) - 21.06).abs() < 0.005);
}

#[test]
fn rated_current_warns_when_exceeded() {
    let dir = tempfile::tempdir().unwrap();
    let mut args = check_chain("47k");
    args.extend(["--led-parallel", "3", "--led-rated-ma", "20"].map(String::from));
    let w = warnings(&json(dir.path(), &args));
    assert!(
        w.iter()
            .any(|w| w.starts_with("LED current 21.1 mA is above its rated 20 mA")),
        "{w:?}"
    );
}

#[test]
fn rc_corners_and_the_heart_band_verdict() {
    let dir = tempfile::tempdir().unwrap();
    let mut args = check_chain("47k");
    args.extend(
        [
            "--stage",
            "highpass,r=10k,c=22u",
            "--stage",
            "lowpass,r=47k,c=1u",
        ]
        .map(String::from),
    );
    // Every --stage given is the chain, in order: buffer, inverting,
    // high-pass, low-pass.
    let r = json(dir.path(), &args);
    let poles: Vec<f64> = r["chain"]["transfer"]["poles_rad_s"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| num(p).abs() / (2.0 * std::f64::consts::PI))
        .collect();
    // 1/(2π · 10 kΩ · 22 µF) ≈ 0.72 Hz; 1/(2π · 47 kΩ · 1 µF) ≈ 3.39 Hz
    // (common practice).
    assert!(poles.iter().any(|p| (p - 0.72).abs() < 0.005), "{poles:?}");
    assert!(poles.iter().any(|p| (p - 3.39).abs() < 0.005), "{poles:?}");
    let zeros = r["chain"]["transfer"]["zeros_rad_s"].as_array().unwrap();
    assert_eq!(zeros.len(), 1);
    assert_eq!(num(&zeros[0]), 0.0);
    // Both corners sit inside the band: it fails at both edges.
    assert_eq!(r["heart_band"]["low_edge"]["fails"], true);
    assert_eq!(r["heart_band"]["high_edge"]["fails"], true);

    let mut low2 = check_chain("47k");
    // 1/(2π · 7.958 kΩ · 10 µF) = 2.000 Hz.
    low2.extend(["--stage", "lowpass,r=7958,c=10u"].map(String::from));
    let r = json(dir.path(), &low2);
    let band = &r["heart_band"];
    assert_eq!(band["passes"], false);
    assert_eq!(band["low_edge"]["fails"], false);
    assert_eq!(band["high_edge"]["fails"], true);
    let verdict = band["verdict"].as_str().unwrap();
    assert!(
        verdict.starts_with("fails at the upper edge: 3.7 Hz"),
        "{verdict}"
    );
    // 10·log10(1 + (3.7/2)²) = 6.46 dB below mid-band.
    assert!((num(&band["high_edge"]["loss_db"]) - 6.457).abs() < 0.01);
    assert!(warnings(&r)
        .iter()
        .any(|w| w.starts_with("the analog chain fails at the upper edge")));
}

#[test]
fn the_printed_filter_command_designs_the_same_sections() {
    let dir = tempfile::tempdir().unwrap();
    let args = [EXAMPLE, "--no-plot", "--json"].map(String::from);
    let mut all = vec!["frontend".to_owned()];
    all.extend(args);
    let r = json(dir.path(), &all);
    let command = r["digital"]["command"].as_str().unwrap();
    assert_eq!(command, "plethwire filter --rate 200 --band 0.3:8");
    let mut filter: Vec<String> = command.split(' ').skip(1).map(String::from).collect();
    filter.extend(["--no-plot", "--json"].map(String::from));
    let f = json(dir.path(), &filter);
    assert_eq!(f["coefficients"]["sections"], r["digital"]["sections"]);
    // The example's own numbers, by Ohm's law: (3.3 − 1.35) V / 100 Ω.
    assert!((num(&r["led"]["current_ma"]) - 19.5).abs() < 1e-9);
    // −1 MΩ × (1 + 22k/1k) = −23 V/µA.
    assert!((num(&r["midband_v_per_ua"]) + 23.0).abs() < 1e-9);
    assert_eq!(r["heart_band"]["passes"], true);
    assert_eq!(r["cautions"].as_array().unwrap().len(), 4);
    // Every table row's heart rate is its frequency × 60.
    for row in r["response"].as_array().unwrap() {
        assert!((num(&row["bpm"]) - 60.0 * num(&row["frequency_hz"])).abs() < 1e-9);
    }
}

#[test]
fn text_report_plot_and_cautions() {
    let dir = tempfile::tempdir().unwrap();
    let out = plethwire(
        dir.path(),
        &["frontend", EXAMPLE, "--plot", "bode plot.svg"],
    );
    let text = stdout_of_success(&out);
    for needle in [
        "current 19.5 mA (rated 50 mA)",
        "mid-band transimpedance -23 V/µA",
        "analog chain: passes",
        "design it for the board: plethwire filter --rate 200 --band 0.3:8",
        "Plot written to bode plot.svg",
        "not a medical device",
        "IEC 62471",
        "IEC 60601-1",
        "USB isolator",
        "Local regulations and qualified practice decide",
    ] {
        assert!(text.contains(needle), "no {needle:?} in\n{text}");
    }
    let svg = std::fs::read_to_string(dir.path().join("bode plot.svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).expect("well-formed XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        // Numbers and units are held together by no-break spaces.
        .filter_map(|n| n.text().map(|t| t.trim().replace('\u{a0}', " ")))
        .collect();
    for label in [
        "gain against mid-band",
        "phase",
        "analog chain",
        "analog + digital band-pass (200 Hz sampling)",
        "heart band 0.5-3.7 Hz (30-220 bpm)",
    ] {
        assert!(
            texts.iter().any(|t| t == label),
            "no {label:?} in {texts:?}"
        );
    }
    // Both curves in both panels, plus the legend's samples.
    let curves = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .filter(|n| {
            n.attribute("points")
                .is_some_and(|p| p.split(' ').count() > 100)
        })
        .count();
    assert_eq!(curves, 4, "long polylines");
}

#[test]
fn help_shows_examples_and_cautions() {
    let dir = tempfile::tempdir().unwrap();
    let text = stdout_of_success(&plethwire(dir.path(), &["frontend", "--help"]));
    for needle in [
        "plethwire frontend examples/frontend-fingerclip.toml",
        "--pulse-ua",
        "inverting,rin=R,rf=R",
        "not a medical device",
        "IEC 62471",
        "IEC 60601-1",
    ] {
        assert!(text.contains(needle), "no {needle:?} in\n{text}");
    }
}

/// Run, expect failure with `code`, one line on stderr containing
/// `needle`, nothing on stdout and no plot left behind.
fn check_failure(dir: &Path, args: &[&str], code: i32, needle: &str) {
    let out = plethwire(dir, args);
    let stderr = String::from_utf8_lossy(&out.stderr);
    let shown = args.join(" ");
    assert_eq!(out.status.code(), Some(code), "{shown}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{shown}: {stderr}");
    assert!(stderr.starts_with("plethwire: "), "{shown}: {stderr}");
    assert!(!stderr.contains("panicked"), "{shown}: {stderr}");
    assert!(
        stderr.contains(needle),
        "{shown}: {stderr} lacks {needle:?}"
    );
    assert!(out.stdout.is_empty(), "{shown} printed to stdout");
    assert!(
        !dir.join("plethwire-frontend.svg").exists(),
        "{shown} left a plot"
    );
}

#[test]
fn bad_input_is_one_line_and_never_a_panic() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let example = std::fs::read_to_string(EXAMPLE).unwrap();
    let write = |name: &str, text: String| {
        let p = d.join(name);
        std::fs::write(&p, text).unwrap();
        p.display().to_string()
    };
    let unknown = write(
        "unknown.toml",
        example.replace("rated_ma = 50", "rated_mamps = 50"),
    );
    check_failure(d, &["frontend", &unknown], 1, "unknown key \"rated_mamps\"");
    let negative = write(
        "negative.toml",
        example.replace("r = \"10k\"", "r = \"-10k\""),
    );
    check_failure(
        d,
        &["frontend", &negative],
        1,
        "a resistance must be above 0 Ω",
    );
    let missing = write("missing.toml", example.replace("forward_v = 1.35", ""));
    check_failure(
        d,
        &["frontend", &missing],
        1,
        "give led.forward_v in the circuit file or --led-vf",
    );
    check_failure(
        d,
        &["frontend", "no-such-file.toml"],
        1,
        "cannot read the circuit file no-such-file.toml",
    );
    let not_toml = write("broken.toml", "[led\n".to_owned());
    check_failure(d, &["frontend", &not_toml], 1, "line 1");
    check_failure(
        d,
        &["frontend", EXAMPLE, "--supply", "1"],
        1,
        "the LED cannot light",
    );
    check_failure(
        d,
        &["frontend", EXAMPLE, "--rate", "8"],
        2,
        "'--rate <HZ>': the sample rate must be between 25 and 1000 Hz, not 8 Hz",
    );

    // From the command line alone: usage errors.
    check_failure(
        d,
        &["frontend", "--supply", "5"],
        2,
        "missing the LED forward voltage",
    );
    check_failure(
        d,
        &["frontend", "--led-r", "-470"],
        2,
        "a resistance must be above 0 Ω",
    );
    check_failure(
        d,
        &["frontend", "--stage", "lowpass,r=1k"],
        2,
        "lowpass missing c",
    );
    check_failure(
        d,
        &["frontend", "--stage", "bandpass"],
        2,
        "\"bandpass\" is not one of highpass",
    );
    check_failure(
        d,
        &["frontend", "--tia", "10k", "--phototransistor", "1k"],
        2,
        "cannot be used with",
    );
    check_failure(
        d,
        &["frontend", "--rails", "3:1"],
        2,
        "must be below the high one",
    );
    check_failure(
        d,
        &[
            "frontend",
            EXAMPLE,
            "--led-r",
            "100,220",
            "--led-parallel",
            "2",
        ],
        2,
        "--led-parallel goes with one --led-r value",
    );
}
