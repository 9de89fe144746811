//! One stage or two: for large ratios a half-band 2:1 stage (or 1:2 after the polyphase
//! stage, when up-sampling) leaves the polyphase stage a transition band twice as wide in
//! its own rate's terms, and the pair costs less per input sample than one stage. The
//! half-band stage passes up to the lower Nyquist frequency of the whole conversion and
//! stops from its middle rate minus that, so nothing it lets through can reach the output
//! below the lower Nyquist frequency; every other tap is zero. The choice
//! is made here and only here ([`FilterSpec::plan`]), from a cost model of the kernels'
//! work, and can be forced either way ([`FilterSpec::stage_choice`]).
//!
//! Each stage is a measured [`Design`] (the same lengthening search as a single stage). The
//! stopband request holds for each stage, so the measured stopband of the pair (the smaller
//! of the two) meets it; the passband ripple allowance of the request is split: the short
//! stage asks [`SHORT_STAGE_MARGIN_DB`] more stopband (its ripple is then about a third of
//! the polyphase stage's), and the polyphase stage is asked for more until the two measured
//! ripples together fit the allowance.

use super::design::{design_half_band, design_kaiser};
use super::response::ripple_allowance_db;
use super::spec::{FilterSpec, Phase, StageChoice};
use super::window::kaiser_length;
use crate::limits::{MAX_PASSBAND, MAX_STOPBAND_DB, MIN_PASSBAND, MIN_STOPBAND_DB, PHASE_ALIGN};
use crate::{Design, Error, RatePair, Result};

/// Extra stopband asked of the short 2:1 / 1:2 stage, dB: its passband ripple then takes
/// about a third of the allowance of the request, and it costs only a few taps more.
pub const SHORT_STAGE_MARGIN_DB: f64 = 10.0;

/// Two stages are chosen only when the model says they cost at most this fraction of one
/// stage (a gain of at least 1.4x; below that the figures do not justify the second
/// stage's extra latency and code path).
pub const TWO_STAGE_MAX_COST_FRACTION: f64 = 1.0 / 1.4;

/// Kernel work per output frame besides its taps, in taps (loads, stores, the group
/// bookkeeping): calibrated on the `stages` bench (see benches/README.md).
pub const OUTPUT_OVERHEAD_TAPS: f64 = 8.0;

/// Work of a 2:1 half-band stage and of the queues between the stages per frame of its
/// input, besides its tap pairs, in the cost model's units (one unit: one tap of the
/// polyphase kernels). Calibrated on the `stages` bench (benches/README.md): with the
/// half-band kernel (`kernel::halfband`) and its even/odd planes, the measured two-stage
/// times of 192k -> 44.1k, 48k -> 8k and 48k -> 16k at 120 and 140 dB fit 19 to 43 units;
/// 35 keeps the automatic choice to the cases measured at 1.4x or more (it was 100 with
/// the plain-Rust stage, when two stages paid for no pair).
pub const HALF_BAND_OVERHEAD_TAPS: f64 = 35.0;

/// The same for a 1:2 half-band stage (the last stage of an up-sampling), per frame of its
/// output: the odd outputs' pairs, the even outputs' centre tap, the interleaving and the
/// queues. Calibrated on the `stages` bench's 8k -> 48k (82 to 91 units fit); two stages
/// do not pay there.
pub const HALF_BAND_UP_OVERHEAD_TAPS: f64 = 90.0;

/// Most extra dB asked of the polyphase stage so that the two ripples fit the allowance.
const MAX_RIPPLE_STEPS: usize = 8;

/// The stages of a conversion and why they were chosen.
///
/// ```
/// use resample_core::{FilterSpec, StageChoice};
/// // 192 kHz -> 44.1 kHz in two stages: half-band 2:1 to 96 kHz, then 96 kHz -> 44.1 kHz.
/// let plan = FilterSpec::new(192_000, 44_100)
///     .stopband_db(120.0)
///     .stage_choice(StageChoice::Two)
///     .plan()?;
/// assert_eq!(plan.stages().len(), 2);
/// assert_eq!(plan.stages()[0].pair().out_rate(), 96_000);
/// assert!(plan.measured_stopband_db() >= 120.0);
/// // Near 1:1 there is nothing to gain: one stage.
/// let plan = FilterSpec::new(44_100, 48_000).stopband_db(120.0).plan()?;
/// assert_eq!(plan.stages().len(), 1);
/// # Ok::<(), resample_core::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct StagePlan {
    spec: FilterSpec,
    pair: RatePair,
    stages: Vec<Design>,
    half_band: Option<usize>,
    single_cost: f64,
    two_stage_cost: Option<f64>,
}

