//! The engines that run a design's table over audio: the render loop they share, the
//! chunked [`StreamConverter`] for live audio, whole-signal [`offline`] conversion, and the
//! [`segments`] plan that cuts one long conversion into pieces converted on several cores
//! with the same result; and the any-ratio [`GlideConverter`] for drifting clocks, with
//! the [`DriftFollower`] that steers its ratio between two clock domains.

mod anyratio;
mod chain;
mod follower;
mod halfband;
pub mod offline;
mod render;
pub mod segments;
mod stream;

pub use anyratio::GlideConverter;
pub use chain::ChainConverter;
pub use follower::DriftFollower;
pub use stream::{Progress, StreamConverter};

use crate::table::GroupTable;
use crate::{Design, Result, Sample};

impl<T: Sample> GroupTable<T> {
    /// The table an engine runs for `design`: its prototype (each tap times L, rounded once
    /// to `T`) in groups of `lanes` outputs, aligned through the delay the design states.
    pub(crate) fn for_design(design: &Design, lanes: usize) -> Result<Self> {
        let pair = design.pair();
        Self::from_prototype(
            design.taps(),
            u64::from(pair.up()),
            u64::from(pair.down()),
            design.delay(),
            lanes,
        )
    }
}
