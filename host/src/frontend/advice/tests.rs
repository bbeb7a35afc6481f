//! Advice on circuit files whose right answer is worked out by hand.

use super::*;
use crate::frontend::Draft;

fn resolve(toml: &str) -> Circuit {
    Draft::from_toml(toml).unwrap().resolve().unwrap()
}

fn fingerclip() -> Circuit {
    resolve(include_str!(
        "../../../../examples/frontend-fingerclip.toml"
    ))
}

fn measured(dc_share: f64, pulse_share: f64) -> Measured {
    Measured::levels(dc_share, pulse_share)
}

#[test]
fn a_small_pulse_in_the_example_asks_for_more_stage_gain() {
    // The example: LED (3.3 − 1.35) V / 100 Ω = 19.5 mA, rated 50 mA; TIA
    // 1 MΩ from 3.0 V with 2 µA steady, so 1.0 V; AC coupling; gain
    // 1 + 22k/1k = 23. A pulse of 0.6 % wants ×1/0.6 = 1.67 for 1 %.
    // - LED 100 Ω → 56 Ω (the nearest E12 value that gives 1 %:
    //   100/68 = 1.47 gives 0.88 %, 100/56 = 1.79 gives 1.07 %) also
    //   raises the steady 2 µA to 3.57 µA: TIA at 3.0 − 3.57 = −0.57 V,
    //   below its 0 V rail: refused.
    // - Rf 1 MΩ → 1.8 MΩ (1.5 MΩ gives 0.9 %): 3.0 − 2 µA × 1.8 MΩ
    //   = −0.6 V: refused.
    // - stage 2's rf 22k → 39k: gain 40 (33k gives 34, 0.89 %), pulse
    //   0.6 % × 40/23 = 1.04 %, 3.3 V × 1.04 % = 34 mV about the 1.65 V
    //   bias: 3.3 − 1.65 − 0.017 = 1.63 V of headroom (Ohm's law and the
    //   non-inverting gain, common practice).
    let c = fingerclip();
    let a = advise(&c, &measured(0.5, 0.006)).unwrap();
    assert_eq!(a.problems, [Problem::PulseSmall(0.006)]);
    assert_eq!(a.suggestions.len(), 1, "{a:?}");
    let s = &a.suggestions[0];
    assert_eq!(
        (s.part.as_str(), s.from_ohm, s.to_ohm),
        ("stage 2 feedback resistor", 22e3, 39e3)
    );
    assert!((s.pulse_share - 0.006 * 40.0 / 23.0).abs() < 1e-12, "{s:?}");
    assert!((s.dc_share - 0.5).abs() < 1e-12);
    assert!((s.led_ma - 19.5).abs() < 1e-9);
    let half = 3.3 * 0.006 * 40.0 / 23.0 / 2.0;
    assert!((s.headroom_v - (3.3 - 1.65 - half)).abs() < 1e-9, "{s:?}");
    assert_eq!(
        a.lines(),
        ["pulse is 0.6 % of the ADC range: stage 2 feedback resistor 22 kΩ → 39 kΩ gives a pulse \
          of 1.0 % and DC at 50 %, LED 19.5 mA, and keeps the stage 2 output 1.63 V inside its rails"]
    );
    let refused: Vec<(&str, f64)> = a
        .refused
        .iter()
        .map(|r| (r.part.as_str(), r.to_ohm))
        .collect();
    assert_eq!(
        refused,
        [("LED resistor", 56.0), ("feedback resistor", 1.8e6)]
    );
    assert!(a
        .refused
        .iter()
        .all(|r| r.reason.starts_with("the detector output would go")));
}

/// An AC-coupled 100 kΩ TIA from 3.0 V, 1 µA steady; LED (3.3 − 1.3) V
/// over 100 Ω = 20 mA, rated `rated`.
fn tia_100k(rated: &str) -> Circuit {
    resolve(&format!(
        r#"
        [led]
        supply_v = 3.3
        forward_v = 1.3
        resistor = "100"
        {rated}
        [detector]
        kind = "photodiode"
        feedback = "100k"
        reference_v = 3.0
        [[stage]]
        kind = "highpass"
        r = "100k"
        c = "4.7u"
        [adc]
        reference_v = 3.3
        bias_v = 1.65
        [pulse]
        change_ua = 0.1
        dc_ua = 1.0
        [rails]
        low_v = 0.0
        high_v = 3.3
        "#
    ))
}

