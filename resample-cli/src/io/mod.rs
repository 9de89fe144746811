//! Files and folders: [`staged::StagedFile`], the only way rerate writes a file (under a
//! temporary name in the target folder, renamed into place when complete; outputs, plots
//! and exported taps alike; stale temporary files of killed runs are removed), the folder walk that finds inputs ([`walk`]), and the
//! signal handling that removes unfinished files on Ctrl-C ([`signals`]), and what a path
//! names when it is not a regular file ([`special_kind`]).

mod kind;
pub mod signals;
pub mod staged;
mod stale;
pub mod walk;

pub use kind::{kind_of, special_kind};
