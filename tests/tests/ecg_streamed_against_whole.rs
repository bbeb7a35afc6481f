//! The streamed ECG reference (`EcgReference::streamed`, memory flat in
//! the record's length) against the whole-array one (`EcgReference::new`)
//! on real ECGs: every record's lead II of the BIDMC PPG and Respiration
//! Dataset (M. A. F. Pimentel et al., IEEE Trans. Biomed. Eng.
//! 64(8):1914-1923, 2017; PhysioNet doi:10.13026/C2208R; 125 Hz, 8 min
//! each) and both leads of MIT-BIH Arrhythmia Database record 100 (G. B.
//! Moody, R. G. Mark, IEEE Eng. Med. Biol. 20(3):45-50, 2001; 360 Hz,
//! 30 min), and the chest ECG of the IEEE Signal Processing Cup 2015
//! treadmill recordings (Z. Zhang, Z. Pi, B. Liu, IEEE Trans. Biomed. Eng.
//! 62(2):522-531, 2015; 12 records, 125 Hz, about 5 min, motion-laden).
//! The R peaks and unusable spans must be equal index for index,
//! and the band-pass bit for bit, on the look-ahead path alone (no file).

use std::path::{Path, PathBuf};

use plethwire::ecg::stages::{band_passed, sanitised};
use plethwire::ecg::stream::for_each_band_value;
use plethwire::ecg::{BandBlocks, EcgReference, RecordSource};
use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_records::Record;

/// Records of `folder` under the shared data that have a header.
fn records(folder: &str) -> Option<Vec<PathBuf>> {
    let dir = shared_data_dir()?.join(folder);
    let mut found: Vec<PathBuf> = std::fs::read_dir(&dir)
        .ok()?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "hea"))
        .map(|p| p.with_extension(""))
        .collect();
    found.sort();
    (!found.is_empty()).then_some(found)
}

/// Streamed == whole for signal `name` of `path`; the R peaks found.
fn check(path: &Path, name: &str) -> usize {
    let record = Record::open(path).unwrap();
    let index = record.pick_signal(Some(name)).unwrap();
    let fs = record.signal_fs(index);
    let whole = record.read_physical(index).unwrap();
    let expected = EcgReference::new(&whole, fs).unwrap();
    let what = format!("{} {name}", path.display());
    assert!(!expected.r_peaks.is_empty(), "{what}: no R peaks at all");
    for frames in [7, 1 << 14] {
        let mut source = RecordSource::new(&record, index, frames);
        let got = EcgReference::streamed(&mut source, fs).unwrap();
        assert_eq!(got, expected, "{what}: {frames}-frame blocks");
    }
    // The band-pass bit for bit, the default look-ahead and short blocks
    // (a boundary every 5 s to check), never through the file.
    let band = band_passed(&sanitised(&whole), fs);
    for block_s in [5.0, 60.0] {
        let blocks = BandBlocks {
            block_s,
            spill: false,
            ..BandBlocks::default()
        };
        let mut same = 0usize;
        let mut source = RecordSource::new(&record, index, 4096);
        for_each_band_value(&mut source, fs, blocks, |i, v| {
            assert_eq!(v.to_bits(), band[i].to_bits(), "{what}: band sample {i}");
            same += 1;
        })
        .unwrap();
        assert_eq!(same, band.len(), "{what}");
    }
    expected.r_peaks.len()
}

#[test]
fn bidmc_lead_ii_streamed_equals_whole() {
    let Some(paths) = records("bidmc") else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let peaks: usize = paths.iter().map(|p| check(p, "II")).sum();
    eprintln!(
        "BIDMC: {} records, {peaks} R peaks, streamed == whole",
        paths.len()
    );
}

#[test]
fn exercise_chest_ecg_streamed_equals_whole() {
    let Some(paths) = records("exercise") else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let peaks: usize = paths.iter().map(|p| check(p, "ECG")).sum();
    eprintln!(
        "exercise: {} records, {peaks} R peaks, streamed == whole",
        paths.len()
    );
}

#[test]
fn mit_bih_100_streamed_equals_whole() {
    let Some(record) = shared_data_dir()
        .map(|d| d.join("ecgref").join("100"))
        .filter(|r| r.with_extension("hea").is_file())
    else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let peaks = check(&record, "MLII") + check(&record, "V5");
    eprintln!("MIT-BIH 100: MLII and V5, {peaks} R peaks, streamed == whole");
}
