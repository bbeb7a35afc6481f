//! plethwire host library: the `plethwire` command line ([`cli`]) and the
//! engines behind its subcommands, usable without it ([`filter_report`]).
//! Synthetic recordings with known beats, for tests and demos: [`synth`].
//! Reading and writing recordings (WFDB records and annotations, CSV): [`io`].
#![deny(missing_docs)]

pub mod cli;
pub mod filter_report;
pub mod io;
pub mod replay;
pub mod score;
pub mod synth;
