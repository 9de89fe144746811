//! Shared helpers for the integration tests: cached designs.

use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

use resample_core::{Design, FilterSpec, Phase};

type Cache = Mutex<HashMap<(u32, u32, u64, Phase), Design>>;

/// A linear-phase design for (in, out, dB), made once per test binary.
#[allow(dead_code)] // not every test binary uses every helper
pub fn design(a: u32, b: u32, db: f64) -> Design {
    design_phase(a, b, db, Phase::Linear)
}

/// A design for (in, out, dB, phase), made once per test binary.
pub fn design_phase(a: u32, b: u32, db: f64, phase: Phase) -> Design {
    static CACHE: OnceLock<Cache> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    let key = (a, b, db.to_bits(), phase);
    if let Some(d) = cache.lock().unwrap().get(&key) {
        return d.clone();
    }
    let d = FilterSpec::new(a, b)
        .stopband_db(db)
        .phase(phase)
        .design()
        .unwrap();
    cache.lock().unwrap().insert(key, d.clone());
    d
}

#[allow(dead_code)] // not every test binary uses every helper
/// Both phase responses, for tests that run over either.
pub const PHASES: [Phase; 2] = [Phase::Linear, Phase::Minimum];

#[allow(dead_code)] // not every test binary uses every helper
/// Rate pairs used across the tests: up, down, equal, large and small factors.
pub const PAIRS: [(u32, u32); 8] = [
    (44_100, 48_000),
    (48_000, 44_100),
    (44_100, 16_000),
    (8_000, 44_100),
    (22_050, 44_100),
    (48_000, 16_000),
    (16_000, 48_000),
    (48_000, 48_000),
];

/// The modified Bessel function of the first kind, order 0, by its power series
/// `sum_k ((x/2)^k / k!)^2` (Abramowitz and Stegun 9.6.12, from memory), written here apart
/// from the crate's own so that reference windows do not reuse the code under test.
#[allow(dead_code)]
pub fn bessel_i0(x: f64) -> f64 {
    let half = x / 2.0;
    let (mut term, mut sum) = (1.0_f64, 1.0_f64);
    for k in 1..500 {
        let r = half / f64::from(k);
        term *= r * r;
        sum += term;
        if term < sum * 1e-17 {
            break;
        }
    }
    sum
}
