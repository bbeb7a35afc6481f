//! The live checks on made-up sample streams (scenarios of our own: a
//! board on a bench with a known pulse), and the advice on circuit files
//! whose right answer is worked out by hand here.

use super::*;
use crate::bringup::spectrum::GOERTZEL_STEPS;
use crate::bringup::Verdict;
use crate::frontend::Draft;
use std::f64::consts::PI;

const RATE: f64 = 250.0;

/// A real board: `bits`-bit ADC, rails in codes, 250 Hz.
fn bench(bits: u8) -> BoardInfo {
    BoardInfo {
        rate_hz: Some(RATE),
        rails: Some((0.0, 2f64.powi(i32::from(bits)) - 1.0)),
        adc_bits: Some(bits),
    }
}

/// `seconds` of `f(t)` fed in blocks of 16 from sample `from`; every
/// report given back.
fn feed(c: &mut LiveChecks, from: u64, seconds: f64, f: &dyn Fn(f64) -> f64) -> Vec<Report> {
    let n = (seconds * RATE) as u64;
    let mut out = Vec::new();
    for b in (from..from + n).step_by(16) {
        let raw: Vec<f32> = (b..b + 16).map(|i| f(i as f64 / RATE) as f32).collect();
        out.extend(c.samples(b as i64, &raw, 1, RATE));
    }
    out
}

/// A pulse of `pp` peak to peak at 1.2 Hz on `dc`.
fn pulse(dc: f64, pp: f64) -> impl Fn(f64) -> f64 {
    move |t| dc + pp / 2.0 * (2.0 * PI * 1.2 * t).sin()
}

fn check<'a>(r: &'a Report, name: &str) -> &'a CheckLine {
    r.checks.iter().find(|c| c.name == name).unwrap()
}

fn circuit(toml: &str) -> Circuit {
    Draft::from_toml(toml).unwrap().resolve().unwrap()
}

/// An AC-coupled 100 kΩ TIA from 3.0 V, 1 µA steady, ADC 12 bits at
/// 3.3 V biased at 1.65 V (50 %); LED (3.3 − 1.3) V / 100 Ω = 20 mA at
/// full drive (Ohm's law).
fn tia_100k(rated: &str) -> Circuit {
    circuit(&format!(
        "[led]\nsupply_v = 3.3\nforward_v = 1.3\nresistor = \"100\"\n{rated}\n\
         [detector]\nkind = \"photodiode\"\nfeedback = \"100k\"\nreference_v = 3.0\n\
         [[stage]]\nkind = \"highpass\"\nr = \"100k\"\nc = \"4.7u\"\n\
         [adc]\nbits = 12\nreference_v = 3.3\nbias_v = 1.65\n\
         [pulse]\nchange_ua = 0.1\ndc_ua = 1.0\n[rails]\nlow_v = 0.0\nhigh_v = 3.3\n"
    ))
}

/// A phototransistor with 10 kΩ at its emitter straight into a 3.3 V ADC:
/// 0 V dark, 0.01 V per µA; LED 1.95 V / 100 Ω = 19.5 mA, rated 50 mA.
fn phototransistor() -> Circuit {
    circuit(
        "[led]\nsupply_v = 3.3\nforward_v = 1.35\nresistor = \"100\"\nrated_ma = 50\n\
         [detector]\nkind = \"phototransistor\"\nload = \"10k\"\nload_at = \"emitter\"\n\
         [adc]\nreference_v = 3.3\n[rails]\nlow_v = 0.0\nhigh_v = 3.3\n",
    )
}

/// The emulated board fed a recording in volts from 0 to 3.3.
fn emulated_volts() -> BoardInfo {
    BoardInfo {
        rate_hz: Some(RATE),
        rails: Some((0.0, 3.3)),
        adc_bits: Some(0),
    }
}

fn levels(drive: f64, dc: f64, ambient: Option<f64>) -> Levels {
    Levels {
        led_drive: Some(drive),
        dc_level: Some(dc),
        ambient_level: ambient,
        clipped_samples: None,
    }
}

