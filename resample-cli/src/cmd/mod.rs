//! One module per subcommand: each parses nothing itself, calls the core, and prints.

pub mod convert;
pub mod demo;
pub mod design;
mod signals;
pub mod grade;
pub mod measured;
pub mod sweep;
pub mod verify;
