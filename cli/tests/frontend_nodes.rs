//! `plethwire frontend` checks every node against its own rails: the
//! transimpedance output, each gain stage, then the ADC input; reports the
//! photocurrent the TIA takes; keeps its sample-rate advice within the
//! pipeline's range; and refuses values no front end has, in one line that
//! names the option. Voltages follow from Ohm's law (common practice).

mod common;

use common::{plethwire, stdout_of_success};
use serde_json::Value;
use std::path::Path;

const EXAMPLE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/../examples/frontend-fingerclip.toml"
);

/// An LED of 5 V − 1.7 V over 470 Ω and a 10 kΩ TIA.
const DRIVE: [&str; 8] = [
    "--supply", "5", "--led-vf", "1.7", "--led-r", "470", "--tia", "10k",
];

fn run_json(dir: &Path, args: &[&str]) -> Value {
    let mut all = vec!["frontend"];
    all.extend(args);
    all.extend(["--no-plot", "--json"]);
    serde_json::from_str(&stdout_of_success(&plethwire(dir, &all))).expect("JSON")
}

fn run_text(dir: &Path, args: &[&str]) -> String {
    let mut all = vec!["frontend"];
    all.extend(args);
    all.push("--no-plot");
    stdout_of_success(&plethwire(dir, &all))
}

/// `(level, node, message)` of every finding.
fn findings(r: &Value) -> Vec<(String, String, String)> {
    r["findings"]
        .as_array()
        .expect("a findings list")
        .iter()
        .map(|f| {
            let s = |k: &str| {
                f[k].as_str()
                    .unwrap_or_else(|| panic!("{k} in {f}"))
                    .to_owned()
            };
            (s("level"), s("node"), s("message"))
        })
        .collect()
}

fn errors_at(r: &Value, node: &str) -> Vec<String> {
    findings(r)
        .into_iter()
        .filter(|(l, n, _)| l == "error" && n == node)
        .map(|(_, _, m)| m)
        .collect()
}

#[test]
fn fifty_microamps_into_a_megohm_saturates_the_tia() {
    let dir = tempfile::tempdir().unwrap();
    // The example's 1 MΩ TIA from its 3 V reference: 50 µA would need
    // 3 − 50 = −47 V on rails of 0 V to 3.3 V.
    let r = run_json(dir.path(), &[EXAMPLE, "--dc-ua", "50"]);
    let tia = &r["nodes"][0];
    assert_eq!(tia["node"], "detector output");
    assert!(
        (tia["steady_v"].as_f64().unwrap() + 47.0).abs() < 1e-9,
        "{tia}"
    );
    assert_eq!(tia["saturates"], true);
    let e = errors_at(&r, "detector output");
    assert_eq!(e.len(), 1, "{:?}", findings(&r));
    assert!(e[0].starts_with("saturates: detector output"), "{}", e[0]);
    assert!(e[0].contains("beyond its rails 0 V to 3.3 V"), "{}", e[0]);
    // The TIA takes (3 V − 0 V) / 1 MΩ = 3 µA.
    assert!((r["input_range"]["most_ua"].as_f64().unwrap() - 3.0).abs() < 1e-9);
    assert!(e[0].contains("takes 0 to 3 µA of photocurrent"), "{}", e[0]);

    let text = run_text(dir.path(), &[EXAMPLE, "--dc-ua", "50"]);
    assert!(
        text.contains("\nErrors\n  - ERROR [detector output] saturates"),
        "{text}"
    );
    assert!(text.contains("1 node SATURATES"), "{text}");
    assert!(
        !text.contains("inside the ADC range and the rails"),
        "{text}"
    );
    // The cautions stay.
    for needle in [
        "not a medical device",
        "IEC 62471",
        "IEC 60601-1",
        "USB isolator",
    ] {
        assert!(text.contains(needle), "no {needle:?}");
    }
}

#[test]
fn the_example_without_its_reference_puts_the_tia_below_its_rail() {
    let dir = tempfile::tempdir().unwrap();
    // Its reference at the 1.65 V bias: 2 µA × 1 MΩ below it is −0.35 V.
    let example = std::fs::read_to_string(EXAMPLE).unwrap();
    let at_bias: String = example
        .lines()
        .filter(|l| !l.starts_with("reference_v"))
        .map(|l| format!("{l}\n"))
        .collect();
    let path = dir.path().join("at-bias.toml");
    std::fs::write(&path, at_bias).unwrap();
    let r = run_json(dir.path(), &[path.to_str().unwrap()]);
    assert!((r["nodes"][0]["steady_v"].as_f64().unwrap() + 0.35).abs() < 1e-9);
    assert_eq!(
        errors_at(&r, "detector output").len(),
        1,
        "{:?}",
        findings(&r)
    );
    // The ADC, after the AC coupling, does not see it.
    assert_eq!(r["swing"]["adc_clips"], false);
    // The example as shipped: no errors, the TIA at 1 V.
    let r = run_json(dir.path(), &[EXAMPLE]);
    assert!(
        findings(&r).iter().all(|(l, _, _)| l != "error"),
        "{:?}",
        findings(&r)
    );
    assert!((r["nodes"][0]["steady_v"].as_f64().unwrap() - 1.0).abs() < 1e-9);
}

