//! SIGINT and SIGTERM for the binary (the library installs no handler). One handler for the
//! whole run: while a design search runs, the first signal asks it to stop and keep the best
//! design so far (exit [`EXIT_NOT_PROVEN`]); any other signal removes every temporary output
//! file being written (`safe_write::remove_staged_temporaries`) and exits with
//! [`EXIT_INTERRUPTED`], so an interrupted command never leaves a partial file behind.

use std::sync::atomic::{AtomicBool, Ordering};

/// Exit code of an interrupted design: the best cycle so far was written, marked not proven
/// minimal.
pub const EXIT_NOT_PROVEN: u8 = 3;
/// Exit code after SIGINT or SIGTERM outside a design search (128 + SIGINT, the shell's
/// convention): nothing was written.
pub const EXIT_INTERRUPTED: i32 = 130;

/// Set when a running search should stop; read by the designer.
pub static CANCEL: AtomicBool = AtomicBool::new(false);
static COOPERATIVE: AtomicBool = AtomicBool::new(false);

/// Install the handler (once, at start-up). A failure to install leaves the default action
/// (the process dies; temporaries may remain) and is not an error of the command.
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        if COOPERATIVE.load(Ordering::SeqCst) && !CANCEL.swap(true, Ordering::SeqCst) {
            return;
        }
        let removed = pathsieve::safe_write::remove_staged_temporaries();
        eprintln!(
            "\ninterrupted: nothing written{}",
            if removed > 0 {
                format!(" ({removed} temporary file(s) removed)")
            } else {
                String::new()
            }
        );
        std::process::exit(EXIT_INTERRUPTED);
    });
}

/// While `on`, the first signal only sets [`CANCEL`] (a search that can stop cleanly).
pub fn cooperative(on: bool) {
    COOPERATIVE.store(on, Ordering::SeqCst);
}
