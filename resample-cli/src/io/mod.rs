//! Files and folders: [`staged::StagedFile`], the only way rerate writes a file (under a
//! temporary name in the target folder, renamed into place when complete; outputs, plots
//! and exported taps alike), the folder walk that finds inputs ([`walk`]), and the
//! signal handling that removes unfinished files on Ctrl-C ([`signals`]).

pub mod signals;
pub mod staged;
pub mod walk;
