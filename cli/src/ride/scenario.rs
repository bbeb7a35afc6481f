//! The demo's recording: a finger-clip sensor on a rider on a bike
//! trainer. Invented for the demo, with known beats.

use plethwire_synth::{
    generate, FingerOff, HrSchedule, MotionBurst, SynthError, SynthOptions, Synthetic,
};

/// Sample rate of the demo sensor, Hz (a typical microcontroller ADC rate).
pub const RATE_HZ: f64 = 125.0;
/// Length of the ride, s.
pub const DURATION_S: f64 = 240.0;

/// One phase of the ride, for the narration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Phase {
    /// Start, s.
    pub start_s: f64,
    /// What happens.
    pub what: &'static str,
}

/// The ride's phases in order.
pub const PHASES: [Phase; 6] = [
    Phase {
        start_s: 0.0,
        what: "warm-up at rest on the saddle",
    },
    Phase {
        start_s: 50.0,
        what: "effort: cadence and heart rate climb",
    },
    Phase {
        start_s: 120.0,
        what: "a sprint out of the saddle shakes the finger clip",
    },
    Phase {
        start_s: 150.0,
        what: "recovery: easy spinning",
    },
    Phase {
        start_s: 200.0,
        what: "the clip slips off the finger",
    },
    Phase {
        start_s: 206.0,
        what: "clip back on, cool-down",
    },
];

/// The options that make the ride: rest at 62 bpm, a climb to 158 bpm,
/// a 4 s motion burst, recovery, a 6 s finger-off gap, cool-down.
pub fn ride_options(seed: u64) -> SynthOptions {
    SynthOptions {
        sample_rate_hz: RATE_HZ,
        duration_s: DURATION_S,
        hr: HrSchedule::from_points(&[
            (0.0, 62.0),
            (50.0, 64.0),
            (110.0, 150.0),
            (140.0, 158.0),
            (190.0, 104.0),
            (240.0, 92.0),
        ]),
        hr_variability_sd_ms: 25.0,
        wander_amplitude: 0.015,
        wander_hz: 0.3,
        noise_sd: 0.0008,
        motion: vec![MotionBurst {
            start_s: 121.0,
            duration_s: 4.0,
            amplitude: 0.2,
        }],
        finger_off: vec![FingerOff {
            start_s: 200.0,
            duration_s: 6.0,
        }],
        seed,
        ..SynthOptions::default()
    }
}

/// Generate the ride.
pub fn ride(seed: u64) -> Result<Synthetic, SynthError> {
    generate(&ride_options(seed))
}
