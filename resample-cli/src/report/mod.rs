//! What rerate tells people: the design report ([`design`]), the per-file conversion
//! report ([`file`](mod@file)), the measured
//! figures of `verify` and `grade` ([`measured`]), the pictures ([`plot`],
//! [`tradeoff_plot`]) in one look ([`theme`]), number formatting shared by all of them
//! ([`format`](mod@format)), every JSON record's keys ([`json`]),
//! printing lines that never panics on a closed pipe ([`print`](mod@print)), the
//! stages a conversion ran ([`stages`]), and why a measurement falls short of its request
//! ([`shortfall`](mod@shortfall)).

pub mod design;
pub mod file;
pub mod format;
pub mod json;
pub mod measured;
pub mod plot;
pub mod print;
pub mod shortfall;
pub mod stages;
pub mod theme;
pub mod tradeoff;
pub mod tradeoff_plot;
