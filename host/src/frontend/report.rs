//! Everything `plethwire frontend` says about one circuit, gathered in one
//! serialisable value.

use serde::Serialize;

use super::band::{check_band, BandCheck};
use super::budget::{dc_notes, AdcBudget, Swing};
use super::circuit::Circuit;
use super::findings::{node, Finding, Level};
use super::led::LedBudget;
use super::nodes::{self, InputRange, NodeLevel};
use super::quantity::{bpm, sig3};
use super::sampling::{DigitalFilter, RateAdvice};
use super::transfer::Chain;
use super::{FrontendError, CAUTIONS};

mod finite;

/// Frequencies of the response table, Hz, before the chain's own corners
/// are added: 0.05 to 50 Hz, the heart band's edges among them.
pub const TABLE_FREQUENCIES_HZ: [f64; 11] =
    [0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 3.7, 5.0, 10.0, 20.0, 50.0];

/// One row of the response table.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ResponseRow {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// The same as a heart rate, beats per minute.
    pub bpm: f64,
    /// Analog transimpedance magnitude, V per µA.
    pub analog_v_per_ua: f64,
    /// Analog gain relative to mid-band, dB.
    pub analog_db: f64,
    /// Analog phase, degrees, unwrapped along frequency from 0.05 Hz
    /// where it lies in (−180, 180]: the phase the plot draws.
    pub analog_phase_deg: f64,
    /// Analog and digital together, relative to mid-band, dB; `None` at
    /// or above Nyquist.
    pub with_digital_db: Option<f64>,
    /// Their phase, unwrapped as the analog phase is; `None` at or above
    /// Nyquist.
    pub with_digital_phase_deg: Option<f64>,
}

/// The whole report.
#[derive(Clone, Debug, Serialize)]
pub struct FrontendReport {
    /// The circuit's name, or a stand-in.
    pub title: String,
    /// The circuit as checked.
    pub circuit: Circuit,
    /// The LED drive.
    pub led: LedBudget,
    /// The chain, its blocks and its transfer function.
    pub chain: Chain,
    /// Mid-band transimpedance, V per µA (signed).
    pub midband_v_per_ua: f64,
    /// The response at [`TABLE_FREQUENCIES_HZ`] and the chain's corners.
    pub response: Vec<ResponseRow>,
    /// The heart band through the analog chain.
    pub heart_band: BandCheck,
    /// The heart band through the analog chain and the digital band-pass.
    pub heart_band_with_digital: BandCheck,
    /// The ADC step in photocurrent.
    pub adc: AdcBudget,
    /// Every node's levels against its rails, detector first; the last is
    /// the ADC input.
    pub nodes: Vec<NodeLevel>,
    /// The photocurrent the detector takes before it saturates.
    pub input_range: InputRange,
    /// The swing of the given pulse at the ADC, if one was given.
    pub swing: Option<Swing>,
    /// The sample rate.
    pub sampling: RateAdvice,
    /// The digital band-pass at that rate.
    pub digital: DigitalFilter,
    /// What was found, errors first, then warnings, then notes; each with
    /// the node it is about.
    pub findings: Vec<Finding>,
    /// The safety cautions.
    pub cautions: Vec<&'static str>,
    /// Where the plot was written, if it was.
    pub plot: Option<String>,
}

impl FrontendReport {
    /// Work out everything for `circuit`; refused if a number it works
    /// out is not finite.
    pub fn build(circuit: &Circuit) -> Result<Self, FrontendError> {
        let led = LedBudget::of(&circuit.led);
        let chain = Chain::of(circuit);
        let sampling = RateAdvice::of(&chain, circuit.adc.rate_hz);
        let digital = DigitalFilter::for_rate(sampling.used_hz)?;
        let heart_band = check_band(|f| chain.relative_db(f));
        let heart_band_with_digital = check_band(|f| chain.relative_db(f) + digital.gain_db(f));
        let adc = AdcBudget::of(circuit, &chain);
        let nodes = nodes::levels(circuit, &chain);
        let input_range = InputRange::of(circuit);
        let adc_in = nodes.last().expect("a chain has its detector");
        let swing = Swing::of(circuit, &chain, &adc, adc_in);

        let mut findings = nodes::findings(circuit, &nodes, &input_range);
        findings.extend(
            led.warning(&circuit.led)
                .map(|w| Finding::new(Level::Warning, node::LED, w)),
        );
        let chain_warning = |m: String| Finding::new(Level::Warning, node::CHAIN, m);
        if !heart_band.passes {
            findings.push(chain_warning(format!(
                "the analog chain {}",
                heart_band.verdict
            )));
        }
        if !heart_band_with_digital.passes {
            findings.push(chain_warning(format!(
                "with the digital band-pass, the heart band {}",
                heart_band_with_digital.verdict
            )));
        }
        if let Some(s) = &swing {
            findings.extend(s.findings(circuit));
        }
        if !chain.has_low_pass() {
            findings.push(chain_warning(
                "the analog chain has no low-pass: nothing limits noise and aliasing before the \
                 ADC; add a corner, e.g. a capacitor across a feedback resistor"
                    .to_owned(),
            ));
        }
        findings.extend(sampling.findings());
        findings.extend(shortfall_warning(&chain).map(chain_warning));
        findings.extend(notes(circuit, &chain));
        // Stable: within a level, in the order found.
        findings.sort_by_key(|f| f.level);

        let report = Self {
            title: circuit
                .name
                .clone()
                .unwrap_or_else(|| "unnamed front end".to_owned()),
            circuit: circuit.clone(),
            led,
            midband_v_per_ua: chain.midband_v_per_ua(),
            response: table(&chain, &digital),
            chain,
            heart_band,
            heart_band_with_digital,
            adc,
            nodes,
            input_range,
            swing,
            sampling,
            digital,
            findings,
            cautions: CAUTIONS.to_vec(),
            plot: None,
        };
        finite::check(&report)?;
        Ok(report)
    }

