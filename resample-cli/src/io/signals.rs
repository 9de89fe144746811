//! Ctrl-C and termination signals (SIGINT, SIGTERM, SIGHUP, as a scheduler sends when a job
//! is cancelled or runs out of time): the first asks the work to stop at the next block,
//! which removes its temporary files; a second removes them at once and exits.

use std::sync::atomic::{AtomicBool, Ordering};

/// Set when a signal asked the work to stop.
pub static CANCEL: AtomicBool = AtomicBool::new(false);

/// Install the handler (once; later calls do nothing).
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        if CANCEL.swap(true, Ordering::SeqCst) {
            crate::io::staged::remove_all_live();
            std::process::exit(i32::from(crate::exit::Status::Interrupted.code()));
        }
        crate::report::print::err_line(
            "rerate: interrupted; removing unfinished outputs (again to exit at once)",
        );
    });
}
