//! The report itself: designed sections, the board's quantised cascade, and
//! the response of both at chosen frequencies.

use plethwire_dsp::design::MAX_SECTIONS;
use plethwire_dsp::filter::{Biquad, Delta, Section};
use plethwire_dsp::math::Complex;
use plethwire_dsp::response::response;
use plethwire_dsp::Design;
use serde::Serialize;

use super::const_block::rust_const_block;
use super::{FilterDesignError, FilterSpec};

/// The structure the board runs, as named in reports: plethwire-dsp's
/// difference form in `f32`, its default for low corners.
pub const BOARD_STRUCTURE: &str = "Delta (f32)";

/// One section as scipy-style coefficient rows.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct SectionCoefficients {
    /// `[b0, b1, b2]`.
    pub b: [f64; 3],
    /// `[1, a1, a2]` (a1, a2 subtracted, as in scipy).
    pub a: [f64; 3],
}

impl From<&Biquad<f64>> for SectionCoefficients {
    fn from(s: &Biquad<f64>) -> Self {
        Self {
            b: [s.b0, s.b1, s.b2],
            a: [1.0, s.a1, s.a2],
        }
    }
}

/// A cascade's coefficients with the rate they were designed for.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CoefficientSet {
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Sections, first applied first.
    pub sections: Vec<SectionCoefficients>,
}

/// What the board really runs after quantisation.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BoardFilter {
    /// Section structure and number format ([`BOARD_STRUCTURE`]).
    pub structure: &'static str,
    /// The realised coefficients, back in `f64` and scipy form.
    pub sections: Vec<SectionCoefficients>,
}

/// How close (distance in the z-plane) a zero of a section must be to
/// `e^{jω}` for the frequency to count as sitting on it. There the phase
/// jumps and rounding turns the computed group delay into noise (at a notch
/// centre, ±10¹³ s), so reports leave phase and delay undefined. Further
/// away, rounding moves the delay by less than about 10⁻³ samples.
pub const ZERO_PROXIMITY: f64 = 1e-6;

/// The finite, nonzero zeros of one section's numerator
/// `b0 + b1·z⁻¹ + b2·z⁻²` (zeros at the origin never touch the circle).
fn section_zeros(s: &Biquad<f64>) -> Vec<Complex> {
    let (a, b, c) = (s.b0, s.b1, s.b2);
    if a != 0.0 {
        // b0·z² + b1·z + b2 = 0.
        let root = Complex::real(b * b - 4.0 * a * c).sqrt();
        let (minus_b, two_a) = (Complex::real(-b), Complex::real(2.0 * a));
        vec![(minus_b + root) / two_a, (minus_b - root) / two_a]
    } else if b != 0.0 {
        vec![Complex::real(-c / b)]
    } else {
        vec![]
    }
}

/// True when `frequency_hz` lies on (within [`ZERO_PROXIMITY`] of) a zero
/// of any of `sections`.
pub fn on_a_zero(sections: &[Biquad<f64>], frequency_hz: f64, sample_rate_hz: f64) -> bool {
    let point = Complex::expj(2.0 * std::f64::consts::PI * frequency_hz / sample_rate_hz);
    sections
        .iter()
        .flat_map(section_zeros)
        .any(|z| (z - point).abs() <= ZERO_PROXIMITY)
}

/// Gain, phase and group delay at one frequency, in table units.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ResponsePoint {
    /// `20·log10|H|`, dB; −∞ (JSON `null`) at an exact zero.
    pub gain_db: f64,
    /// The sum of each section's principal phase, degrees; `None` (JSON
    /// `null`) on a zero (see [`on_a_zero`]).
    pub phase_deg: Option<f64>,
    /// Group delay, milliseconds; `None` (JSON `null`) on a zero.
    pub group_delay_ms: Option<f64>,
}

impl ResponsePoint {
    /// The response of `sections` at `frequency_hz`, via plethwire-dsp's
    /// [`response`], in table units.
    pub fn of(sections: &[Biquad<f64>], frequency_hz: f64, sample_rate_hz: f64) -> Self {
        let r = response(sections, frequency_hz, sample_rate_hz);
        let defined = !on_a_zero(sections, frequency_hz, sample_rate_hz);
        Self {
            gain_db: r.magnitude_db,
            phase_deg: defined.then_some(r.phase_rad.to_degrees()),
            group_delay_ms: defined.then_some(r.group_delay_s * 1000.0),
        }
    }
}

/// One row of the response table.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ResponseRow {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// The `f64` design.
    pub design: ResponsePoint,
    /// The board's `f32` cascade.
    pub board: ResponsePoint,
}

