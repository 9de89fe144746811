//! Ctrl-C and termination signals (SIGINT, SIGTERM, SIGHUP, as a scheduler sends when a job
//! is cancelled or runs out of time): the first asks the work to stop at the next block,
//! which removes its temporary files; a second removes them at once and exits.

use std::sync::atomic::{AtomicBool, Ordering};

/// Exit code after an interruption: 128 + SIGINT (common practice, no source).
pub const EXIT_INTERRUPTED: u8 = 130;

/// Set when a signal asked the work to stop.
pub static CANCEL: AtomicBool = AtomicBool::new(false);

/// Install the handler (once; later calls do nothing).
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        if CANCEL.swap(true, Ordering::SeqCst) {
            resample_cli::staged::remove_all_live();
            std::process::exit(i32::from(EXIT_INTERRUPTED));
        }
        eprintln!("rerate: interrupted; removing unfinished outputs (again to exit at once)");
    });
}
