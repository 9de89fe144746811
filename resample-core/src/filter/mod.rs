//! The conversion filter: what is asked ([`FilterSpec`], [`Phase`]), the Kaiser window and
//! the windowed-sinc prototype, its minimum-phase form (`minphase`), the measured
//! lengthening search, the response and group-delay measurement, and
//! what was built ([`Design`], [`DesignReport`]), including the delay every engine reads.

mod design;
mod first_attempt;
mod glide;
pub mod minphase;
pub mod response;
mod spec;
mod stages;
pub mod window;

pub use design::{Design, DesignReport, GROUP_DELAY_REF_HZ};
pub use glide::{GlideBand, GlideDesign, GlideReport, Interpolation};
pub use spec::{FilterSpec, Phase, StageChoice};
pub use stages::{
    StagePlan, HALF_BAND_OVERHEAD_TAPS, HALF_BAND_UP_OVERHEAD_TAPS, OUTPUT_OVERHEAD_TAPS,
    SHORT_STAGE_MARGIN_DB, TWO_STAGE_MAX_COST_FRACTION,
};