/// Everything `plethwire filter` says about one spec.
#[derive(Clone, Debug, Serialize)]
pub struct FilterReport {
    /// One line: the stages, the rate and the number of sections.
    pub summary: String,
    /// The command line that asked for it.
    pub command: String,
    /// The spec as given.
    pub spec: FilterSpec,
    /// The designed sections.
    pub coefficients: CoefficientSet,
    /// The quantised cascade the board runs.
    pub board: BoardFilter,
    /// The response of both at the table frequencies.
    pub response: Vec<ResponseRow>,
    /// The sections as Rust source for plethwire-dsp.
    pub rust_const: String,
    /// What to know before using it: a rate outside the pipeline's range
    /// (designed anyway, since a filter can serve other uses).
    pub warnings: Vec<String>,
    /// Where the SVG was written, if it was.
    pub plot: Option<String>,
    /// The design itself, for further evaluation (not serialised).
    #[serde(skip)]
    pub design: Design,
    /// The board's realised sections in `f64` (not serialised; see `board`).
    #[serde(skip)]
    pub board_sections: Vec<Biquad<f64>>,
}

impl FilterReport {
    /// Design `spec`, quantise it for the board and evaluate both at
    /// `frequencies_hz` (default: [`FilterSpec::default_frequencies_hz`]).
    /// `const_name` names the Rust constant; `command` is quoted in it.
    pub fn build(
        spec: &FilterSpec,
        frequencies_hz: Option<&[f64]>,
        const_name: &str,
        command: &str,
    ) -> Result<Self, FilterDesignError> {
        let design = spec.design()?;
        let board_sections = board_sections(&design)?;
        let rate = spec.sample_rate_hz;
        let frequencies = match frequencies_hz {
            Some(f) => checked_frequencies(f, spec.nyquist_hz())?,
            None => spec.default_frequencies_hz(),
        };
        let rows = frequencies
            .iter()
            .map(|&f| ResponseRow {
                frequency_hz: f,
                design: ResponsePoint::of(design.sections(), f, rate),
                board: ResponsePoint::of(&board_sections, f, rate),
            })
            .collect();
        let n = design.len();
        let summary = format!(
            "{} at {rate} Hz sampling: {n} section{}",
            spec.describe_stages(),
            if n == 1 { "" } else { "s" }
        );
        let rust_const = rust_const_block(const_name, design.sections(), &summary, command);
        Ok(Self {
            summary,
            command: command.to_owned(),
            spec: spec.clone(),
            coefficients: CoefficientSet {
                sample_rate_hz: rate,
                sections: design.sections().iter().map(Into::into).collect(),
            },
            board: BoardFilter {
                structure: BOARD_STRUCTURE,
                sections: board_sections.iter().map(Into::into).collect(),
            },
            response: rows,
            rust_const,
            warnings: rate_warning(rate).into_iter().collect(),
            plot: None,
            design,
            board_sections,
        })
    }
}

/// The realised coefficients of the board's cascade, naming the first
/// section that rounding to `f32` would make unstable.
/// A warning when `rate_hz` is outside the pipeline's range: the filter is
/// still designed, for other uses than the beat pipeline.
fn rate_warning(rate_hz: f64) -> Option<String> {
    plethwire_dsp::pipeline::check_sample_rate(rate_hz)
        .err()
        .map(|e| {
            format!("{e} for the beat pipeline; this filter is designed anyway, for other uses")
        })
}

fn board_sections(design: &Design) -> Result<Vec<Biquad<f64>>, FilterDesignError> {
    match design.cascade::<Delta, MAX_SECTIONS>() {
        Ok(cascade) => Ok(cascade.realised()[..design.len()].to_vec()),
        Err(reason) => {
            let section = design
                .sections()
                .iter()
                .position(|s| Delta::from_biquad(s).is_err())
                .unwrap_or(0);
            Err(FilterDesignError::NotStableOnBoard { section, reason })
        }
    }
}