#[test]
fn a_brighter_led_beyond_its_rating_is_refused() {
    // 0.5 % wants ×2. LED 100 Ω → 47 Ω (56 Ω gives 100/56 × 0.5 = 0.89 %):
    // 2 V / 47 Ω = 42.6 mA, above the rated 30 mA: refused. Rf 100k →
    // 220k (180k gives 0.9 %): 1.1 %; TIA at 3.0 − 1 µA × 220 kΩ = 2.78 V,
    // pulse 3.3 V × 1.1 % = 36.3 mV about it: 3.3 − 2.78 − 0.01815 =
    // 0.502 V to the upper rail (Ohm's law).
    let a = advise(&tia_100k("rated_ma = 30"), &measured(0.5, 0.005)).unwrap();
    assert_eq!(a.refused.len(), 1, "{a:?}");
    assert_eq!(
        (a.refused[0].part.as_str(), a.refused[0].to_ohm),
        ("LED resistor", 47.0)
    );
    assert_eq!(
        a.refused[0].reason,
        "LED current 42.6 mA is above its rated 30 mA"
    );
    assert_eq!(a.suggestions.len(), 1, "{a:?}");
    let s = &a.suggestions[0];
    assert_eq!((s.part.as_str(), s.to_ohm), ("feedback resistor", 220e3));
    assert!((s.pulse_share - 0.011).abs() < 1e-12 && (s.led_ma - 20.0).abs() < 1e-9);
    assert!(
        (s.headroom_v - (3.3 - 2.78 - 0.01815)).abs() < 1e-9,
        "{s:?}"
    );
    // No rating, the board at a quarter of full drive and capped at half:
    // 0.5 × 20 mA = 10 mA is the most it drives now; 47 Ω runs 0.25 ×
    // 2 V / 47 Ω = 10.6 mA: refused. 220k keeps 0.25 × 20 = 5 mA.
    let mut m = measured(0.5, 0.005);
    (m.led_drive, m.max_drive) = (Some(0.25), Some(0.5));
    let a = advise(&tia_100k(""), &m).unwrap();
    assert_eq!(
        a.refused[0].reason,
        "LED current 10.6 mA is above the board's most drive 10 mA"
    );
    assert_eq!(a.suggestions[0].to_ohm, 220e3);
    assert!((a.suggestions[0].led_ma - 5.0).abs() < 1e-9);
}

#[test]
fn no_single_change_gives_a_plain_note() {
    // 0.1 % wants ×10. LED 100 Ω → 10 Ω: 2 V / 10 Ω = 200 mA, over the
    // rated 30 mA. Rf 100k → 1 MΩ with 3 µA steady: 3.0 − 3 µA × 1 MΩ =
    // 0 V, the pulse (3.3 V × 1 % = 33 mV) below the 0 V rail. The AC
    // coupling has no resistor that sets gain: nothing is left.
    let mut c = tia_100k("rated_ma = 30");
    c.pulse.dc_ua = Some(3.0);
    let a = advise(&c, &measured(0.5, 0.001)).unwrap();
    assert!(a.suggestions.is_empty(), "{a:?}");
    assert_eq!(a.refused.len(), 2, "{a:?}");
    assert_eq!(
        a.refused[0].reason,
        "LED current 200 mA is above its rated 30 mA"
    );
    assert!(a.refused[1]
        .reason
        .starts_with("the detector output would go"));
    assert_eq!(
        a.lines(),
        ["pulse is 0.1 % of the ADC range: no single part change fixes it within the rails and the LED's rating"]
    );
}

/// 10 kΩ at a phototransistor's emitter, straight into a 3.3 V ADC; LED
/// (3.3 − 1.35) V / 100 Ω = 19.5 mA, rated 50 mA.
fn phototransistor() -> Circuit {
    resolve(
        r#"
        [led]
        supply_v = 3.3
        forward_v = 1.35
        resistor = "100"
        rated_ma = 50
        [detector]
        kind = "phototransistor"
        load = "10k"
        load_at = "emitter"
        [adc]
        reference_v = 3.3
        [rails]
        low_v = 0.0
        high_v = 3.3
        "#,
    )
}

