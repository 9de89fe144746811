//! What rerate tells people: the design report ([`design`]), the per-file conversion
//! report ([`file`](mod@file)), the measured
//! figures of `verify` and `grade` ([`measured`]), the pictures ([`plot`],
//! [`tradeoff_plot`]), and number formatting shared by all of them ([`format`](mod@format)).

pub mod design;
pub mod file;
pub mod format;
pub mod measured;
pub mod plot;
pub mod tradeoff;
pub mod tradeoff_plot;
