//! Which structure a fixed-ratio conversion ran: one polyphase stage, or two (a half-band
//! 2:1 stage then the polyphase stage, or the polyphase stage then a half-band 1:2), in
//! words for the text reports and as records for the JSON.

use resample_core::StagePlan;
use serde::Serialize;

/// One stage of a conversion, as reported (`stages` in the JSON records).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StageFact {
    /// "half-band" or "polyphase".
    pub kind: &'static str,
    /// The stage's input rate, Hz.
    pub in_rate: u32,
    /// The stage's output rate, Hz.
    pub out_rate: u32,
    /// Up-sampling factor L of the stage.
    pub up: u32,
    /// Down-sampling factor M of the stage.
    pub down: u32,
    /// Taps of the stage's prototype filter.
    pub taps: usize,
    /// Taps per output sample (per phase) of the stage.
    pub taps_per_phase: usize,
    /// Stopband measured on the stage's prototype, dB.
    pub measured_stopband_db: f64,
    /// Passband ripple measured on the stage's prototype, dB peak to peak.
    pub passband_ripple_db: f64,
}

/// The stages of one conversion, in the order the signal goes through them.
#[derive(Debug, Clone, PartialEq)]
pub struct StageFacts {
    /// The stages.
    pub list: Vec<StageFact>,
    /// One stage was forced (`--one-stage`).
    pub forced_one: bool,
}

impl StageFacts {
    /// The stages of `plan`.
    pub fn of(plan: &StagePlan) -> Self {
        let list = plan
            .stages()
            .iter()
            .enumerate()
            .map(|(i, d)| {
                let r = d.report();
                StageFact {
                    kind: if plan.half_band_stage() == Some(i) {
                        "half-band"
                    } else {
                        "polyphase"
                    },
                    in_rate: r.in_rate,
                    out_rate: r.out_rate,
                    up: r.up,
                    down: r.down,
                    taps: r.total_taps,
                    taps_per_phase: r.taps_per_phase,
                    measured_stopband_db: r.measured_stopband_db,
                    passband_ripple_db: r.passband_ripple_db,
                }
            })
            .collect();
        Self {
            list,
            forced_one: plan.spec().stage_choice_asked() == resample_core::StageChoice::Single,
        }
    }

    /// Whether the text report states the structure: for two stages, or one forced (an
    /// ordinary conversion's report stays as it was).
    pub fn worth_a_line(&self) -> bool {
        self.list.len() > 1 || self.forced_one
    }

    /// Taps per output of the polyphase stage (the one stage, or the longer of two).
    pub fn polyphase_taps_per_phase(&self) -> usize {
        self.list
            .iter()
            .find(|s| s.kind == "polyphase")
            .map_or(0, |s| s.taps_per_phase)
    }

    /// The structure in words: "one stage: 160/147 polyphase" or "two stages: half-band
    /// 2:1 (192000 -> 96000 Hz), then 147/320 polyphase".
    pub fn words(&self) -> String {
        let one = |s: &StageFact| match s.kind {
            "half-band" if s.down == 2 => {
                format!("half-band 2:1 ({} -> {} Hz)", s.in_rate, s.out_rate)
            }
            "half-band" => format!("half-band 1:2 ({} -> {} Hz)", s.in_rate, s.out_rate),
            _ => format!("{}/{} polyphase", s.up, s.down),
        };
        match self.list.as_slice() {
            [s] if self.forced_one => format!("one stage (forced): {}", one(s)),
            [s] => format!("one stage: {}", one(s)),
            stages => format!(
                "two stages: {}",
                stages.iter().map(one).collect::<Vec<_>>().join(", then ")
            ),
        }
    }
}