#[test]
fn a_high_dc_on_a_dc_coupled_phototransistor_asks_for_less_light() {
    // 10 kΩ at the emitter, straight into the ADC: 0 V dark, 0.01 V per µA.
    // DC at 92 % is 3.036 V = 303.6 µA; the pulse 3 % is 9.9 µA. LED
    // 100 Ω → 120 Ω: ×100/120, DC 76.7 %, pulse 2.5 %, 1.95 V / 120 Ω
    // = 16.25 mA. Load 10k → 8.2k (12k, nearer, raises the DC): ×0.82,
    // DC 75.4 %, pulse 2.46 %.
    let c = phototransistor();
    let a = advise(&c, &measured(0.92, 0.03)).unwrap();
    assert!(
        matches!(a.problems[..], [Problem::DcHigh(s)] if (s - 0.92).abs() < 1e-12),
        "{a:?}"
    );
    let got: Vec<(&str, f64)> = a
        .suggestions
        .iter()
        .map(|s| (s.part.as_str(), s.to_ohm))
        .collect();
    assert_eq!(got, [("LED resistor", 120.0), ("load resistor", 8.2e3)]);
    let led = &a.suggestions[0];
    assert!((led.dc_share - 0.92 / 1.2).abs() < 1e-9 && (led.pulse_share - 0.025).abs() < 1e-9);
    assert!((led.led_ma - 16.25).abs() < 1e-9);
    let load = &a.suggestions[1];
    assert!((load.dc_share - 0.92 * 0.82).abs() < 1e-9);
    assert!(a.lines()[0].starts_with("DC sits at 92 % of range: LED resistor 100 Ω → 120 Ω gives a pulse of 2.5 % and DC at 77 %"), "{:?}", a.lines());
}

#[test]
fn an_led_already_over_its_rating_blocks_every_change() {
    // The example's 19.5 mA against a rating of 15 mA: the stage 2 change
    // that fixes the pulse would keep the LED over its rating, so it is
    // refused too; only less LED current is allowed, and that shrinks
    // the pulse.
    let mut c = fingerclip();
    c.led.rated_ma = Some(15.0);
    let a = advise(&c, &measured(0.5, 0.006)).unwrap();
    assert!(a.suggestions.is_empty(), "{a:?}");
    assert!(a
        .refused
        .iter()
        .any(|r| r.part == "stage 2 feedback resistor"
            && r.reason == "LED current 19.5 mA is above its rated 15 mA"));
}

#[test]
fn levels_in_range_need_nothing() {
    let a = advise(&fingerclip(), &measured(0.5, 0.02)).unwrap();
    assert!(a.problems.is_empty() && a.suggestions.is_empty() && a.refused.is_empty());
    assert!(a.lines().is_empty());
}

#[test]
fn inputs_that_do_not_fit_name_the_parameter() {
    let c = fingerclip();
    assert_eq!(
        advise(&c, &measured(1.2, 0.01)),
        Err(AdviceError::Share {
            parameter: "dc_share",
            value: 1.2
        })
    );
    assert_eq!(
        advise(&c, &measured(0.5, f64::NAN))
            .unwrap_err()
            .to_string(),
        "pulse_share is NaN: it must be a share of the ADC range, 0 to 1"
    );
    let mut m = measured(0.5, 0.01);
    m.max_drive = Some(0.0);
    assert_eq!(
        advise(&c, &m),
        Err(AdviceError::Drive {
            parameter: "max_drive",
            value: 0.0
        })
    );
    // AC-coupled to a 1.65 V bias: 50 %; 80 % cannot come from it.
    let e = advise(&c, &measured(0.8, 0.01)).unwrap_err();
    assert!(
        matches!(e, AdviceError::DcMismatch { expected, .. } if (expected - 0.5).abs() < 1e-12),
        "{e}"
    );
}

#[test]
fn a_clipped_pulse_asks_for_less_light() {
    // The DC-coupled 10 kΩ phototransistor: DC 60 %, a measured pulse of
    // 30 % but 2 % of samples clipped, so the pulse is taken as reaching
    // the nearer rail: 2 × (1 − 0.6) = 80 %, from 20 % to 100 %. LED
    // 100 Ω → 120 Ω scales it by 100/120: 66.7 % about a DC of 50 %,
    // 16.7 % to 83.3 %, inside 5 % of both ends.
    let c = phototransistor();
    let mut m = measured(0.6, 0.3);
    m.clipped_share = 0.02;
    let a = advise(&c, &m).unwrap();
    assert!(
        matches!(a.problems[..], [Problem::PulseLarge(s)] if (s - 0.8).abs() < 1e-12),
        "{a:?}"
    );
    let s = &a.suggestions[0];
    assert_eq!((s.part.as_str(), s.to_ohm), ("LED resistor", 120.0));
    assert!((s.pulse_share - 0.8 / 1.2).abs() < 1e-9 && (s.dc_share - 0.5).abs() < 1e-9);
    assert!(a.lines()[0].starts_with(
        "pulse is 80 % of the ADC range and reaches within 5.0 % of a rail: LED resistor"
    ));
    // Unclipped, the same 30 % about 60 % (45 % to 75 %) is fine.
    assert!(advise(&c, &measured(0.6, 0.3)).unwrap().problems.is_empty());
}
