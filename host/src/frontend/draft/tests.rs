use super::*;
use crate::frontend::circuit::{AmpStage, Detector};

const WHOLE: &str = r#"
name = "test clip"
[led]
supply_v = 5
forward_v = 1.7
resistor = "470"
parallel = 3
rated_ma = 20
[detector]
kind = "photodiode"
feedback = "10k"
[[stage]]
kind = "buffer"
[[stage]]
kind = "inverting"
rin = "1k"
rf = "470k"
cf = "100n"
[adc]
bits = 10
reference_v = 3.0
[pulse]
change_ua = 0.1
"#;

fn resolve(text: &str) -> Result<Circuit, FrontendError> {
    Draft::from_toml(text).expect("valid TOML").resolve()
}

#[test]
fn a_whole_file_resolves_with_defaults_filled_in() {
    let c = resolve(WHOLE).unwrap();
    assert_eq!(c.name.as_deref(), Some("test clip"));
    assert_eq!(c.led.resistors_ohm, vec![470.0; 3]);
    assert_eq!(c.led.rated_ma, Some(20.0));
    assert_eq!(
        c.detector,
        Detector::Photodiode {
            feedback_ohm: 10e3,
            feedback_f: None
        }
    );
    assert_eq!(c.stages.len(), 2);
    assert_eq!(c.stages[1].gain(), -470.0);
    assert_eq!(c.adc.bits, 10);
    assert_eq!(c.adc.bias_v, 1.5);
    assert_eq!(c.adc.rate_hz, None);
    assert_eq!(c.rails.low_v, 0.0);
    assert_eq!(c.rails.high_v, 5.0);
    assert_eq!(c.pulse.change_ua, Some(0.1));
}

#[test]
fn a_list_of_resistors_is_in_parallel() {
    let text = WHOLE.replace(
        "resistor = \"470\"\nparallel = 3",
        "resistor = [\"470\", 1000, \"2k2\"]",
    );
    let c = resolve(&text).unwrap();
    assert_eq!(c.led.resistors_ohm, vec![470.0, 1000.0, 2200.0]);
    let both = WHOLE.replace("resistor = \"470\"", "resistor = [\"470\", \"1k\"]");
    let e = resolve(&both).unwrap_err();
    assert!(
        e.to_string()
            .starts_with("led.parallel goes with one resistor value"),
        "{e}"
    );
}

#[test]
fn an_unknown_key_names_itself_and_its_line() {
    let text = WHOLE.replace("rated_ma = 20", "rated_mA = 20");
    let e = Draft::from_toml(&text).unwrap_err().to_string();
    assert!(
        e.starts_with("line 8 (`rated_mA = 20`): unknown key \"rated_mA\""),
        "{e}"
    );
    assert!(!e.contains('\n'));
    let stage = WHOLE.replace("cf = \"100n\"", "c = \"100n\"");
    let e = resolve(&stage).unwrap_err();
    assert_eq!(
        e.to_string(),
        "stage 2 (inverting) does not take c (it takes rin, rf, cf, cin, rails)"
    );
}

#[test]
fn a_negative_resistor_is_refused_where_it_stands() {
    let text = WHOLE.replace("feedback = \"10k\"", "feedback = -10000");
    let e = Draft::from_toml(&text).unwrap_err();
    assert_eq!(e.line, Some(11));
    assert_eq!(
        e.to_string(),
        "line 11 (`feedback = -10000`): a resistance must be above 0 Ω, not -10000"
    );
}

#[test]
fn missing_values_name_the_key_and_the_option() {
    let text = WHOLE.replace("forward_v = 1.7\n", "");
    let e = resolve(&text).unwrap_err();
    assert_eq!(
        e.to_string(),
        "missing the LED forward voltage: give led.forward_v in the circuit file or --led-vf"
    );
    let start = WHOLE.find("[detector]").unwrap();
    let end = WHOLE.find("[[stage]]").unwrap();
    let no_detector = format!("{}{}", &WHOLE[..start], &WHOLE[end..]);
    let e = resolve(&no_detector).unwrap_err();
    assert!(matches!(
        e,
        FrontendError::Missing {
            key: "[detector]",
            ..
        }
    ));
    let no_rf = WHOLE.replace("rf = \"470k\"\n", "");
    assert_eq!(
        resolve(&no_rf).unwrap_err().to_string(),
        "stage 2 (inverting) missing rf"
    );
}

