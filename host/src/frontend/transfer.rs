//! The chain's transfer function in s: each block as a ratio of small
//! polynomials written from its R and C values, factored into real poles
//! and zeros, the blocks multiplied, and the product evaluated on the jω
//! axis.
//!
//! Every block here is built from resistors and capacitors around ideal
//! amplifiers, so its poles and zeros are real and not positive; the phase
//! is the sum of each factor's angle and stays continuous without
//! unwrapping.

use plethwire_dsp::math::Complex;
use serde::Serialize;
use std::f64::consts::PI;

use super::circuit::{AmpStage, Circuit, Detector};

/// Coefficients in ascending powers of s: `[a0, a1, a2]` is a0 + a1·s + a2·s².
type Poly = Vec<f64>;

fn mul(a: &[f64], b: &[f64]) -> Poly {
    let mut out = vec![0.0; a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        for (j, y) in b.iter().enumerate() {
            out[i + j] += x * y;
        }
    }
    out
}

fn add(a: &[f64], b: &[f64]) -> Poly {
    (0..a.len().max(b.len()))
        .map(|i| a.get(i).unwrap_or(&0.0) + b.get(i).unwrap_or(&0.0))
        .collect()
}

/// The roots of a polynomial of degree 0 to 2 whose roots are real (see
/// the module comment), in rad/s.
fn roots(p: &[f64]) -> Vec<f64> {
    match *p {
        [_] => vec![],
        [a0, a1] => vec![-a0 / a1 + 0.0],
        [0.0, a1, a2] => vec![0.0, -a1 / a2],
        [a0, a1, a2] => {
            // For RC networks the discriminant is a sum of squares, ≥ 0; a
            // tiny negative value is rounding of a double root.
            let disc = (a1 * a1 - 4.0 * a2 * a0).max(0.0);
            // The form that does not subtract nearly equal numbers.
            let q = -0.5 * (a1 + a1.signum() * disc.sqrt());
            vec![q / a2, a0 / q]
        }
        _ => unreachable!("blocks have at most two capacitors"),
    }
}

/// A block as `numerator / denominator` in s.
#[derive(Clone, Debug, PartialEq)]
struct Ratio {
    num: Poly,
    den: Poly,
}

/// An impedance of R with an optional C across it: R / (1 + sRC).
fn r_parallel_c(r: f64, c: Option<f64>) -> Ratio {
    Ratio {
        num: vec![r],
        den: c.map_or(vec![1.0], |c| vec![1.0, r * c]),
    }
}

/// The admittance of R with an optional C in series: 1/R, or
/// sC / (1 + sRC).
fn r_series_c_admittance(r: f64, c: Option<f64>) -> Ratio {
    match c {
        None => Ratio {
            num: vec![1.0],
            den: vec![r],
        },
        Some(c) => Ratio {
            num: vec![0.0, c],
            den: vec![1.0, r * c],
        },
    }
}

impl Ratio {
    fn times(&self, other: &Ratio, sign: f64) -> Ratio {
        Ratio {
            num: mul(&self.num, &other.num)
                .iter()
                .map(|x| sign * x)
                .collect(),
            den: mul(&self.den, &other.den),
        }
    }

    fn of_detector(d: &Detector) -> Ratio {
        let gain_sign = d.gain_v_per_a().signum();
        let z = match *d {
            Detector::Photodiode {
                feedback_ohm,
                feedback_f,
            } => r_parallel_c(feedback_ohm, feedback_f),
            Detector::Phototransistor {
                load_ohm, load_f, ..
            } => r_parallel_c(load_ohm, load_f),
        };
        z.times(&Ratio::one(), gain_sign)
    }

    fn one() -> Ratio {
        Ratio {
            num: vec![1.0],
            den: vec![1.0],
        }
    }

    fn of_stage(s: &AmpStage) -> Ratio {
        match *s {
            AmpStage::HighPass { r_ohm, c_f } => Ratio {
                num: vec![0.0, r_ohm * c_f],
                den: vec![1.0, r_ohm * c_f],
            },
            AmpStage::LowPass { r_ohm, c_f } => Ratio {
                num: vec![1.0],
                den: vec![1.0, r_ohm * c_f],
            },
            AmpStage::Buffer => Ratio::one(),
            // −Zf / Zin.
            AmpStage::Inverting {
                rin_ohm,
                rf_ohm,
                cf_f,
                cin_f,
            } => r_parallel_c(rf_ohm, cf_f).times(&r_series_c_admittance(rin_ohm, cin_f), -1.0),
            // 1 + Zf / Zin.
            AmpStage::NonInverting {
                rin_ohm,
                rf_ohm,
                cf_f,
                cin_f,
            } => {
                let ratio =
                    r_parallel_c(rf_ohm, cf_f).times(&r_series_c_admittance(rin_ohm, cin_f), 1.0);
                Ratio {
                    num: add(&ratio.den, &ratio.num),
                    den: ratio.den,
                }
            }
        }
    }
}

/// A transfer function `H(s) = k · Π(s − zᵢ) / Π(s − pᵢ)` with real poles
/// and zeros in rad/s.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Factored {
    /// The leading-coefficient ratio k (units: V/A or V/V times (rad/s)
    /// to the power of poles minus zeros).
    pub k: f64,
    /// Zeros, rad/s (0 or negative).
    pub zeros_rad_s: Vec<f64>,
    /// Poles, rad/s (negative).
    pub poles_rad_s: Vec<f64>,
}