#[test]
fn each_gain_stage_has_its_rails_and_is_checked_against_them() {
    let dir = tempfile::tempdir().unwrap();
    // 10 kΩ TIA at the 1.65 V bias, 2 µA steady: 1.63 V; a gain of −47
    // puts the next stage at 1.65 + 47 × 0.02 = 2.59 V (AC-free chain).
    let mut base = DRIVE.to_vec();
    base.extend(["--dc-ua", "2", "--pulse-ua", "0.01"]);
    let mut args = base.to_vec();
    args.extend(["--stage", "inverting,rin=1k,rf=47k"]);
    let r = run_json(dir.path(), &args);
    assert!((r["nodes"][1]["steady_v"].as_f64().unwrap() - 2.59).abs() < 1e-9);
    assert!(errors_at(&r, "stage 1 output").is_empty());
    // The same stage on rails of 0 V to 2.5 V of its own saturates.
    let mut args = base.to_vec();
    args.extend(["--stage", "inverting,rin=1k,rf=47k,rails=0:2.5"]);
    let r = run_json(dir.path(), &args);
    assert_eq!(r["circuit"]["supplies"]["stages"][0]["high_v"], 2.5);
    let e = errors_at(&r, "stage 1 output");
    assert_eq!(e.len(), 1, "{:?}", findings(&r));
    assert!(e[0].contains("beyond its rails 0 V to 2.5 V"), "{}", e[0]);
    // And the TIA on rails of its own, too narrow for its 1.65 V bias.
    let mut args = base.to_vec();
    args.extend(["--detector-rails", "0:1.2", "--tia-ref", "1.1"]);
    let r = run_json(dir.path(), &args);
    assert!((r["input_range"]["most_ua"].as_f64().unwrap() - 110.0).abs() < 1e-9);
    assert!(
        errors_at(&r, "detector output").is_empty(),
        "{:?}",
        findings(&r)
    );
}

#[test]
fn the_rate_advice_stays_within_the_pipeline_range() {
    let dir = tempfile::tempdir().unwrap();
    // Cf 3.6 nF across 22 kΩ: a pole at 2 kHz and no low-pass; the rule's
    // 10 × 2 kHz is held at the pipeline's 1000 Hz.
    let mut args = DRIVE.to_vec();
    args.extend([
        "--stage",
        "noninverting,rin=1k,rf=22k,cf=3.6n",
        "--pulse-ua",
        "1",
    ]);
    let r = run_json(dir.path(), &args);
    assert_eq!(r["sampling"]["recommended_hz"], 1000.0);
    assert_eq!(r["sampling"]["used_hz"], 1000.0);
    assert!(findings(&r).iter().any(|(l, n, m)| l == "warning"
        && n == "sampling"
        && m.contains("above the 1000 Hz the pipeline takes")));
}

/// Expect a failure with `code` and one line holding `needle`.
fn refused(args: &[&str], code: i32, needle: &str) {
    let dir = tempfile::tempdir().unwrap();
    let mut all = vec!["frontend"];
    all.extend(args);
    let out = plethwire(dir.path(), &all);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(code), "{args:?}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    assert!(
        stderr.contains(needle),
        "{args:?}: {stderr} lacks {needle:?}"
    );
    assert!(!stderr.contains("inf"), "{stderr}");
    assert!(out.stdout.is_empty());
}

#[test]
fn nonsense_values_are_refused_naming_the_option() {
    let cases: [(&str, &str, i32, &str); 10] = [
        (
            "--supply",
            "1e308",
            2,
            "'--supply <V>': must be above 0 V and at most 100 V, not 1e308",
        ),
        (
            "--stage",
            "noninverting,rin=1k,rf=1e-320",
            2,
            "a resistance must be between 1 mΩ and 1 TΩ, not 1e-320 Ω",
        ),
        (
            "--tia",
            "0",
            2,
            "'--tia <RF>': a resistance must be above 0 Ω",
        ),
        ("--led-r", "-5", 2, "'--led-r <OHMS[,OHMS...]>'"),
        ("--adc-ref", "1e-320", 2, "'--adc-ref <V>'"),
        ("--led-parallel", "4000000000", 2, "'--led-parallel <N>'"),
        ("--rails", "0:1e308", 2, "'--rails <LOW:HIGH>'"),
        ("--pulse-ua", "1e300", 2, "'--pulse-ua <UA>'"),
        (
            "--tia-ref",
            "9",
            1,
            "detector.reference_v (--tia-ref) must lie within the detector's rails, 0 V to 3.3 V, not 9 V",
        ),
        (
            "--rate",
            "2000",
            2,
            "'--rate <HZ>': the sample rate must be between 25 and 1000 Hz, not 2000 Hz",
        ),
    ];
    for (option, value, code, needle) in cases {
        refused(&[EXAMPLE, option, value], code, needle);
    }
    // The same values in a file name their key.
    let dir = tempfile::tempdir().unwrap();
    let example = std::fs::read_to_string(EXAMPLE).unwrap();
    for (from, to, needle) in [
        (
            "supply_v = 3.3",
            "supply_v = 1e308",
            "led.supply_v must be above 0 V and at most 100 V, not 1e308",
        ),
        (
            "# rate_hz = 200",
            "rate_hz = 5",
            "adc.rate_hz: the sample rate must be between 25 and 1000 Hz, not 5 Hz",
        ),
        (
            "rf = \"22k\"",
            "rf = \"1e-320\"",
            "a resistance must be between 1 mΩ and 1 TΩ, not 1e-320 Ω",
        ),
        (
            "r = \"10k\"",
            "r = \"0\"",
            "a resistance must be above 0 Ω, not 0",
        ),
    ] {
        assert!(example.contains(from), "{from}");
        let path = dir.path().join("bad.toml");
        std::fs::write(&path, example.replace(from, to)).unwrap();
        refused(&[path.to_str().unwrap()], 1, needle);
    }
}