    /// The findings at `level`.
    pub fn at_level(&self, level: Level) -> impl Iterator<Item = &Finding> {
        self.findings.iter().filter(move |f| f.level == level)
    }

    /// True when some node saturates or the ADC clips.
    pub fn has_errors(&self) -> bool {
        self.at_level(Level::Error).next().is_some()
    }
}

/// What was not checked, or was assumed.
fn notes(circuit: &Circuit, chain: &Chain) -> Vec<Finding> {
    let mut out = Vec::new();
    if circuit.led.rated_ma.is_none() {
        out.push(Finding::new(
            Level::Note,
            node::LED,
            "no rated LED current given (led.rated_ma, --led-rated-ma): not checked",
        ));
    }
    if circuit.pulse.change_ua.is_none() {
        out.push(Finding::new(
            Level::Note,
            node::PULSE,
            "no pulse given (pulse.change_ua, --pulse-ua): the swing and clipping of a pulse not checked",
        ));
    }
    out.extend(dc_notes(circuit, chain));
    out
}

/// A warning when the chain's corners overlap so that it never comes
/// within 3 dB of its mid-band gain.
fn shortfall_warning(chain: &Chain) -> Option<String> {
    // 1 mHz to 100 kHz covers every corner an RC front end for pulses has.
    let points = 600;
    let best = (0..points)
        .map(|i| 10f64.powf(-3.0 + 8.0 * i as f64 / (points - 1) as f64))
        .map(|f| chain.relative_db(f))
        .fold(f64::NEG_INFINITY, f64::max);
    (best < -3.0).then(|| {
        format!(
            "the chain never reaches its mid-band gain: at best {} dB below it, its high-pass and \
             low-pass corners overlap",
            sig3(-best)
        )
    })
}

/// The response table: the fixed frequencies and every corner of the
/// chain between them.
fn table(chain: &Chain, digital: &DigitalFilter) -> Vec<ResponseRow> {
    let (lo, hi) = (TABLE_FREQUENCIES_HZ[0], TABLE_FREQUENCIES_HZ[10]);
    let mut freqs: Vec<f64> = TABLE_FREQUENCIES_HZ
        .iter()
        .copied()
        .chain(
            chain
                .transfer
                .poles_hz()
                .into_iter()
                .filter(|f| (lo..=hi).contains(f))
                .map(|f| sig3(f).parse().unwrap_or(f)),
        )
        .collect();
    freqs.sort_by(f64::total_cmp);
    freqs.dedup();
    let nyquist = digital.rate_hz / 2.0;
    let mid = chain.midband_v_per_a.abs();
    let phase = super::phase::phase_track(chain, digital, &freqs);
    freqs
        .into_iter()
        .zip(phase)
        .map(|(f, (analog_phase, with_digital_phase))| {
            let digital_response = (f < nyquist).then(|| {
                plethwire_dsp::response::response(digital.design.sections(), f, digital.rate_hz)
            });
            ResponseRow {
                frequency_hz: f,
                bpm: bpm(f),
                analog_v_per_ua: chain.transfer.magnitude(f) * 1e-6,
                analog_db: 20.0 * (chain.transfer.magnitude(f) / mid).log10(),
                analog_phase_deg: analog_phase,
                with_digital_db: digital_response.map(|r| chain.relative_db(f) + r.magnitude_db),
                with_digital_phase_deg: with_digital_phase,
            }
        })
        .collect()
}
