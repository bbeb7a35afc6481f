//! The report as text for a person.

use std::fmt::Write as _;

use super::band::HEART_BAND_HZ;
use super::findings::Level;
use super::quantity::{bpm, si, sig3};
use super::report::{FrontendReport, ResponseRow};
use super::transfer::Factored;

/// Corners above this are not given as heart rates.
const BPM_SHOWN_BELOW_HZ: f64 = 10.0;

/// Poles or zeros as `-4.55 rad/s (0.723 Hz)`, or `none`.
fn roots_line(rad_s: &[f64]) -> String {
    if rad_s.is_empty() {
        return "none".to_owned();
    }
    rad_s
        .iter()
        .map(|r| {
            format!(
                "{} rad/s ({} Hz)",
                sig3(*r),
                sig3(r.abs() / (2.0 * std::f64::consts::PI))
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// A block's own corners, e.g. `; pole 3.39 Hz (203 bpm)`.
fn corners(t: &Factored) -> String {
    let list = |name: &str, hz: Vec<f64>| -> String {
        hz.iter()
            .filter(|f| **f > 0.0)
            .map(|f| {
                // A heart rate only where one could be.
                let rate = if *f < BPM_SHOWN_BELOW_HZ {
                    format!(" ({:.1} bpm)", bpm(*f))
                } else {
                    String::new()
                };
                format!("; {name} {} Hz{rate}", sig3(*f))
            })
            .collect()
    };
    let zeros_at_dc = t.zeros_rad_s.iter().filter(|z| **z == 0.0).count();
    let dc = if zeros_at_dc > 0 {
        "; zero at 0 Hz"
    } else {
        ""
    };
    format!(
        "{dc}{}{}",
        list("zero", t.zeros_hz()),
        list("pole", t.poles_hz())
    )
}

fn cell(v: Option<f64>, decimals: usize) -> String {
    v.map_or_else(|| "-".to_owned(), |x| format!("{:.*}", decimals, x + 0.0))
}

fn table(rows: &[ResponseRow]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "  {:>8} {:>7} | {:>10} {:>9} {:>9} | {:>9} {:>9}",
        "freq Hz", "bpm", "V/µA", "rel dB", "phase°", "+dig dB", "phase°"
    );
    for r in rows {
        let _ = writeln!(
            s,
            "  {:>8} {:>7.1} | {:>10} {:>9.2} {:>9.1} | {:>9} {:>9}",
            r.frequency_hz,
            r.bpm,
            sig3(r.analog_v_per_ua),
            r.analog_db + 0.0,
            r.analog_phase_deg + 0.0,
            cell(r.with_digital_db, 2),
            cell(r.with_digital_phase_deg, 1)
        );
    }
    s
}

/// Everything for a person to read, cautions last.
pub fn human_report(r: &FrontendReport) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "plethwire frontend: {}\n", r.title);

    led_section(&mut s, r);
    chain_section(&mut s, r);
    levels_section(&mut s, r);
    adc_section(&mut s, r);
    sampling_section(&mut s, r);
    for level in [Level::Error, Level::Warning, Level::Note] {
        let mut list = r.at_level(level).peekable();
        if list.peek().is_some() {
            let _ = writeln!(s, "\n{}", level.heading());
            for f in list {
                let tag = if level == Level::Error { "ERROR " } else { "" };
                let _ = writeln!(s, "  - {tag}[{}] {}", f.node, f.message);
            }
        }
    }
    let _ = writeln!(
        s,
        "\n{}",
        r.plot
            .as_ref()
            .map_or("No plot written.".to_owned(), |p| format!(
                "Plot written to {p}"
            ))
    );
    let _ = writeln!(s, "\nCautions");
    for line in &r.cautions {
        let _ = writeln!(s, "  - {line}");
    }
    s
}

/// The LED drive: supply, resistors, current and heat.
fn led_section(s: &mut String, r: &FrontendReport) {
    let l = &r.circuit.led;
    let first = l.resistors_ohm[0];
    let resistors = match l.resistors_ohm.len() {
        1 => format!("resistor {}", si(first, "Ω")),
        n if l.resistors_ohm.iter().all(|v| *v == first) => format!(
            "{n} × {} in parallel ({})",
            si(first, "Ω"),
            si(r.led.effective_ohm, "Ω")
        ),
        _ => {
            let each: Vec<String> = l.resistors_ohm.iter().map(|v| si(*v, "Ω")).collect();
            format!(
                "{} in parallel ({})",
                each.join(", "),
                si(r.led.effective_ohm, "Ω")
            )
        }
    };
    let _ = writeln!(s, "LED drive");
    let _ = writeln!(
        s,
        "  supply {} V, forward voltage {} V, {resistors}",
        sig3(l.supply_v),
        sig3(l.forward_v),
    );
    let rated = l
        .rated_ma
        .map_or(String::new(), |m| format!(" (rated {})", si(m * 1e-3, "A")));
    let _ = writeln!(
        s,
        "  current {}{rated}; LED {}, resistors {} (hottest {})\n",
        si(r.led.current_ma * 1e-3, "A"),
        si(r.led.led_mw * 1e-3, "W"),
        si(r.led.resistors_mw * 1e-3, "W"),
        si(r.led.hottest_resistor_mw * 1e-3, "W")
    );
}

/// The amplifier chain, its transfer function, response and heart band.
fn chain_section(s: &mut String, r: &FrontendReport) {
    let _ = writeln!(s, "Chain, photocurrent in to ADC input out");
    for (i, b) in r.chain.blocks.iter().enumerate() {
        let gain = if i == 0 {
            si(b.gain, "V/A")
        } else {
            format!("{}×", sig3(b.gain))
        };
        let _ = writeln!(
            s,
            "  {}. {}\n     gain {gain}{}",
            i + 1,
            b.description,
            corners(&b.transfer)
        );
    }
    let _ = writeln!(
        s,
        "  mid-band transimpedance {} V/µA ({})\n",
        sig3(r.midband_v_per_ua),
        si(r.chain.midband_v_per_a, "Ω")
    );

    let t = &r.chain.transfer;
    let _ = writeln!(
        s,
        "Transfer function H(s) = k·Π(s − zᵢ)/Π(s − pᵢ), s in rad/s"
    );
    let _ = writeln!(s, "  k = {:.4e}", t.k);
    let _ = writeln!(s, "  zeros: {}", roots_line(&t.zeros_rad_s));
    let _ = writeln!(s, "  poles: {}\n", roots_line(&t.poles_rad_s));

    let _ = writeln!(
        s,
        "Response (rel dB: against mid-band; +dig: with the digital band-pass at {} Hz)",
        r.digital.rate_hz
    );
    s.push_str(&table(&r.response));
    let _ = writeln!(
        s,
        "\nHeart band {}-{} Hz (heart rates of 30-220 bpm)",
        HEART_BAND_HZ.0, HEART_BAND_HZ.1,
    );
    let _ = writeln!(s, "  analog chain: {}", r.heart_band.verdict);
    let _ = writeln!(
        s,
        "  with the digital band-pass: {}\n",
        r.heart_band_with_digital.verdict
    );
}

/// The signal at the ADC: range, step and the pulse's swing.
fn adc_section(s: &mut String, r: &FrontendReport) {
    let c = &r.circuit;
    let a = &c.adc;
    let _ = writeln!(s, "Signal at the ADC");
    let _ = writeln!(
        s,
        "  ADC {} bits, 0 V to {} V, bias {} V; board rails {} V to {} V",
        a.bits,
        sig3(a.reference_v),
        sig3(a.bias_v),
        sig3(c.rails.low_v),
        sig3(c.rails.high_v)
    );
    let _ = writeln!(
        s,
        "  one step: {} = {} of photocurrent; the whole range {}",
        si(r.adc.lsb_mv * 1e-3, "V"),
        si(r.adc.lsb_ua * 1e-6, "A"),
        si(r.adc.full_scale_ua * 1e-6, "A")
    );
    if let Some(w) = &r.swing {
        let saturated = r.nodes.iter().filter(|n| n.saturates).count();
        let _ = writeln!(
            s,
            "  pulse {} p-p: {} p-p around {:.3} V, from {:.3} V to {:.3} V, {} codes; {}{}",
            si(w.pulse_ua * 1e-6, "A"),
            si(w.swing_vpp, "V"),
            w.centre_v,
            w.low_v,
            w.high_v,
            sig3(w.codes),
            if w.adc_clips {
                "CLIPS at the ADC"
            } else {
                "inside the ADC range"
            },
            match saturated {
                0 => "; every node within its rails".to_owned(),
                1 => "; 1 node SATURATES (see Errors)".to_owned(),
                n => format!("; {n} nodes SATURATE (see Errors)"),
            }
        );
    }
}

/// Each node's DC level and swing against its rails, and the detector's
/// input range.
fn levels_section(s: &mut String, r: &FrontendReport) {
    let _ = writeln!(
        s,
        "Levels, node by node (dark: no photocurrent; steady: with the steady photocurrent)"
    );
    for (i, n) in r.nodes.iter().enumerate() {
        let adc = if i + 1 == r.nodes.len() {
            " (the ADC input)"
        } else {
            ""
        };
        let rails = n
            .rails
            .map_or("passive, no rails of its own".to_owned(), |x| {
                format!("rails {} V to {} V", sig3(x.low_v), sig3(x.high_v))
            });
        let swing = n
            .swing_vpp
            .map_or(String::new(), |v| format!(", pulse {} p-p", si(v, "V")));
        let _ = writeln!(
            s,
            "  {}{adc}: dark {} V, steady {} V{swing}; {} V to {} V; {rails}{}",
            n.node,
            sig3(n.dark_v),
            sig3(n.steady_v),
            sig3(n.low_v),
            sig3(n.high_v),
            if n.saturates { ": SATURATES" } else { "" }
        );
    }
    let _ = writeln!(
        s,
        "  input range: {}\n",
        r.input_range.describe(&r.circuit.detector)
    );
}

/// The sample rate and the digital band-pass.
fn sampling_section(s: &mut String, r: &FrontendReport) {
    let p = &r.sampling;
    let _ = writeln!(s, "\nSampling and digital filter");
    let _ = writeln!(s, "  rule: {}", p.rule);
    let _ = writeln!(
        s,
        "  recommended {} Hz; this report uses {} Hz",
        p.recommended_hz, p.used_hz
    );
    let d = &r.digital;
    let _ = writeln!(
        s,
        "  digital band-pass: Butterworth {}-{} Hz, order {}, {} sections",
        d.low_hz,
        d.high_hz,
        d.order,
        d.sections.len()
    );
    let _ = writeln!(s, "  design it for the board: {}", d.command);
}
