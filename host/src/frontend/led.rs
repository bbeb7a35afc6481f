//! The LED's drive current from its supply, forward voltage and series
//! resistors, and what the parts dissipate.

use serde::Serialize;

use super::circuit::LedDrive;
use super::quantity::si;

/// What the LED drive does.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LedBudget {
    /// The resistors in parallel, ohms.
    pub effective_ohm: f64,
    /// Voltage across the resistors, volts.
    pub resistor_v: f64,
    /// LED current, milliamperes.
    pub current_ma: f64,
    /// Power in the LED, milliwatts.
    pub led_mw: f64,
    /// Power in the resistors together, milliwatts.
    pub resistors_mw: f64,
    /// Power in the hottest single resistor, milliwatts.
    pub hottest_resistor_mw: f64,
    /// The current is above the LED's rated current.
    pub over_rated: bool,
}

/// Resistors in parallel: 1 / Σ(1/Rᵢ).
pub fn parallel_ohm(resistors_ohm: &[f64]) -> f64 {
    1.0 / resistors_ohm.iter().map(|r| 1.0 / r).sum::<f64>()
}

impl LedBudget {
    /// I = (Vs − Vf) / R_eff, with the LED's forward voltage taken as fixed
    /// at its working current. The drive must have Vs above Vf.
    pub fn of(led: &LedDrive) -> Self {
        let effective_ohm = parallel_ohm(&led.resistors_ohm);
        let resistor_v = led.supply_v - led.forward_v;
        let current_a = resistor_v / effective_ohm;
        let hottest = led
            .resistors_ohm
            .iter()
            .map(|r| resistor_v * resistor_v / r)
            .fold(0.0, f64::max);
        Self {
            effective_ohm,
            resistor_v,
            current_ma: current_a * 1e3,
            led_mw: led.forward_v * current_a * 1e3,
            resistors_mw: resistor_v * current_a * 1e3,
            hottest_resistor_mw: hottest * 1e3,
            over_rated: led.rated_ma.is_some_and(|rated| current_a * 1e3 > rated),
        }
    }

    /// The warning to print when the current is above the rating.
    pub fn warning(&self, led: &LedDrive) -> Option<String> {
        let rated = led.rated_ma?;
        self.over_rated.then(|| {
            format!(
                "LED current {} is above its rated {}: raise the series resistance to at least {}",
                si(self.current_ma * 1e-3, "A"),
                si(rated * 1e-3, "A"),
                si(self.resistor_v / (rated * 1e-3), "Ω")
            )
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn drive(resistors_ohm: Vec<f64>, rated_ma: Option<f64>) -> LedDrive {
        LedDrive {
            supply_v: 5.0,
            forward_v: 1.7,
            resistors_ohm,
            rated_ma,
        }
    }

    #[test]
    fn current_through_one_and_three_resistors() {
        // (5 V − 1.7 V) / 470 Ω ≈ 7.0 mA; three in parallel ≈ 21 mA
        // (common practice: Ohm's law).
        let one = LedBudget::of(&drive(vec![470.0], None));
        assert!((one.current_ma - 7.02).abs() < 0.005, "{}", one.current_ma);
        let three = LedBudget::of(&drive(vec![470.0; 3], None));
        assert!((three.current_ma - 21.06).abs() < 0.005);
        assert!((three.effective_ohm - 470.0 / 3.0).abs() < 1e-9);
        // P = V²/R in each resistor, V·I in the LED.
        assert!((three.hottest_resistor_mw - 3.3 * 3.3 / 470.0 * 1e3).abs() < 1e-9);
        assert!((three.led_mw - 1.7 * three.current_ma).abs() < 1e-9);
    }

    #[test]
    fn a_current_above_the_rating_warns() {
        let led = drive(vec![470.0; 3], Some(20.0));
        let b = LedBudget::of(&led);
        assert!(b.over_rated);
        let w = b.warning(&led).unwrap();
        assert!(
            w.starts_with("LED current 21.1 mA is above its rated 20 mA"),
            "{w}"
        );
        assert!(w.ends_with("at least 165 Ω"), "{w}");
        let ok = drive(vec![470.0], Some(20.0));
        assert_eq!(LedBudget::of(&ok).warning(&ok), None);
        let unknown = drive(vec![10.0], None);
        assert!(!LedBudget::of(&unknown).over_rated);
    }
}