#[test]
fn values_out_of_range_are_refused() {
    let cases = [
        (
            "supply_v = 5",
            "supply_v = -5",
            "led.supply_v must be above 0 V and at most 100 V, not -5",
        ),
        (
            "supply_v = 5",
            "supply_v = 1e308",
            "led.supply_v must be above 0 V and at most 100 V, not 1e308",
        ),
        (
            "reference_v = 3.0",
            "reference_v = 1e-320",
            "adc.reference_v must be at least 0.001 V and at most 100 V",
        ),
        (
            "reference_v = 3.0",
            "reference_v = 3.0\nrate_hz = 2000",
            "adc.rate_hz: the sample rate must be between 25 and 1000 Hz, not 2000 Hz",
        ),
        (
            "reference_v = 3.0",
            "reference_v = 3.0\nrate_hz = 5",
            "adc.rate_hz: the sample rate must be between 25 and 1000 Hz, not 5 Hz",
        ),
        (
            "parallel = 3",
            "parallel = 4000000000",
            "led.parallel must be 1 to 100, not 4000000000",
        ),
        ("bits = 10", "bits = 0", "adc.bits must be 1 to 32, not 0"),
        (
            "parallel = 3",
            "parallel = 0",
            "led.parallel must be 1 to 100, not 0",
        ),
        (
            "change_ua = 0.1",
            "change_ua = 0",
            "pulse.change_ua must be above 0 µA and at most 100000 µA, not 0",
        ),
        (
            "change_ua = 0.1",
            "change_ua = 0.1\ndc_ua = -1",
            "pulse.dc_ua must be at least 0 µA and at most 100000 µA, not -1",
        ),
    ];
    for (from, to, expect) in cases {
        let e = resolve(&WHOLE.replace(from, to)).unwrap_err().to_string();
        assert!(e.contains(expect), "{to}: {e}");
    }
    // A gain of 1e-320 is refused as the file is read, at its line.
    let tiny = Draft::from_toml(&WHOLE.replace("rf = \"470k\"", "rf = \"1e-320\""));
    assert_eq!(
        tiny.unwrap_err().to_string(),
        "line 17 (`rf = \"1e-320\"`): a resistance must be between 1 mΩ and 1 TΩ, not 1e-320 Ω"
    );
    let dim = WHOLE.replace("supply_v = 5", "supply_v = 1.5");
    assert!(matches!(
        resolve(&dim).unwrap_err(),
        FrontendError::LedOff {
            supply_v: 1.5,
            forward_v: 1.7
        }
    ));
    let rails = format!("{WHOLE}[rails]\nlow_v = 3\nhigh_v = 1\n");
    assert!(resolve(&rails)
        .unwrap_err()
        .to_string()
        .starts_with("rails low (3 V) must be below high (1 V)"));
}

#[test]
fn each_amplifier_has_its_own_rails_or_the_boards() {
    let text = WHOLE
        .replace(
            "feedback = \"10k\"",
            "feedback = \"10k\"\nreference_v = 0.5\nrails = [0, 3.3]",
        )
        .replace("kind = \"buffer\"", "kind = \"buffer\"\nrails = \"-5:5\"");
    let c = resolve(&text).unwrap();
    let s = &c.supplies;
    assert_eq!((s.detector.low_v, s.detector.high_v), (0.0, 3.3));
    assert_eq!((s.reference_v, s.reference_assumed), (0.5, false));
    let buffer = s.stages[0].unwrap();
    assert_eq!((buffer.low_v, buffer.high_v), (-5.0, 5.0));
    // The inverting stage has none of its own: the board's, 0 V to the
    // LED supply.
    let inverting = s.stages[1].unwrap();
    assert_eq!((inverting.low_v, inverting.high_v), (0.0, 5.0));
    // Without a reference, a TIA's is the bias.
    let c = resolve(WHOLE).unwrap();
    assert_eq!(
        (c.supplies.reference_v, c.supplies.reference_assumed),
        (1.5, true)
    );

    let outside = WHOLE.replace("feedback = \"10k\"", "feedback = \"10k\"\nreference_v = 7");
    assert_eq!(
        resolve(&outside).unwrap_err().to_string(),
        "detector.reference_v (--tia-ref) must lie within the detector's rails, 0 V to 5 V, not 7 V"
    );
    let passive = WHOLE.replace(
        "kind = \"buffer\"",
        "kind = \"lowpass\"\nr = \"1k\"\nc = \"1u\"\nrails = [0, 5]",
    );
    let e = resolve(&passive).unwrap_err().to_string();
    assert_eq!(e, "stage 1 (lowpass) does not take rails (it takes r, c)");
    let reversed = WHOLE.replace("kind = \"buffer\"", "kind = \"buffer\"\nrails = [5, 0]");
    let e = resolve(&reversed).unwrap_err().to_string();
    assert_eq!(e, "stage 1 rails low (5 V) must be below high (0 V)");
    let huge = WHOLE.replace("kind = \"buffer\"", "kind = \"buffer\"\nrails = [0, 1e308]");
    let e = resolve(&huge).unwrap_err().to_string();
    assert!(
        e.starts_with("stage 1 rails must be at least -100 V and at most 100 V"),
        "{e}"
    );
}

#[test]
fn a_phototransistor_takes_only_its_own_keys() {
    let pt = WHOLE.replace(
        "kind = \"photodiode\"\nfeedback = \"10k\"",
        "kind = \"phototransistor\"\nload = \"4k7\"\nload_at = \"collector\"",
    );
    let c = resolve(&pt).unwrap();
    assert_eq!(c.detector.gain_v_per_a(), -4700.0);
    let mixed = WHOLE.replace("kind = \"photodiode\"", "kind = \"phototransistor\"");
    assert_eq!(
        resolve(&mixed).unwrap_err().to_string(),
        "detector.feedback is not for a phototransistor (it takes load, load_cap, load_at, rails)"
    );
}

#[test]
fn options_override_the_file() {
    let file = Draft::from_toml(WHOLE).unwrap();
    let over = Draft {
        led: LedDraft {
            supply_v: Some(3.3),
            resistor: Some(Resistors(vec![100.0])),
            ..LedDraft::default()
        },
        stages: vec![StageDraft {
            kind: StageKind::Buffer,
            r: None,
            c: None,
            rin: None,
            rf: None,
            cf: None,
            cin: None,
            rails: None,
        }],
        ..Draft::default()
    };
    let c = file.overlaid(over).resolve().unwrap();
    assert_eq!(c.led.supply_v, 3.3);
    // A new resistor does not inherit the file's count in parallel.
    assert_eq!(c.led.resistors_ohm, vec![100.0]);
    assert_eq!(c.stages, vec![AmpStage::Buffer]);
    assert_eq!(c.led.forward_v, 1.7);
    assert_eq!(c.adc.bits, 10);
}

#[test]
fn bad_toml_is_one_line() {
    let e = Draft::from_toml("[led\nsupply_v = 5")
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("line 1"), "{e}");
    assert!(!e.contains('\n'), "{e}");
}
