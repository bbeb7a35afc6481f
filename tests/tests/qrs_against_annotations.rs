//! The R-peak detector (Pan and Tompkins, IEEE TBME 32(3):230, 1985)
//! against cardiologist-reviewed beat annotations: MIT-BIH Arrhythmia
//! Database record 100 (G. B. Moody, R. G. Mark, IEEE Eng. Med. Biol.
//! 20(3):45, 2001; PhysioNet doi:10.13026/C2F305), signal MLII, 360 Hz,
//! 30 min, annotator `atr`. Beats only (`+` and other non-beat labels are
//! rhythm or signal notes); matched one to one within ±150 ms (ANSI/AAMI
//! EC57 practice). Targets Se ≥ 99.5 % and +P ≥ 99.5 % (the paper's own
//! figure on the whole database is about 99.3 % of beats found, from
//! memory; record 100 is a clean one), and the R peak placed within
//! 20 ms of the annotation for the median beat (annotations sit on the R
//! wave, common practice).

use plethwire::ecg::r_peaks;
use plethwire::score::{match_beats, match_pairs, MATCH_WINDOW_S};
use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_records::{annotation_path, read_annotations, read_wfdb_signal};

#[test]
fn record_100_r_peaks_match_the_annotated_beats() {
    let Some(record) = shared_data_dir()
        .map(|d| d.join("ecgref").join("100"))
        .filter(|r| r.with_extension("hea").is_file())
    else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let ecg = read_wfdb_signal(&record, Some("MLII")).unwrap();
    assert_eq!(ecg.fs, 360.0);
    let reference: Vec<u64> = read_annotations(annotation_path(&record, "atr"))
        .unwrap()
        .iter()
        .filter(|a| a.is_beat())
        .map(|a| a.sample as u64)
        .collect();
    // MIT-BIH record 100 has 2273 beats (Moody & Mark 2001, PhysioNet's
    // record table, from memory; the count is what this copy holds).
    assert_eq!(reference.len(), 2273);
    let found = r_peaks(&ecg.samples, ecg.fs).unwrap();
    let tol = (MATCH_WINDOW_S * ecg.fs).round() as u64;
    let m = match_beats(&reference, &found, tol);
    let (se, ppv) = (m.se().unwrap(), m.ppv().unwrap());
    eprintln!(
        "record 100: {} R peaks, TP {} FP {} FN {}, Se {:.3} % +P {:.3} %",
        found.len(),
        m.tp,
        m.fp,
        m.fn_,
        100.0 * se,
        100.0 * ppv
    );
    assert!(se >= 0.995, "Se {:.3} %", 100.0 * se);
    assert!(ppv >= 0.995, "+P {:.3} %", 100.0 * ppv);
    let mut off_ms: Vec<f64> = match_pairs(&reference, &found, tol)
        .iter()
        .map(|&(r, d)| r.abs_diff(d) as f64 * 1000.0 / ecg.fs)
        .collect();
    off_ms.sort_unstable_by(f64::total_cmp);
    let median = off_ms[off_ms.len() / 2];
    eprintln!("record 100: median |R peak - annotation| {median:.1} ms");
    assert!(median <= 20.0, "{median} ms");
}