fn checked_frequencies(f: &[f64], nyquist_hz: f64) -> Result<Vec<f64>, FilterDesignError> {
    match f.iter().find(|&&x| !(0.0..=nyquist_hz).contains(&x)) {
        Some(&bad) => Err(FilterDesignError::FrequencyOutOfRange {
            frequency_hz: bad,
            nyquist_hz,
        }),
        None => Ok(f.to_vec()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::filter_report::Stage;

    fn band(rate: f64) -> FilterSpec {
        FilterSpec::new(
            rate,
            vec![Stage::BandPass {
                low_hz: 0.5,
                high_hz: 8.0,
                order: 2,
            }],
        )
        .unwrap()
    }

    #[test]
    fn rows_are_the_library_response_of_design_and_board() {
        let spec = band(250.0);
        let r = FilterReport::build(&spec, Some(&[0.5, 3.0, 100.0]), "F", "cmd").unwrap();
        let board = r.design.cascade::<Delta, 2>().unwrap().realised();
        for row in &r.response {
            let d = response(r.design.sections(), row.frequency_hz, 250.0);
            let b = response(&board, row.frequency_hz, 250.0);
            for (point, want) in [(row.design, d), (row.board, b)] {
                assert_eq!(point.gain_db, want.magnitude_db);
                assert_eq!(point.phase_deg, Some(want.phase_rad.to_degrees()));
                assert_eq!(point.group_delay_ms, Some(want.group_delay_s * 1000.0));
            }
        }
        assert_eq!(r.response.len(), 3);
    }

    #[test]
    fn phase_and_delay_are_undefined_only_at_a_zero() {
        let spec = FilterSpec::new(
            250.0,
            vec![Stage::Notch {
                centre_hz: 50.0,
                quality: 30.0,
            }],
        )
        .unwrap();
        let r = FilterReport::build(&spec, Some(&[49.99, 50.0]), "F", "c").unwrap();
        let (near, at) = (&r.response[0], &r.response[1]);
        assert!(near.design.phase_deg.is_some() && near.board.group_delay_ms.is_some());
        assert!(at.design.gain_db < -200.0);
        assert_eq!(
            (at.design.phase_deg, at.design.group_delay_ms),
            (None, None)
        );
        assert_eq!((at.board.phase_deg, at.board.group_delay_ms), (None, None));
    }

    #[test]
    fn zeros_of_each_section_kind_are_found() {
        let near = |zs: Vec<Complex>, want: Complex| zs.iter().any(|z| (*z - want).abs() < 1e-7);
        let notch = plethwire_dsp::design::notch(50.0, 30.0, 200.0).unwrap();
        // 50 Hz at 200 Hz sampling is a quarter turn: zeros at ±j.
        assert!(near(
            section_zeros(&notch.sections()[0]),
            Complex::new(0.0, 1.0)
        ));
        let dc = plethwire_dsp::design::dc_blocker(0.5, 100.0).unwrap();
        assert!(near(section_zeros(&dc.sections()[0]), Complex::real(1.0)));
        let delayed = Biquad {
            b0: 0.0,
            b1: 1.0,
            b2: 0.5,
            a1: 0.0,
            a2: 0.0,
        };
        assert_eq!(section_zeros(&delayed), vec![Complex::real(-0.5)]);
        assert!(on_a_zero(dc.sections(), 0.0, 100.0));
        assert!(!on_a_zero(dc.sections(), 1e-3, 100.0));
    }

    #[test]
    fn near_dc_of_a_high_pass_keeps_its_delay() {
        let spec = FilterSpec::new(
            4000.0,
            vec![Stage::HighPass {
                corner_hz: 0.05,
                order: 4,
            }],
        )
        .unwrap();
        let r = FilterReport::build(&spec, Some(&[0.0, 0.01]), "F", "c").unwrap();
        assert_eq!(r.response[0].design.group_delay_ms, None);
        assert!(r.response[1].design.group_delay_ms.is_some());
    }

    #[test]
    fn deep_stop_band_keeps_its_phase() {
        let spec = FilterSpec::new(
            1000.0,
            vec![Stage::LowPass {
                corner_hz: 1.0,
                order: 8,
            }],
        )
        .unwrap();
        let r = FilterReport::build(&spec, Some(&[100.0, 500.0]), "F", "c").unwrap();
        assert!(r.response[0].design.gain_db < -300.0);
        assert!(r.response[0].design.group_delay_ms.is_some());
        // Nyquist is where a low-pass has its zeros.
        assert_eq!(r.response[1].design.group_delay_ms, None);
    }

    #[test]
    fn board_sections_differ_from_design_only_by_rounding() {
        let r = FilterReport::build(&band(1000.0), None, "F", "cmd").unwrap();
        assert_eq!(r.board_sections.len(), r.design.len());
        for (q, d) in r.board_sections.iter().zip(r.design.sections()) {
            for (x, y) in [(q.b0, d.b0), (q.a1, d.a1), (q.a2, d.a2)] {
                assert!((x - y).abs() <= 1e-6 * y.abs().max(1.0), "{x} vs {y}");
            }
        }
    }

    #[test]
    fn frequencies_beyond_nyquist_or_negative_are_refused() {
        for bad in [-1.0, 50.5, f64::NAN] {
            let err = FilterReport::build(&band(100.0), Some(&[1.0, bad]), "F", "c").unwrap_err();
            assert!(
                matches!(err, FilterDesignError::FrequencyOutOfRange { .. }),
                "{err}"
            );
        }
        assert!(FilterReport::build(&band(100.0), Some(&[0.0, 50.0]), "F", "c").is_ok());
    }

    #[test]
    fn summary_counts_sections() {
        let r = FilterReport::build(&band(100.0), None, "F", "c").unwrap();
        assert_eq!(
            r.summary,
            "Butterworth band-pass 0.5-8 Hz (order 2) at 100 Hz sampling: 2 sections"
        );
    }
}