/// The modelled cost of one conversion, in multiply-adds (and the per-output overhead)
/// per input frame, from Kaiser's length formula: what [`FilterSpec::plan`] compares.
fn stage_cost(up: u64, down: u64, taps: usize, outputs_per_input: f64) -> f64 {
    let _ = down;
    let tpp = (taps as u64).div_ceil(up) as usize;
    let padded = tpp.div_ceil(PHASE_ALIGN) * PHASE_ALIGN;
    outputs_per_input * (padded as f64 + OUTPUT_OVERHEAD_TAPS)
}

/// Modelled cost of a stage from `in_rate` to `out_rate` with band edges `f_pass`,
/// `f_stop` (Hz) and the request `db`, per frame of the stage's input.
fn modelled(in_rate: u32, out_rate: u32, f_pass: f64, f_stop: f64, db: f64) -> Option<f64> {
    let pair = RatePair::new(in_rate, out_rate).ok()?;
    let up = u64::from(pair.up());
    let proto_rate = f64::from(in_rate) * up as f64;
    let width = (f_stop - f_pass) / (proto_rate / 2.0);
    let (taps, _) = kaiser_length(db, width);
    Some(stage_cost(
        up,
        pair.down().into(),
        taps | 1,
        f64::from(out_rate) / f64::from(in_rate),
    ))
}

/// Modelled cost of a half-band stage between `2 mid` and `mid` passing up to `nyq`, per
/// frame of its higher rate: its pairs of nonzero taps (the taps are symmetric, every other
/// one is zero: about a quarter of the taps per frame of the lower rate) plus the overhead.
fn half_band_cost(mid: f64, nyq: f64, db: f64, overhead: f64) -> f64 {
    let width = (mid - 2.0 * nyq) / mid;
    let (taps, _) = kaiser_length(db, width);
    taps as f64 / 8.0 + overhead
}

/// The calibrated overhead of a half-band stage: 2:1 (first stage) or 1:2 (last).
fn half_band_overhead(short_first: bool) -> f64 {
    if short_first {
        HALF_BAND_OVERHEAD_TAPS
    } else {
        HALF_BAND_UP_OVERHEAD_TAPS
    }
}

/// The two-stage layout for a rate pair, if it has one: the rates in the middle and
/// whether the short stage comes first (down-sampling) or last (up-sampling).
#[derive(Debug, Clone, Copy)]
struct Layout {
    mid: u32,
    short_first: bool,
}

fn layout(spec: &FilterSpec) -> Option<Layout> {
    let (a, b) = (spec.in_rate(), spec.out_rate());
    if spec.phase != Phase::Linear || spec.stages == StageChoice::Single {
        return None;
    }
    // The half-band stage passes up to the lower Nyquist frequency `nyq` and stops from
    // `mid - nyq`: there must be a transition band between them.
    if a % 2 == 0 && u64::from(a) > 2 * u64::from(b) {
        Some(Layout {
            mid: a / 2,
            short_first: true,
        })
    } else if b % 2 == 0 && u64::from(b) > 2 * u64::from(a) {
        Some(Layout {
            mid: b / 2,
            short_first: false,
        })
    } else {
        None
    }
}

