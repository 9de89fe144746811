//! One module per subcommand: each parses nothing itself, calls the core, and prints.

pub mod convert;
pub mod demo;
pub mod design;
pub mod grade;
pub mod sweep;
pub mod tradeoff;
pub mod verify;