#[test]
fn a_bench_board_with_a_weak_pulse_and_some_hum() {
    // A 12-bit board; 1.2 Hz pulse of amplitude A = 12.3 codes (24.6
    // p-p) on 2000 codes, 50 Hz hum of B = A / 5. 10 s hold whole cycles
    // of both, so the heart band holds A²/2 and the rest B²/2 (Parseval):
    // SNR = 20·log10(5) = 13.98 dB (clear above 10), hum −13.98 dB
    // (borderline from −20). Peak to peak ≤ 2(A + B) = 29.5 codes: 4.6
    // to 4.9 bits (borderline, 4 to 6); PI ≈ 24.6–29.5 / 2000 = 1.2–1.5 %
    // (clear above 1 %). Ambient 0.02 of 0.5 = 4 % (clear up to 10 %).
    let (a, b) = (12.3, 12.3 / 5.0);
    let mut c = LiveChecks::new();
    c.board(bench(12));
    c.status(levels(0.4, 0.5, Some(0.02)));
    let f = move |t: f64| 2000.0 + a * (2.0 * PI * 1.2 * t).sin() + b * (2.0 * PI * 50.0 * t).sin();
    let reports = feed(&mut c, 0, 12.0, &f);
    let r = reports.last().unwrap();
    assert!((r.window_s - WINDOW_S).abs() < 0.1, "{}", r.window_s);
    let v = |n| check(r, n).verdict;
    assert_eq!(v("perfusion"), Verdict::Clear, "{r:#?}");
    assert_eq!(v("pulse_bits"), Verdict::Borderline);
    assert_eq!(v("snr"), Verdict::Clear);
    assert_eq!(v("hum"), Verdict::Borderline);
    assert_eq!(v("clipping"), Verdict::Clear);
    assert_eq!(v("ambient"), Verdict::Clear);
    assert_eq!(v("settling"), Verdict::Clear);
    let db = 20.0 * 5f64.log10();
    assert!((check(r, "snr").value.unwrap() - db).abs() < 0.2, "{r:#?}");
    assert!((check(r, "hum").value.unwrap() + db).abs() < 0.2);
    assert!(check(r, "hum").message.contains("60 Hz hum"));
    let g = r.gauges;
    let codes = g.pulse_codes.unwrap();
    assert!((24.5..=29.6).contains(&codes), "{codes}");
    assert!((g.pulse_share.unwrap() - codes / 4095.0).abs() < 1e-12);
    assert_eq!(
        (g.dc, g.ambient, g.led_drive),
        (Some(0.5), Some(0.02), Some(0.4))
    );
    assert_eq!(r.range, "12-bit ADC, 0 to 4095 codes");
    assert!(r.advice.is_empty() && r.mismatch.is_none());
}

#[test]
fn reports_come_once_a_second_and_spectra_wait_for_8_s() {
    let mut c = LiveChecks::new();
    c.board(bench(12));
    let reports = feed(&mut c, 0, 10.0, &pulse(2000.0, 200.0));
    // Blocks end every 16 samples; one ends at or after every 250.
    assert_eq!(
        reports.len(),
        9,
        "{:?}",
        reports.iter().map(|r| r.time_s).collect::<Vec<_>>()
    );
    assert!((reports[0].time_s - 256.0 / RATE).abs() < 1e-12);
    let early = &reports[2];
    assert_eq!(check(early, "snr").verdict, Verdict::NotMeasurable);
    assert!(check(early, "snr")
        .message
        .starts_with("needs 8 s of samples, has 3.1 s"));
    assert_eq!(check(&reports[8], "snr").verdict, Verdict::Clear);
    // No status yet: nothing known of the LED.
    assert_eq!(check(early, "settling").verdict, Verdict::NotMeasurable);
    assert_eq!(check(early, "ambient").verdict, Verdict::NotMeasurable);
}

#[test]
fn a_drive_that_just_changed_is_still_settling() {
    let mut c = LiveChecks::new();
    c.board(bench(12));
    c.status(levels(0.25, 0.5, None));
    feed(&mut c, 0, 9.0, &pulse(2000.0, 200.0));
    c.status(levels(0.3125, 0.5, None));
    let r = feed(&mut c, 2256, 1.5, &pulse(2000.0, 200.0))
        .pop()
        .unwrap();
    // The change at sample 2256, the report at 2560: 1.216 s.
    let s = check(&r, "settling");
    assert_eq!(s.verdict, Verdict::Borderline, "{s:?}");
    assert!((s.value.unwrap() - 304.0 / RATE).abs() < 1e-9, "{s:?}");
}

#[test]
fn without_width_or_rails_the_range_checks_say_so() {
    let mut c = LiveChecks::new();
    c.board(BoardInfo {
        rate_hz: Some(RATE),
        rails: None,
        adc_bits: None,
    });
    let r = feed(&mut c, 0, 9.0, &pulse(0.5, 0.02)).pop().unwrap();
    for name in ["perfusion", "pulse_bits", "clipping"] {
        let k = check(&r, name);
        assert_eq!(k.verdict, Verdict::NotMeasurable);
        assert!(k.message.starts_with("ADC range not known"), "{k:?}");
    }
    assert_eq!(check(&r, "snr").verdict, Verdict::Clear);
    assert_eq!((r.gauges.dc, r.gauges.pulse_share), (None, None));
}