impl FilterSpec {
    /// Check the spec and choose one stage or two, then design the stages. With
    /// [`StageChoice::Auto`] (the default) two stages are chosen when the modelled cost
    /// (multiply-adds and calibrated overheads per input frame: [`OUTPUT_OVERHEAD_TAPS`],
    /// [`HALF_BAND_OVERHEAD_TAPS`], [`HALF_BAND_UP_OVERHEAD_TAPS`]) of two is at most [`TWO_STAGE_MAX_COST_FRACTION`] of
    /// one; [`StageChoice::Single`] and [`StageChoice::Two`] force the choice. Two stages
    /// need linear phase and a rate pair with more than 2:1 between the rates and the
    /// higher one even.
    pub fn plan(&self) -> Result<StagePlan> {
        let pair = RatePair::new(self.in_rate(), self.out_rate())?;
        let a = self.stopband_db;
        if !(MIN_STOPBAND_DB..=MAX_STOPBAND_DB).contains(&a) {
            return Err(Error::StopbandOutOfRange { db: a });
        }
        let p = self.passband;
        if !(MIN_PASSBAND..=MAX_PASSBAND).contains(&p) {
            return Err(Error::PassbandOutOfRange { fraction: p });
        }
        let nyq = pair.lower_nyquist();
        let f_pass = p * nyq;
        let single_cost =
            modelled(pair.in_rate(), pair.out_rate(), f_pass, nyq, a).unwrap_or(f64::INFINITY);
        let two = layout(self).and_then(|l| {
            let (a_rate, b_rate) = (self.in_rate(), self.out_rate());
            let mid = f64::from(l.mid);
            // The half-band stage per frame of the higher of its two rates.
            let short = half_band_cost(
                mid,
                nyq,
                a + SHORT_STAGE_MARGIN_DB,
                half_band_overhead(l.short_first),
            );
            let cost = if l.short_first {
                let long = modelled(l.mid, b_rate, f_pass, nyq, a)?;
                short + 0.5 * long
            } else {
                let long = modelled(a_rate, l.mid, f_pass, nyq, a)?;
                long + 2.0 * mid / f64::from(a_rate) * short
            };
            Some((l, cost))
        });
        let chosen = two.filter(|&(_, c)| {
            self.stages == StageChoice::Two || c <= TWO_STAGE_MAX_COST_FRACTION * single_cost
        });
        let (stages, half_band) = match chosen {
            None => (vec![self.design()?], None),
            Some((l, _)) => (
                self.design_two(pair, l)?,
                Some(if l.short_first { 0 } else { 1 }),
            ),
        };
        Ok(StagePlan {
            spec: *self,
            pair,
            stages,
            half_band,
            single_cost,
            two_stage_cost: two.map(|(_, c)| c),
        })
    }

    /// Design the two stages of `l`: the short stage with the margin, the polyphase stage
    /// at the request, raised until the measured ripples fit the allowance together.
    fn design_two(&self, pair: RatePair, l: Layout) -> Result<Vec<Design>> {
        let a = self.stopband_db;
        let nyq = pair.lower_nyquist();
        let (short_pair, long_in, long_out) = if l.short_first {
            (
                RatePair::new(self.in_rate(), l.mid)?,
                l.mid,
                self.out_rate(),
            )
        } else {
            (
                RatePair::new(l.mid, self.out_rate())?,
                self.in_rate(),
                l.mid,
            )
        };
        let short_spec = FilterSpec::new(short_pair.in_rate(), short_pair.out_rate())
            .stopband_db(a + SHORT_STAGE_MARGIN_DB)
            .passband(nyq / short_pair.lower_nyquist())
            .table_budget_bytes(self.table_budget)
            .stage_choice(StageChoice::Single);
        let short = design_half_band(short_pair, short_spec, nyq)?;
        let long_pair = RatePair::new(long_in, long_out)?;
        let allowed = ripple_allowance_db(a);
        let mut ask = a;
        let mut long;
        let mut steps = 0;
        loop {
            let long_spec = FilterSpec::new(long_in, long_out)
                .stopband_db(ask)
                .passband(self.passband)
                .table_budget_bytes(self.table_budget)
                .stage_choice(StageChoice::Single);
            long = design_kaiser(long_pair, long_spec)?;
            let ripple = short.report().passband_ripple_db + long.report().passband_ripple_db;
            steps += 1;
            if ripple <= allowed || steps > MAX_RIPPLE_STEPS {
                break;
            }
            ask += 1.0;
        }
        Ok(if l.short_first {
            vec![short, long]
        } else {
            vec![long, short]
        })
    }
}

impl StagePlan {
    /// The spec this plan was made from.
    pub fn spec(&self) -> FilterSpec {
        self.spec
    }

    /// The overall rate pair.
    pub fn pair(&self) -> RatePair {
        self.pair
    }

