//! rerate's integration tests, one test binary: the built `rerate` run as a user runs it,
//! always in fresh temporary folders (never the working folder); shared helpers in `util`.

mod bad_input;
mod batches;
mod clock;
mod conformance;
mod design_cli;
mod first_use;
mod formats;
mod grade_convert;
mod hostile;
mod levels;
mod measure_cli;
mod metadata;
mod pictures;
mod safety;
mod stages;
mod tradeoff;
mod util;