#[test]
fn a_report_costs_a_counted_budget_of_goertzel_steps() {
    // 10 s at 250 Hz: N = 2500, bins 0.1 Hz apart. The heart band's bins
    // 0.5 to 3.7 Hz are k = 5 ..= 37, 33 of them, of N steps each, taken
    // for the SNR and again for the hum's reference, and the hum's two
    // frequencies: (2·33 + 2)·2500 = 170 000 steps. The whole periodogram
    // would take (N/2 + 1)·N = 3 127 500, twice.
    let mut c = LiveChecks::new();
    c.board(bench(12));
    feed(&mut c, 0, 10.0, &pulse(2000.0, 200.0));
    GOERTZEL_STEPS.with(|s| s.set(0));
    let r = feed(&mut c, 2512, 256.0 / RATE, &pulse(2000.0, 200.0));
    assert_eq!(r.len(), 1);
    let steps = GOERTZEL_STEPS.with(|s| s.get());
    assert_eq!(steps, 170_000, "Goertzel steps per report");
    assert!(steps * 18 < 2 * 3_127_500);
}

#[test]
fn a_small_pulse_asks_for_a_larger_feedback_resistor() {
    // 0.5 % wants ×2 for 1 %. LED 100 Ω → 47 Ω (56 Ω gives 0.89 %): 2 V /
    // 47 Ω = 42.6 mA at full drive, over the rated 30 mA (the board may
    // go to full drive): refused, though at the present half drive it
    // runs 21.3 mA. Feedback 100k → 220k (180k gives 0.9 %): 1.1 %, the
    // LED at 0.5 × 20 mA = 10 mA; TIA at 3.0 − 1 µA × 220 kΩ = 2.78 V,
    // 3.3 V × 1.1 % = 36.3 mV about it: 3.3 − 2.78 − 0.018 = 0.502 V to
    // the upper rail (Ohm's law). The pulse: 0.5 % of 4095 = 20.475
    // codes, DC from the status at the 1.65 V bias, 50 %.
    let mut c = LiveChecks::with_circuit(tia_100k("rated_ma = 30"), None);
    c.board(bench(12));
    c.status(levels(0.5, 0.5, Some(0.01)));
    let r = feed(&mut c, 0, 10.0, &pulse(2000.0, 0.005 * 4095.0))
        .pop()
        .unwrap();
    assert_eq!(
        r.advice,
        [
            "pulse is 0.5 % of the ADC range: feedback resistor 100 kΩ → 220 kΩ gives a pulse of \
             1.1 % and DC at 50 %, LED 10 mA, and keeps the detector output 0.502 V inside its rails",
            "not LED resistor → 47 Ω: LED current 21.3 mA (42.6 mA at the board's most drive) is \
             above its rated 30 mA"
        ],
        "{r:#?}"
    );
}

#[test]
fn the_boards_max_drive_is_a_limit_in_ma() {
    // No rating; the board at a quarter of full drive, capped at half:
    // 0.5 × 20 mA = 10 mA is the most it may drive; 47 Ω would run
    // 0.25 × 2 V / 47 Ω = 10.6 mA: refused. 220k keeps 0.25 × 20 = 5 mA.
    let mut c = LiveChecks::with_circuit(tia_100k(""), Some(0.5));
    c.board(bench(12));
    c.status(levels(0.25, 0.5, None));
    let r = feed(&mut c, 0, 10.0, &pulse(2000.0, 0.005 * 4095.0))
        .pop()
        .unwrap();
    assert!(
        r.advice[0].contains("100 kΩ → 220 kΩ") && r.advice[0].contains("LED 5 mA"),
        "{r:#?}"
    );
    assert_eq!(
        r.advice[1],
        "not LED resistor → 47 Ω: LED current 10.6 mA is above the board's most drive 10 mA"
    );
}

