//! Two-stage conversions measured by the sweep-through analyser, the same way `verify`
//! measures a single stage: the rejection meets the request, the passband ripple stays in
//! the allowance, and the output is aligned with the input (zero latency offline), like the
//! single stage's.

use resample_core::measure::{measure_converter, ripple_limit_db, Settings, Sweep};
use resample_core::{offline, FilterSpec, StageChoice};

fn check(a: u32, b: u32, db: f64) {
    let plan = FilterSpec::new(a, b)
        .stopband_db(db)
        .stage_choice(StageChoice::Two)
        .plan()
        .unwrap();
    assert!(plan.is_two_stage(), "{a} -> {b}");
    let sweep = Sweep::new(a).seconds(2.0).edge_probes(b);
    let settings = Settings {
        passband_edge_hz: Some(plan.passband_edge_hz()),
        keep_spectrogram: false,
    };
    let m = measure_converter(&sweep, b, &settings, |x| offline::convert_plan(&plan, x)).unwrap();
    eprintln!(
        "{a} -> {b} at {db} dB: rejection {:.2} dB, ripple {:.2e} dB, latency {:.4} samples",
        m.rejection_db, m.passband_ripple_db, m.latency_samples
    );
    assert!(m.rejection_db >= db, "{a} -> {b}: {} dB", m.rejection_db);
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
