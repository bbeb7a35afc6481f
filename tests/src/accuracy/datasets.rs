//! The shared datasets the accuracy picture covers, how each is read and
//! what it is scored against (`../shared/data/README.md` describes them;
//! the citations are the ones it asks for).

use plethwire::replay::Source;
use plethwire::score::records::References;

/// Which dataset a figure belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DatasetId {
    /// Finger PPG with expert-reviewed peaks.
    Capnobase,
    /// Intensive-care finger PPG with ECG lead II and monitor numerics.
    Bidmc,
    /// Wrist PPG on a treadmill with a chest ECG.
    Exercise,
    /// Phone-camera fingertip PPG with chest-strap R-R lists.
    Phonefinger,
}

/// One shared dataset.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dataset {
    /// Which one.
    pub id: DatasetId,
    /// Its folder under the shared data folder.
    pub folder: &'static str,
    /// The pulse signal scored (`None`: the clearest channel, chosen by
    /// `plethwire::channel` as `plethwire score` does).
    pub signal: Option<&'static str>,
    /// The ECG signal of the same record the pulses are scored against.
    pub ecg: Option<&'static str>,
    /// The accelerometer signals (x, y, z) the pipeline takes as its
    /// motion reference, where the recording has them.
    pub motion: Option<[&'static str; 3]>,
    /// Recordings the folder holds (the data's README).
    pub recordings: usize,
    /// How the table names it.
    pub label: &'static str,
    /// The citation the data's README asks for.
    pub citation: &'static str,
}

impl Dataset {
    /// How its recordings are loaded.
    pub fn source(&self) -> Source {
        Source {
            signal: self.signal.map(String::from),
            motion: self.motion.map(|axes| axes.map(String::from)),
            ..Source::default()
        }
    }

    /// What its recordings are scored against (each reference is used
    /// where its file exists).
    pub fn references(&self) -> References {
        References {
            ecg: self.ecg.map(String::from),
            ..References::default()
        }
    }
}

/// Every shared dataset, in the table's order.
pub const DATASETS: [Dataset; 4] = [
    Dataset {
        id: DatasetId::Capnobase,
        folder: "capnobase",
        signal: Some("PLETH"),
        ecg: None,
        motion: None,
        recordings: 21,
        label: "capnobase (PLETH vs expert peaks)",
        citation: "CapnoBase IEEE TBME Respiratory Rate Benchmark: W. Karlen et al., \
                   IEEE Trans. Biomed. Eng. 60(7):1946–1953, 2013; doi:10.5683/SP2/NLB8IT",
    },
    Dataset {
        id: DatasetId::Bidmc,
        folder: "bidmc",
        signal: Some("PLETH"),
        ecg: Some("II"),
        motion: None,
        recordings: 16,
        label: "bidmc (PLETH vs ECG lead II; monitor)",
        citation: "BIDMC PPG and Respiration Dataset v1.0.0: M. A. F. Pimentel et al., \
                   IEEE Trans. Biomed. Eng. 64(8):1914–1923, 2017; PhysioNet doi:10.13026/C2208R \
                   (A. L. Goldberger et al., Circulation 101(23):e215–e220, 2000)",
    },
    Dataset {
        id: DatasetId::Exercise,
        folder: "exercise",
        signal: Some("PPG1"),
        ecg: Some("ECG"),
        motion: Some(["ACCX", "ACCY", "ACCZ"]),
        recordings: 12,
        label: "exercise (PPG1, accelerometer as motion reference, vs ECG windows and beats)",
        citation: "IEEE Signal Processing Cup 2015 training set: Z. Zhang, Z. Pi, B. Liu, \
                   IEEE Trans. Biomed. Eng. 62(2):522–531, 2015",
    },
    Dataset {
        id: DatasetId::Phonefinger,
        folder: "phonefinger",
        signal: None,
        ecg: None,
        motion: None,
        recordings: 11,
        label: "phonefinger (auto channel vs strap R-R)",
        citation: "A. Neshitov et al., Sensors 21(20):6798, 2021; CC0 1.0",
    },
];
