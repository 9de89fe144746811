//! How often the design search's first attempt is enough, and how far over the request the
//! designs land: every design of a grid of rate pairs, passband edges and requests, with the
//! attempts each took (from its report).
//!
//! The grid is the one the first attempt's shortfall envelope was calibrated on
//! (`resample-core/src/filter/first_attempt.rs`), so the hit rate it prints is measured on the
//! calibration set, not on designs the envelope never saw; add pairs here to test it further.
//!
//! Run: `cargo run --release -p resample-core --example first_attempt`

use resample_core::{FilterSpec, Phase};
use std::collections::BTreeMap;

fn main() -> Result<(), resample_core::Error> {
    let pairs = [
        (44_100, 48_000),
        (48_000, 44_100),
        (44_100, 16_000),
        (48_000, 16_000),
        (96_000, 44_100),
        (96_000, 48_000),
        (192_000, 44_100),
        (8_000, 48_000),
        (48_000, 8_000),
        (22_050, 44_100),
        (44_100, 88_200),
        (32_000, 48_000),
        (16_000, 44_100),
        (88_200, 48_000),
        (48_000, 96_000),
        (11_025, 48_000),
    ];
    let mut specs = Vec::new();
    for &(a, b) in &pairs {
        for db in (60..=200).step_by(10) {
            for pb in [0.8, 0.91, 0.95] {
                specs.push(
                    FilterSpec::new(a, b)
                        .stopband_db(f64::from(db))
                        .passband(pb),
                );
            }
        }
    }
    for (a, b) in [(44_100, 48_000), (48_000, 44_100), (48_000, 16_000)] {
        for db in [80.0, 100.0, 120.0, 140.0] {
            specs.push(FilterSpec::new(a, b).stopband_db(db).phase(Phase::Minimum));
        }
    }
    // Per request: designs, designs made in one attempt, attempts in all, largest excess.
    let mut rows: BTreeMap<u32, (usize, usize, usize, f64)> = BTreeMap::new();
    let (mut many_phases, mut many_phases_first) = (0, 0);
    for spec in &specs {
        let d = spec.design()?;
        let r = d.report();
        let e = rows.entry(r.requested_stopband_db as u32).or_default();
        e.0 += 1;
        e.1 += usize::from(r.attempts == 1);
        e.2 += r.attempts;
        e.3 = e.3.max(r.measured_stopband_db - r.requested_stopband_db);
        if r.up >= 16 {
            many_phases += 1;
            many_phases_first += usize::from(r.attempts == 1);
        }
    }
    println!("| requested dB | designs | one attempt | mean attempts | largest excess dB |");
    println!("| --- | --- | --- | --- | --- |");
    let (mut n, mut one, mut all) = (0, 0, 0);
    for (db, (count, first, attempts, over)) in &rows {
        println!(
            "| {db} | {count} | {first} | {:.2} | {over:.2} |",
            *attempts as f64 / *count as f64
        );
        n += count;
        one += first;
        all += attempts;
    }
    println!(
        "all: {n} designs, {one} in one attempt ({:.1} %), {:.2} attempts on average; \
         prototypes of 16 or more phases: {many_phases_first} of {many_phases} in one attempt",
        100.0 * one as f64 / n as f64,
        all as f64 / n as f64
    );
    Ok(())
}
