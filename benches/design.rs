//! Criterion bench: how long designing (and measuring) a filter takes, and the table memory
//! of the common pairs.

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use resample_core::FilterSpec;

fn design_time(c: &mut Criterion) {
    let mut g = c.benchmark_group("design");
    g.sample_size(20);
    for (a, b, db) in [
        (44_100, 48_000, 140.0),
        (44_100, 48_000, 100.0),
        (48_000, 44_100, 140.0),
        (96_000, 44_100, 140.0),
        (44_100, 16_000, 140.0),
    ] {
        g.bench_function(format!("{a}->{b} {db} dB"), |bch| {
            bch.iter(|| {
                FilterSpec::new(black_box(a), black_box(b))
                    .stopband_db(db)
                    .design()
            })
        });
    }
    g.finish();
    // Table memory of the common pairs (printed once; not a timing).
    println!("table memory (bytes, f32 / f64):");
    for (a, b) in [
        (44_100, 48_000),
        (48_000, 44_100),
        (96_000, 44_100),
        (96_000, 48_000),
        (44_100, 16_000),
        (48_000, 16_000),
    ] {
        for db in [100.0, 140.0] {
            if let Ok(d) = FilterSpec::new(a, b).stopband_db(db).design() {
                let r = d.report();
                println!(
                    "  {a} -> {b} at {db} dB: {} taps/phase, {} / {}",
                    r.taps_per_phase, r.table_bytes_f32, r.table_bytes_f64
                );
            }
        }
    }
}

criterion_group!(benches, design_time);
criterion_main!(benches);