    /// The stages in the order the signal goes through them: one, or two (for
    /// down-sampling the 2:1 stage first, for up-sampling the 1:2 stage last).
    pub fn stages(&self) -> &[Design] {
        &self.stages
    }

    /// Which stage is the half-band one (2:1 or 1:2, every other tap zero), for two stages.
    pub fn half_band_stage(&self) -> Option<usize> {
        self.half_band
    }

    /// True for two stages.
    pub fn is_two_stage(&self) -> bool {
        self.stages.len() == 2
    }

    /// The single stage's design (`None` for two stages).
    pub fn single(&self) -> Option<&Design> {
        match self.stages.as_slice() {
            [d] => Some(d),
            _ => None,
        }
    }

    /// Stopband measured on the stages' prototypes: the smaller of the two (each stage's
    /// stopband covers everything that would reach the output through it).
    pub fn measured_stopband_db(&self) -> f64 {
        self.stages
            .iter()
            .map(|d| d.report().measured_stopband_db)
            .fold(f64::INFINITY, f64::min)
    }

    /// Passband ripple of the stages' prototypes added up, dB peak to peak (a bound on the
    /// ripple of the pair).
    pub fn passband_ripple_db(&self) -> f64 {
        self.stages
            .iter()
            .map(|d| d.report().passband_ripple_db)
            .sum()
    }

    /// The passband edge, Hz (the same for every stage).
    pub fn passband_edge_hz(&self) -> f64 {
        self.stages[self.stages.len() - 1]
            .report()
            .passband_edge_hz
            .min(self.stages[0].report().passband_edge_hz)
    }

    /// Zero frames run through a two-stage conversion before its input and after it (0 for
    /// one stage): at least the first stage's reach (half its prototype, in input frames),
    /// rounded up to a multiple of the overall pair's down factor `M`, so that the
    /// `edge_frames() L / M` outputs they add in front are whole frames and are dropped.
    ///
    /// The first stage's output rings before the first input frame and after the last
    /// (its filter reaches both ways); run on the zeros around the signal, that ringing
    /// reaches the second stage, as it would in one stage, and the edges of the output
    /// agree with the single stage's within the stopband level.
    pub fn edge_frames(&self) -> u64 {
        let Some(first) = self.stages.first().filter(|_| self.is_two_stage()) else {
            return 0;
        };
        let up = u64::from(first.pair().up());
        let reach = (first.taps().len() as u64).div_ceil(2 * up) + 1;
        let down = u64::from(self.pair.down());
        reach.div_ceil(down) * down
    }

    /// Output frames the leading [`StagePlan::edge_frames`] add in front (dropped).
    pub fn edge_output_frames(&self) -> u64 {
        self.edge_frames() / u64::from(self.pair.down()) * u64::from(self.pair.up())
    }

    /// Delay of the whole conversion in input frames: each stage's delay at its own input
    /// rate, brought to the overall input rate and added.
    pub fn latency_input_frames(&self) -> f64 {
        let in_rate = f64::from(self.pair.in_rate());
        self.stages
            .iter()
            .map(|d| d.report().latency_input_frames * in_rate / f64::from(d.pair().in_rate()))
            .sum()
    }

    /// Delay of the whole conversion in output frames.
    pub fn latency_output_frames(&self) -> f64 {
        self.latency_input_frames() * f64::from(self.pair.out_rate())
            / f64::from(self.pair.in_rate())
    }

    /// Delay of the whole conversion in milliseconds.
    pub fn latency_ms(&self) -> f64 {
        self.stages.iter().map(|d| d.report().latency_ms).sum()
    }

    /// Modelled cost of one stage, multiply-adds (plus per-output overhead) per input frame.
    pub fn single_stage_cost(&self) -> f64 {
        self.single_cost
    }

    /// Modelled cost of two stages, when the pair has a two-stage layout.
    pub fn two_stage_cost(&self) -> Option<f64> {
        self.two_stage_cost
    }

