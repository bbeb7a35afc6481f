//! `plethwire score` on the phone-camera recordings with their chest-strap
//! R-R lists (Neshitov et al., Sensors 21(20):6798, 2021; CC0), with the
//! defaults: time column `time` found by name, its unit (ms) guessed from
//! the frame steps, uneven frames resampled onto the median frame rate,
//! the colour channel chosen, its polarity down.
//!
//! Only what holds by construction of a correct input path and alignment
//! is asserted here (every recording loads and is resampled, a channel with
//! a pulse is chosen, the strap list is aligned with a determined offset in
//! most recordings, and the figures are consistent with one another); the
//! accuracy targets of the pipeline are reported in docs/accuracy.md.

use plethwire::replay::Source;
use plethwire::score::records::{score_all, References};
use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_dsp::pipeline::Config;

#[test]
fn every_phone_recording_loads_chooses_a_channel_and_aligns_its_strap() {
    let Some(data) = shared_data_dir().filter(|d| d.join("phonefinger").is_dir()) else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let scores = score_all(
        &[data.join("phonefinger")],
        &Source::default(),
        Config::new(100.0),
        &References::default(),
        |_| {},
    )
    .unwrap();
    // The data's README: 11 recordings, each with its .rr.txt.
    assert_eq!(scores.records.len(), 11);
    let (mut determined, mut resampled) = (0, 0);
    for r in &scores.records {
        let input = &r.input;
        assert_eq!(input.time_column.as_deref(), Some("time"), "{}", r.record);
        assert_eq!(
            input.time_unit,
            Some(plethwire_records::TimeUnit::Ms),
            "{}",
            r.record
        );
        // Frames within a quarter period of a uniform grid are taken as
        // they are; the others are resampled, at about 30 frames a second
        // (the data's README).
        if let Some(rs) = input.resampled {
            resampled += 1;
            assert!((25.0..=35.0).contains(&rs.grid_hz), "{}: {rs:?}", r.record);
            assert!(rs.longest_gap_s > 1.0 / rs.grid_hz, "{}: {rs:?}", r.record);
        }
        let choice = input.channel.as_ref().expect("R, G and B to choose from");
        assert_eq!(choice.candidates.len(), 3);
        let best = choice
            .candidates
            .iter()
            .map(|c| c.figure)
            .fold(0.0, f64::max);
        let chosen = choice
            .candidates
            .iter()
            .find(|c| c.name == choice.chosen)
            .unwrap();
        assert_eq!(chosen.figure, best, "{}", r.record);
        // A finger on a camera gives a pulse in some channel.
        assert!(chosen.figure > 0.3, "{}: {choice:?}", r.record);
        assert!(input.inverted, "{}: colour channels point down", r.record);
        let strap = r.strap.as_ref().expect("every recording has its .rr.txt");
        assert!(strap.strap_intervals >= 99, "{}", r.record);
        assert!(strap.matched_beats <= strap.strap_intervals + 1);
        assert!(strap.intervals_good.count <= strap.intervals_all.count);
        let a = strap.alignment;
        assert!(a.score >= a.rival_score && (0.0..=1.0).contains(&a.margin));
        if a.determined {
            determined += 1;
            // Placed where the strap's beats meet our peaks: most of them.
            assert!(
                strap.matched_beats * 2 > strap.strap_intervals,
                "{}: {strap:?}",
                r.record
            );
        }
        eprintln!(
            "{}: {} ({:.2}), offset {:.3} s margin {:.2}, HR {:?} vs {:?}",
            r.record,
            choice.chosen,
            chosen.figure,
            a.offset_ms / 1000.0,
            a.margin,
            strap.mean_hr_bpm.ours,
            strap.mean_hr_bpm.strap
        );
    }
    assert!(determined >= 8, "offset determined in {determined} of 11");
    assert!(resampled >= 6, "uneven frames in {resampled} of 11");
}
