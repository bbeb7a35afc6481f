//! The one Ctrl-C (SIGINT, SIGTERM, SIGHUP) flag of the process: the
//! commands that must finish what they started (`listen`'s files,
//! `emulate --serial-link`'s link) poll it. `ctrlc` takes one handler per
//! process, so it is installed here once and shared.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Once;

use crate::Failure;

/// Set by Ctrl-C, SIGTERM or SIGHUP; cleared by each [`install`].
pub(crate) static STOP: AtomicBool = AtomicBool::new(false);
static HANDLER: Once = Once::new();

/// Installs the handler the first time (an error says what could then
/// not be finished: `unfinished`) and clears the flag for a new session.
pub(crate) fn install(unfinished: &str) -> Result<&'static AtomicBool, Failure> {
    let mut result = Ok(&STOP);
    HANDLER.call_once(|| {
        if let Err(e) = ctrlc::set_handler(|| STOP.store(true, Ordering::SeqCst)) {
            result = Err(Failure::refused(format!(
                "cannot catch Ctrl-C, so {unfinished}: {e}"
            )));
        }
    });
    STOP.store(false, Ordering::SeqCst);
    result
}
