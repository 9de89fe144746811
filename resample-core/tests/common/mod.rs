//! Shared helpers for the integration tests: cached designs.

use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

use resample_core::{Design, FilterSpec};

type Cache = Mutex<HashMap<(u32, u32, u64), Design>>;

/// A design for (in, out, dB), made once per test binary.
pub fn design(a: u32, b: u32, db: f64) -> Design {
    static CACHE: OnceLock<Cache> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    let key = (a, b, db.to_bits());
    if let Some(d) = cache.lock().unwrap().get(&key) {
        return d.clone();
    }
    let d = FilterSpec::new(a, b).stopband_db(db).design().unwrap();
    cache.lock().unwrap().insert(key, d.clone());
    d
}

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
