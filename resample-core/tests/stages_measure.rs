//! Two-stage conversions measured by the sweep-through analyser, the same way `verify`
//! measures a single stage: the rejection meets the request, the passband ripple stays in
//! the allowance, and the output is aligned with the input (zero latency offline), like the
//! single stage's.

use resample_core::measure::{measure_converter, ripple_limit_db, Settings, Sweep};
use resample_core::{offline, FilterSpec, StageChoice};

fn check(a: u32, b: u32, db: f64) {
    let m = measure(a, b, db, StageChoice::Two);
    assert!(m >= db, "{a} -> {b}: {m} dB");
}

/// The sweep-measured rejection of the plan for `a -> b` at `db` in `stages`.
fn measure(a: u32, b: u32, db: f64, stages: StageChoice) -> f64 {
    let plan = FilterSpec::new(a, b)
        .stopband_db(db)
        .stage_choice(stages)
        .plan()
        .unwrap();
    assert_eq!(
        plan.is_two_stage(),
        stages == StageChoice::Two,
        "{a} -> {b}"
    );
    // A 2 s sweep's analysis floor is about 137 dB (a single stage measures 136.8 dB at
    // 192k -> 44.1k, 140 dB, with it): 140 dB requests get 10 s, as `rerate verify` uses.
    let seconds = if db > 130.0 { 10.0 } else { 2.0 };
    let sweep = Sweep::new(a).seconds(seconds).edge_probes(b);
    let settings = Settings {
        passband_edge_hz: Some(plan.passband_edge_hz()),
        keep_spectrogram: false,
    };
    let m = measure_converter(&sweep, b, &settings, |x| offline::convert_plan(&plan, x)).unwrap();
    eprintln!(
        "{a} -> {b} at {db} dB, {stages:?}: rejection {:.2} dB, ripple {:.2e} dB, latency {:.4} samples",
        m.rejection_db, m.passband_ripple_db, m.latency_samples
    );
    assert!(
        m.passband_ripple_db <= ripple_limit_db(db),
        "{a} -> {b}: ripple {} dB",
        m.passband_ripple_db
    );
    assert!(
        m.latency_samples.abs() < 0.01,
        "{a} -> {b}: {}",
        m.latency_samples
    );
    m.rejection_db
}

#[test]
fn two_stages_meet_the_request_by_the_sweep() {
    for (a, b) in [
        (192_000, 44_100),
        (48_000, 16_000),
        (48_000, 8_000),
        (8_000, 48_000),
    ] {
        check(a, b, 120.0);
    }
}

#[test]
fn the_automatic_two_stage_choices_meet_the_request_by_the_sweep() {
    // The pairs `FilterSpec::plan` puts in two stages by itself (benches/README.md).
    // Each meets the request, or rejects at least as much as the one stage it replaces:
    // 48k -> 8k at 140 dB measures 139.86 dB in one stage and 139.88 dB in two by this
    // analysis (10 s or 20 s sweeps alike), the one stage's own shortfall.
    for (a, b) in [(192_000, 44_100), (48_000, 8_000)] {
        let auto = FilterSpec::new(a, b).stopband_db(140.0).plan().unwrap();
        assert!(auto.is_two_stage(), "{a} -> {b}");
        let two = measure(a, b, 140.0, StageChoice::Two);
        let one = measure(a, b, 140.0, StageChoice::Single);
        assert!(
            two >= 140.0 || two >= one,
            "{a} -> {b}: {two} dB, one stage {one} dB"
        );
    }
}
