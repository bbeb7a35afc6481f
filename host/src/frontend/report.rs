//! Everything `plethwire frontend` says about one circuit, gathered in one
//! serialisable value.

use serde::Serialize;

use super::band::{check_band, BandCheck};
use super::budget::{AdcBudget, Swing};
use super::circuit::Circuit;
use super::led::LedBudget;
use super::quantity::{bpm, sig3};
use super::sampling::{DigitalFilter, RateAdvice};
use super::transfer::Chain;
use super::{FrontendError, CAUTIONS};

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
    /// The swing of the given pulse, if one was given.
    pub swing: Option<Swing>,
    /// The sample rate.
    pub sampling: RateAdvice,
    /// The digital band-pass at that rate.
    pub digital: DigitalFilter,
    /// What needs fixing or checking.
    pub warnings: Vec<String>,
    /// What was not checked, or was assumed.
    pub notes: Vec<String>,
    /// The safety cautions.
    pub cautions: Vec<&'static str>,
    /// Where the plot was written, if it was.
    pub plot: Option<String>,
}

impl FrontendReport {
    /// Work out everything for `circuit`.
    pub fn build(circuit: &Circuit) -> Result<Self, FrontendError> {
        let led = LedBudget::of(&circuit.led);
        let chain = Chain::of(circuit);
        let sampling = RateAdvice::of(&chain, circuit.adc.rate_hz);
        let digital = DigitalFilter::for_rate(sampling.used_hz)?;
        let heart_band = check_band(|f| chain.relative_db(f));
        let heart_band_with_digital = check_band(|f| chain.relative_db(f) + digital.gain_db(f));
        let adc = AdcBudget::of(circuit, &chain);
        let swing = Swing::of(circuit, &chain, &adc);

        let mut warnings: Vec<String> = led.warning(&circuit.led).into_iter().collect();
        if !heart_band.passes {
            warnings.push(format!("the analog chain {}", heart_band.verdict));
        }
        if !heart_band_with_digital.passes {
            warnings.push(format!(
                "with the digital band-pass, the heart band {}",
                heart_band_with_digital.verdict
            ));
        }
        if let Some(s) = &swing {
            warnings.extend(s.warnings(circuit));
        }
        if !chain.has_low_pass() {
            warnings.push(
                "the analog chain has no low-pass: nothing limits noise and aliasing before the \
                 ADC; add a corner, e.g. a capacitor across a feedback resistor"
                    .to_owned(),
            );
        }
        warnings.extend(sampling.warning());
        if let Some(w) = shortfall_warning(&chain) {
            warnings.push(w);
        }

        let mut notes = Vec::new();
        if circuit.led.rated_ma.is_none() {
            notes.push(
                "no rated LED current given (led.rated_ma, --led-rated-ma): not checked".to_owned(),
            );
        }
        match &swing {
            Some(s) => notes.extend(s.notes(circuit, &chain)),
            None => notes.push(
                "no pulse given (pulse.change_ua, --pulse-ua): swing and clipping not checked"
                    .to_owned(),
            ),
        }

        Ok(Self {
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
            swing,
            sampling,
            digital,
            warnings,
            notes,
            cautions: CAUTIONS.to_vec(),
            plot: None,
        })
    }
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