    /// Cost per input frame of the stages as designed (padded taps per output, plus the
    /// per-output overhead, times outputs per input frame), summed over the stages.
    pub fn designed_cost(&self) -> f64 {
        let in_rate = f64::from(self.pair.in_rate());
        self.stages
            .iter()
            .enumerate()
            .map(|(i, d)| {
                let r = d.report();
                let (a, b) = (
                    f64::from(d.pair().in_rate()),
                    f64::from(d.pair().out_rate()),
                );
                if self.half_band == Some(i) {
                    // Per frame of the higher rate: half the pairs of nonzero taps.
                    let pairs = (r.total_taps / 2).div_ceil(2) as f64;
                    a.max(b) / in_rate * (0.5 * pairs + half_band_overhead(i == 0))
                } else {
                    b / in_rate * (r.padded_taps_per_phase as f64 + OUTPUT_OVERHEAD_TAPS)
                }
            })
            .sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn large_ratios_get_two_stages_each_meeting_the_request() {
        for (a, b) in [
            (192_000, 44_100),
            (48_000, 16_000),
            (48_000, 8_000),
            (8_000, 48_000),
        ] {
            let plan = FilterSpec::new(a, b)
                .stopband_db(120.0)
                .stage_choice(StageChoice::Two)
                .plan()
                .unwrap();
            assert!(plan.is_two_stage(), "{a} -> {b}");
            let s = plan.stages();
            assert_eq!(s[0].pair().in_rate(), a);
            assert_eq!(s[1].pair().out_rate(), b);
            assert_eq!(s[0].pair().out_rate(), s[1].pair().in_rate());
            for d in s {
                assert!(d.report().measured_stopband_db >= 120.0, "{a} -> {b}");
            }
            assert!(plan.passband_ripple_db() <= ripple_allowance_db(120.0));
            // The half-band stage: every other tap zero, symmetric, unity DC gain.
            let h = &s[plan.half_band_stage().unwrap()];
            let (t, c) = (h.taps(), h.delay() as usize);
            assert_eq!(t.len(), 2 * c + 1);
            for i in 0..t.len() {
                assert_eq!(t[i], t[t.len() - 1 - i]);
                if i != c && i.abs_diff(c) % 2 == 0 {
                    assert_eq!(t[i], 0.0);
                }
            }
            assert!((t.iter().sum::<f64>() - 1.0).abs() < 1e-12);
            // Chosen automatically only when the model says two stages pay.
            let auto = FilterSpec::new(a, b).stopband_db(120.0).plan().unwrap();
            assert_eq!(
                auto.is_two_stage(),
                plan.two_stage_cost().unwrap()
                    <= TWO_STAGE_MAX_COST_FRACTION * plan.single_stage_cost()
            );
        }
    }

    #[test]
    fn small_ratios_minimum_phase_and_forced_off_stay_single() {
        let one = |s: FilterSpec| s.plan().unwrap().stages().len();
        assert_eq!(one(FilterSpec::new(44_100, 48_000)), 1);
        assert_eq!(one(FilterSpec::new(48_000, 44_100)), 1);
        assert_eq!(one(FilterSpec::new(48_000, 32_000)), 1);
        assert_eq!(
            one(FilterSpec::new(192_000, 44_100).stage_choice(StageChoice::Single)),
            1
        );
        assert_eq!(
            one(FilterSpec::new(192_000, 44_100)
                .stopband_db(100.0)
                .phase(Phase::Minimum)
                .stage_choice(StageChoice::Two)),
            1
        );
        // The single stage is exactly the one-stage design.
        let spec = FilterSpec::new(192_000, 44_100).stage_choice(StageChoice::Single);
        assert_eq!(spec.plan().unwrap().single(), Some(&spec.design().unwrap()));
    }

    #[test]
    fn stated_delay_adds_the_stages() {
        let plan = FilterSpec::new(48_000, 16_000)
            .stopband_db(100.0)
            .stage_choice(StageChoice::Two)
            .plan()
            .unwrap();
        let s = plan.stages();
        let want = s[0].report().latency_input_frames + 2.0 * s[1].report().latency_input_frames;
        assert!((plan.latency_input_frames() - want).abs() < 1e-9);
        let ms = s[0].report().latency_ms + s[1].report().latency_ms;
        assert!((plan.latency_ms() - ms).abs() < 1e-9);
        assert!((plan.latency_ms() - 1000.0 * plan.latency_input_frames() / 48_000.0).abs() < 1e-9);
    }
}