#[test]
fn a_high_dc_asks_for_a_larger_led_resistor() {
    // The emulated board fed a recording in volts, rails 0 to 3.3 V: DC
    // 92 % is 3.036 V = 303.6 µA through 10 kΩ, the pulse 3 % = 0.099 V.
    // LED 100 Ω → 120 Ω scales both by 100/120: DC 76.7 %, pulse 2.5 %,
    // LED 1.95 V / 120 Ω = 16.25 mA (no status: full drive). Load 10k →
    // 8.2k (12k, nearer, raises the DC): ×0.82, DC 75.4 %.
    let mut c = LiveChecks::with_circuit(phototransistor(), None);
    c.board(emulated_volts());
    let r = feed(&mut c, 0, 10.0, &pulse(0.92 * 3.3, 0.03 * 3.3))
        .pop()
        .unwrap();
    assert_eq!(r.advice.len(), 2, "{r:#?}");
    assert!(
        r.advice[0].starts_with(
            "DC sits at 92 % of range: LED resistor 100 Ω → 120 Ω gives a pulse of 2.5 % and \
             DC at 77 %"
        ),
        "{r:#?}"
    );
    assert!(r.advice[1].starts_with("DC sits at 92 % of range: load resistor 10 kΩ → 8.2 kΩ"));
}

#[test]
fn a_pulse_near_the_rails_asks_for_less_gain() {
    // DC 60 %, pulse 75 %: it spans 22.5 % to 97.5 %, within 5 % of the top.
    // LED 100 Ω → 120 Ω: ×0.833, 18.75 % to 81.25 %; load 10k → 8.2k:
    // ×0.82. Both inside, both less light into the same gain.
    let mut c = LiveChecks::with_circuit(phototransistor(), None);
    c.board(emulated_volts());
    let r = feed(&mut c, 0, 10.0, &pulse(0.6 * 3.3, 0.75 * 3.3))
        .pop()
        .unwrap();
    assert!(
        r.advice[0].starts_with(
            "pulse is 75 % of the ADC range and reaches within 5.0 % of a rail: LED resistor \
             100 Ω → 120 Ω"
        ),
        "{r:#?}"
    );
    assert!(r.advice[1].contains("load resistor 10 kΩ → 8.2 kΩ"));
}

#[test]
fn a_circuit_that_does_not_match_the_board_gets_a_warning_and_no_advice() {
    let mut c = LiveChecks::with_circuit(tia_100k(""), None);
    c.board(bench(16));
    let r = feed(&mut c, 0, 2.0, &pulse(30000.0, 300.0)).pop().unwrap();
    let why = "the circuit file does not match the board: its ADC has 12 bits, the board says 16";
    assert_eq!(r.mismatch.as_deref(), Some(why));
    assert_eq!(r.advice, [format!("no advice: {why}")]);
    // Rails that are neither 12-bit codes nor 0 to 3.3 V.
    let board = BoardInfo {
        rate_hz: Some(RATE),
        rails: Some((0.0, 1023.0)),
        adc_bits: Some(0),
    };
    let m = circuit_mismatch(&tia_100k(""), &board).unwrap();
    assert_eq!(
        m,
        "the circuit file does not match the board: the board's rails 0 to 1023 are neither the \
         12-bit ADC's codes (0 to 4095) nor its 0 to 3.3 V"
    );
    assert_eq!(circuit_mismatch(&tia_100k(""), &bench(12)), None);
    assert_eq!(circuit_mismatch(&tia_100k(""), &emulated_volts()), None);
}

#[test]
fn a_real_boards_own_clip_count_outweighs_the_difference() {
    // The LED-on reading at the top rail with the LED-off one at 100
    // gives a difference of 3995, no rail in sight; the board counts the
    // rail: 50 more readings over 10 s (2500 samples) are 2 %, trouble
    // above 1 %. The emulated board's count is not taken.
    let counted = |n| Levels {
        clipped_samples: Some(n),
        ..levels(0.5, 0.5, None)
    };
    for (board, verdict) in [
        (bench(12), Verdict::Trouble),
        (emulated_volts(), Verdict::Clear),
    ] {
        let mut c = LiveChecks::new();
        c.board(board);
        c.status(counted(7));
        let dc = if board.adc_bits == Some(0) {
            1.5
        } else {
            2000.0
        };
        feed(&mut c, 0, 9.9, &pulse(dc, 0.1 * dc));
        c.status(counted(57));
        let r = feed(&mut c, 2480, 0.4, &pulse(dc, 0.1 * dc)).pop().unwrap();
        let k = check(&r, "clipping");
        assert_eq!(k.verdict, verdict, "{k:?}");
        if verdict == Verdict::Trouble {
            // 50 between the statuses at samples 0 and 2480.
            assert!((k.value.unwrap() - 50.0 / 2480.0).abs() < 1e-12, "{k:?}");
            assert_eq!(r.gauges.clipped, k.value);
        }
    }
}
