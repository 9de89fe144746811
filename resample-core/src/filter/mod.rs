//! The conversion filter: what is asked ([`FilterSpec`]), the Kaiser window and the
//! windowed-sinc prototype, the measured lengthening search, the response measurement, and
//! what was built ([`Design`], [`DesignReport`]), including the delay every engine reads.

mod design;
pub mod response;
mod spec;
pub mod window;

pub use design::{Design, DesignReport};
pub use spec::FilterSpec;
