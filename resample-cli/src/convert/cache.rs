//! Filter designs shared by the files of a batch: each distinct (rates, stopband, passband,
//! phase) is designed once.

use std::collections::HashMap;
use std::sync::{Arc, Mutex};

use resample_core::{FilterSpec, GlideDesign, Phase, StageChoice, StagePlan};

type Key = (u32, u32, u64, u64, Phase);

/// A thread-safe cache of designs.
#[derive(Debug, Default)]
pub struct DesignCache {
    /// Plans of one stage or two ([`FilterSpec::plan`]), by request and stage choice.
    plans: Mutex<HashMap<(Key, StageChoice), Arc<StagePlan>>>,
    /// Tables of the any-ratio engine (clock correction, pairs over the table budget).
    glides: Mutex<HashMap<Key, Arc<GlideDesign>>>,
}

impl DesignCache {
    /// An empty cache.
    pub fn new() -> Self {
        Self::default()
    }

    /// The stages the fixed-ratio engine runs for these parameters: one, or two where
    /// [`FilterSpec::plan`] chooses them (or `stages` forces the choice); planned now if not
    /// seen before.
    pub fn plan(
        &self,
        in_rate: u32,
        out_rate: u32,
        stopband_db: f64,
        passband: f64,
        phase: Phase,
        stages: StageChoice,
    ) -> Result<Arc<StagePlan>, resample_core::Error> {
        let (key, spec) = spec(in_rate, out_rate, stopband_db, passband, phase);
        memo(
            &self.plans,
            ((key, stages), spec.stage_choice(stages)),
            |s| s.plan(),
        )
    }

    /// Whether the fixed engine's design for these parameters surely fits the table budget,
    /// known without designing ([`FilterSpec::surely_fits_table_budget`]).
    pub fn surely_fits(
        &self,
        in_rate: u32,
        out_rate: u32,
        stopband_db: f64,
        passband: f64,
        phase: Phase,
    ) -> bool {
        spec(in_rate, out_rate, stopband_db, passband, phase)
            .1
            .surely_fits_table_budget()
    }

    /// The any-ratio engine's table for these parameters (designed now if not seen before).
    pub fn glide(
        &self,
        in_rate: u32,
        out_rate: u32,
        stopband_db: f64,
        passband: f64,
        phase: Phase,
    ) -> Result<Arc<GlideDesign>, resample_core::Error> {
        let spec = spec(in_rate, out_rate, stopband_db, passband, phase);
        memo(&self.glides, spec, |s| s.design_glide())
    }
}

/// The spec and its cache key.
fn spec(
    in_rate: u32,
    out_rate: u32,
    stopband_db: f64,
    passband: f64,
    phase: Phase,
) -> (Key, FilterSpec) {
    let key = (
        in_rate,
        out_rate,
        stopband_db.to_bits(),
        passband.to_bits(),
        phase,
    );
    let spec = FilterSpec::new(in_rate, out_rate)
        .stopband_db(stopband_db)
        .passband(passband)
        .phase(phase);
    (key, spec)
}

/// The entry of `map` for the spec's key, made by `make` under the lock if missing
/// (designing under the lock keeps two threads from designing the same filter; designs take
/// well under a second).
fn memo<K: std::hash::Hash + Eq, D>(
    map: &Mutex<HashMap<K, Arc<D>>>,
    (key, spec): (K, FilterSpec),
    make: impl FnOnce(&FilterSpec) -> Result<D, resample_core::Error>,
) -> Result<Arc<D>, resample_core::Error> {
    let mut map = match map.lock() {
        Ok(g) => g,
        Err(p) => p.into_inner(),
    };
    if let Some(d) = map.get(&key) {
        return Ok(Arc::clone(d));
    }
    let d = Arc::new(make(&spec)?);
    map.insert(key, Arc::clone(&d));
    Ok(d)
}
