//! plethwire host library: the engines behind the `plethwire` command
//! (crate `plethwire-cli`), usable without a command line.
//! Filter design reports: [`filter_report`]. Replaying a recording through
//! the pipeline: [`replay`]; scoring beats against references: [`score`],
//! with the ECG as a beat reference: [`ecg`]; both match beats as
//! [`matching`] does.
//! Synthetic recordings with known beats come from `plethwire-synth`.
//! Choosing the channel with the clearest pulse among several: [`channel`].
//! Reading and writing recordings (WFDB, CSV) lives in `plethwire-records`.
//! An accelerometer recorded with the pulse as the motion reference: [`motion`].
//! Listening to a board over a serial port and recording it: [`listen`].
//! Running recordings through the firmware on the emulated board: [`emulate`].
//! A replay as one self-contained HTML page: [`report`].
//! The analog front end's budget, LED to ADC: [`frontend`].
//! Bring-up checks of a new sensor from blocks of samples: [`bringup`].
//! The words for verdicts, flags and states on the terminal: [`vocabulary`];
//! file readers' messages in the user's words: [`messages`].
#![deny(missing_docs)]

pub mod bringup;
pub mod channel;
pub mod ecg;
pub mod emulate;
pub mod filter_report;
pub mod frontend;
pub mod listen;
pub mod matching;
pub mod messages;
pub mod motion;
pub mod output_guard;
pub mod plot;
pub mod replay;
pub mod report;
pub mod score;
pub mod vocabulary;
