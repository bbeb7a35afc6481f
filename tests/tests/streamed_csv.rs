//! Every phone-camera recording (Neshitov et al., Sensors 21(20):6798,
//! 2021; CC0: a time column in ms, uneven frames, R, G and B) replayed
//! streamed ([`plethwire::replay::open`], the file read a pass at a time)
//! and loaded whole ([`plethwire::replay::load`]): the same input, time
//! base, channel and beats, bit for bit, with the defaults and with a
//! grid rate given.

use plethwire::replay::{load, open, replay_recording, Source};
use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_dsp::pipeline::Config;

#[test]
fn every_phone_recording_streams_the_beats_of_the_whole_read() {
    let Some(data) = shared_data_dir().filter(|d| d.join("phonefinger").is_dir()) else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let mut files: Vec<_> = std::fs::read_dir(data.join("phonefinger"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "csv"))
        .collect();
    files.sort();
    // The data's README: 11 recordings.
    assert_eq!(files.len(), 11);
    let sources = [
        Source::default(),
        Source {
            rate: Some(50.0),
            time_column: Some("time".into()),
            time_unit: Some("ms".into()),
            ..Source::default()
        },
    ];
    let mut resampled = 0;
    for path in &files {
        for source in &sources {
            let whole = load(path, source).unwrap();
            let streamed = open(path, source).unwrap();
            let what = format!("{} {:?}", path.display(), source.rate);
            assert_eq!(streamed.head.input, whole.input, "{what}");
            resampled += usize::from(whole.input.resampled.is_some());
            assert_eq!(streamed.head.signal.name, whole.signal.name, "{what}");
            assert_eq!(streamed.head.signal.fs, whole.signal.fs, "{what}");
            assert_eq!(streamed.len, whole.signal.samples.len() as u64, "{what}");
            let config = Config::new(whole.signal.fs as f32);
            let want = replay_recording(&whole, config).unwrap();
            assert!(!want.beats.is_empty(), "{what}");
            assert_eq!(streamed.replay(config).unwrap(), want, "{what}");
        }
    }
    // The given grid always resamples; so do most phones' own frames.
    assert!(
        resampled > files.len(),
        "{resampled} of {} resampled",
        2 * files.len()
    );
}