impl Factored {
    fn of(r: &Ratio) -> Self {
        Self {
            k: r.num[r.num.len() - 1] / r.den[r.den.len() - 1],
            zeros_rad_s: roots(&r.num),
            poles_rad_s: roots(&r.den),
        }
    }

    /// The product of several.
    pub fn product<'a>(parts: impl IntoIterator<Item = &'a Factored>) -> Self {
        let mut out = Self {
            k: 1.0,
            zeros_rad_s: vec![],
            poles_rad_s: vec![],
        };
        for p in parts {
            out.k *= p.k;
            out.zeros_rad_s.extend(&p.zeros_rad_s);
            out.poles_rad_s.extend(&p.poles_rad_s);
        }
        out
    }

    /// `H(j·2πf)`.
    pub fn at(&self, f_hz: f64) -> Complex {
        let jw = Complex::new(0.0, 2.0 * PI * f_hz);
        let mut h = Complex::real(self.k);
        for &z in &self.zeros_rad_s {
            h = h * (jw - Complex::real(z));
        }
        for &p in &self.poles_rad_s {
            h = h / (jw - Complex::real(p));
        }
        h
    }

    /// `|H(j·2πf)|`.
    pub fn magnitude(&self, f_hz: f64) -> f64 {
        self.at(f_hz).abs()
    }

    /// The phase at `f_hz`, degrees, as the sum of each factor's angle, so
    /// it is continuous in frequency (a negative k counts as +180°).
    pub fn phase_deg(&self, f_hz: f64) -> f64 {
        let w = 2.0 * PI * f_hz;
        let sign = if self.k < 0.0 { PI } else { 0.0 };
        let zeros: f64 = self.zeros_rad_s.iter().map(|&z| w.atan2(-z)).sum();
        let poles: f64 = self.poles_rad_s.iter().map(|&p| w.atan2(-p)).sum();
        (sign + zeros - poles).to_degrees()
    }

    /// Zeros as frequencies, Hz (their distance from the origin over 2π).
    pub fn zeros_hz(&self) -> Vec<f64> {
        self.zeros_rad_s
            .iter()
            .map(|z| z.abs() / (2.0 * PI))
            .collect()
    }

    /// Poles as corner frequencies, Hz.
    pub fn poles_hz(&self) -> Vec<f64> {
        self.poles_rad_s
            .iter()
            .map(|p| p.abs() / (2.0 * PI))
            .collect()
    }

    /// True when a zero sits at the origin, i.e. the block blocks DC.
    pub fn blocks_dc(&self) -> bool {
        self.zeros_rad_s.contains(&0.0)
    }

    /// The gain at DC, or `None` where a zero at the origin blocks it.
    pub fn dc_gain(&self) -> Option<f64> {
        (!self.blocks_dc()).then(|| self.at(0.0).re)
    }
}

/// One block of the chain as the report lists it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Block {
    /// What it is, with its component values.
    pub description: String,
    /// Its gain between its corners: V/A for the detector, V/V after it.
    pub gain: f64,
    /// Its own poles and zeros.
    pub transfer: Factored,
}

/// The whole chain from photocurrent to ADC input.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Chain {
    /// The detector, then each stage.
    pub blocks: Vec<Block>,
    /// The product of all blocks, V/A.
    pub transfer: Factored,
    /// The product of the blocks' gains between their corners, V/A: the
    /// mid-band transimpedance. No block exceeds its own such gain at any
    /// frequency, so neither does the chain.
    pub midband_v_per_a: f64,
}

impl Chain {
    /// Build the chain of `circuit`.
    pub fn of(circuit: &Circuit) -> Self {
        let mut blocks = vec![Block {
            description: circuit.detector.describe(),
            gain: circuit.detector.gain_v_per_a(),
            transfer: Factored::of(&Ratio::of_detector(&circuit.detector)),
        }];
        blocks.extend(circuit.stages.iter().map(|s| Block {
            description: s.describe(),
            gain: s.gain(),
            transfer: Factored::of(&Ratio::of_stage(s)),
        }));
        Self {
            transfer: Factored::product(blocks.iter().map(|b| &b.transfer)),
            midband_v_per_a: blocks.iter().map(|b| b.gain).product(),
            blocks,
        }
    }

    /// The mid-band transimpedance in V per µA of photocurrent.
    pub fn midband_v_per_ua(&self) -> f64 {
        self.midband_v_per_a * 1e-6
    }

    /// The gain at `f_hz` relative to the mid-band gain, dB (0 or below).
    pub fn relative_db(&self, f_hz: f64) -> f64 {
        20.0 * (self.transfer.magnitude(f_hz) / self.midband_v_per_a.abs()).log10()
    }

    /// The highest pole of the chain, Hz: the corner that limits its
    /// bandwidth, if any block has a pole.
    pub fn highest_corner_hz(&self) -> Option<f64> {
        self.transfer.poles_hz().into_iter().reduce(f64::max)
    }

    /// True when the gain falls towards zero far above every corner (more
    /// poles than zeros): something limits the bandwidth before the ADC.
    pub fn has_low_pass(&self) -> bool {
        self.transfer.poles_rad_s.len() > self.transfer.zeros_rad_s.len()
    }
}

#[cfg(test)]
mod tests;
