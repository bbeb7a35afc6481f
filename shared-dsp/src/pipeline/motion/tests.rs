//! The tracker on synthetic accelerometer signals of our own: a wrist at
//! rest, and an arm swinging once a stride with a jolt every step.

use super::*;

const FS: f32 = 125.0;

/// Small deterministic jitter in ±`amplitude` (a linear congruential
/// sequence), standing for sensor noise.
fn jitter(n: u32, amplitude: f32) -> f32 {
    let x = n.wrapping_mul(1_103_515_245).wrapping_add(12_345) >> 8;
    amplitude * ((x % 2001) as f32 / 1000.0 - 1.0)
}

/// Gravity on z, an arm swing of `swing_g` on x at `stride_hz`, and a
/// step jolt of half that on z at twice the stride rate.
fn running(n: u32, stride_hz: f32, swing_g: f32) -> [f32; 3] {
    let t = n as f32 / FS;
    let phase = 2.0 * core::f32::consts::PI * stride_hz * t;
    [
        swing_g * libm::sinf(phase) + jitter(n, 0.01),
        0.3 + jitter(n + 7, 0.01),
        1.0 + 0.5 * swing_g * libm::sinf(2.0 * phase + 0.4) + jitter(n + 13, 0.01),
    ]
}

fn fed(seconds: f32, sample: impl Fn(u32) -> [f32; 3]) -> MotionTracker {
    let mut m = MotionTracker::new(FS).unwrap();
    for n in 0..(seconds * FS) as u32 {
        m.push(sample(n));
    }
    m
}

#[test]
fn a_wrist_at_rest_never_flags_a_beat() {
    let m = fed(20.0, |n| [jitter(n, 0.02), 0.3 + jitter(n + 3, 0.02), 1.0]);
    assert!(m.strength_g() < 0.05, "{}", m.strength_g());
    for ibi in [300.0, 500.0, 714.0, 1000.0] {
        assert_eq!(m.judge(Some(ibi), Some(1.0)), Verdict::Still);
        assert_eq!(m.judge(Some(ibi), Some(2.0)), Verdict::Still);
    }
    assert_eq!(m.judge(None, None), Verdict::Still);
}

#[test]
fn the_stride_period_is_found_and_beats_at_it_are_locked() {
    // Stride 1.4 Hz (714 ms), steps 2.8 Hz (357 ms): a runner's wrist.
    let m = fed(20.0, |n| running(n, 1.4, 1.0));
    assert!(m.strength_g() > STRONG_G);
    let (period, alike) = m.period().unwrap();
    // Known by construction: 1000 / 1.4 ms.
    assert!((period - 714.3).abs() < 15.0, "{period}");
    assert!(alike > 0.8, "{alike}");
    // A beat interval at the stride, at two strides, at a step: locked,
    // even when the intervals are steady.
    for ibi in [714.0, 690.0, 1430.0, 357.0] {
        assert_eq!(m.judge(Some(ibi), Some(1.02)), Verdict::Locked, "{ibi}");
    }
}

#[test]
fn under_strong_motion_at_another_period_only_steady_intervals_stand() {
    let m = fed(20.0, |n| running(n, 1.4, 1.0));
    // 150 bpm: 12 % from the step, 44 % from the stride.
    assert_eq!(m.judge(Some(400.0), Some(1.05)), Verdict::Apart);
    assert!(!Verdict::Apart.flags());
    // The same interval after scattered ones, or with too few behind it.
    assert_eq!(m.judge(Some(400.0), Some(1.5)), Verdict::Unsteady);
    assert_eq!(m.judge(Some(400.0), None), Verdict::Unsteady);
    assert_eq!(m.judge(None, Some(1.0)), Verdict::Unsteady);
    assert!(Verdict::Unsteady.flags() && Verdict::Locked.flags());
}

#[test]
fn a_weak_swing_is_still() {
    let m = fed(20.0, |n| running(n, 1.4, 0.1));
    assert!(m.strength_g() < STRONG_G, "{}", m.strength_g());
    assert_eq!(m.judge(Some(714.0), Some(1.5)), Verdict::Still);
}

#[test]
fn without_an_accelerometer_every_beat_is_still() {
    let m = NoMotion;
    const { assert!(!NoMotion::JUDGES && MotionTracker::JUDGES) };
    assert_eq!(m.judge(Some(714.0), Some(2.0)), Verdict::Still);
    assert_eq!(m.judge(None, None), Verdict::Still);
    assert_eq!(core::mem::size_of::<NoMotion>(), 0);
}

#[test]
fn rates_outside_the_range_are_refused_and_other_rates_track_alike() {
    assert!(MotionTracker::new(10.0).is_err());
    assert!(MotionTracker::new(f32::NAN).is_err());
    assert!(MotionTracker::new(2000.0).is_err());
    for fs in [20.0, 25.0, 50.0, 100.0, 400.0, 1000.0] {
        let mut m = MotionTracker::new(fs).unwrap();
        assert!(m.track_rate_hz() > 12.4 && m.track_rate_hz() <= 25.0);
        for n in 0..(20.0 * fs) as u32 {
            let t = n as f32 / fs;
            let phase = 2.0 * core::f32::consts::PI * 1.4 * t;
            m.push([libm::sinf(phase), 0.0, 1.0]);
        }
        let (period, _) = m.period().unwrap();
        assert!((period - 714.3).abs() < 20.0, "{fs} Hz: {period}");
    }
}

#[test]
fn a_non_finite_axis_holds_its_last_value() {
    let m = fed(20.0, |n| {
        let mut a = running(n, 1.4, 1.0);
        if n % 50 == 0 {
            a[1] = f32::NAN;
        }
        a
    });
    assert!(m.strength_g().is_finite());
    assert!(m.period().is_some());
}

#[test]
fn the_tracker_fits_in_about_a_kilobyte() {
    // Memory is budgeted on the boards (scripts/check-budgets): 1032 bytes
    // here, where a usize takes 8 bytes; 1016 on a 32-bit core.
    let size = core::mem::size_of::<MotionTracker>();
    let usizes = 4 * core::mem::size_of::<usize>();
    assert!(size <= 1000 + usizes, "{size} bytes");
}
