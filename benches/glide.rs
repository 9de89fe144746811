//! Cost per output frame of the any-ratio converter (`GlideConverter`) against the fixed
//! engine (`StreamConverter`) at the same stopband, in the same run: stereo interleaved
//! `f32`, blocks of 4096 input frames, 44.1 kHz -> 48 kHz (ratio above 1: taps from two or
//! four table rows) and 48 kHz -> 44.1 kHz (ratio below 1: the stretched kernel, each tap
//! at its own position), at 100 and 140 dB. The any-ratio converter runs at the fixed
//! pair's exact ratio, so both make the same number of outputs; criterion's throughput is
//! output frames per second. The input is demo material generated here.
//!
//! `cargo bench -p resample-core --bench glide`

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::{FilterSpec, GlideConverter, StreamConverter};

const CHANNELS: usize = 2;
const BLOCK: usize = 4096;

fn input() -> Vec<f32> {
    (0..BLOCK * CHANNELS)
        .map(|k| (0.3 * (0.01 * k as f64).sin()) as f32)
        .collect()
}

fn bench(c: &mut Criterion) {
    let x = input();
    let mut group = c.benchmark_group("per_output");
    group
        .sample_size(20)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(3));
    for (a, b) in [(44_100_u32, 48_000_u32), (48_000, 44_100)] {
        for db in [100.0, 140.0] {
            let spec = FilterSpec::new(a, b).stopband_db(db);
            let fixed = spec.design().expect("design");
            let glide = spec.design_glide().expect("glide design");
            let r = glide.report();
            println!(
                "{a} -> {b} at {db} dB: fixed {} taps per phase; any-ratio P {} {} ({} taps per \
                 output, table {} bytes in f32, interpolation error {:.1} dB)",
                fixed.report().taps_per_phase,
                r.phases,
                r.interpolation.name(),
                r.taps_per_output,
                r.table_bytes_f32,
                r.interpolation_error_db
            );
            let frames_out = (BLOCK as u64 * u64::from(b)) / u64::from(a);
            group.throughput(Throughput::Elements(frames_out));
            let id = format!("{a}-{b}-{db}dB");
            let mut sc = StreamConverter::<f32>::new(&fixed, CHANNELS).expect("converter");
            let mut out = vec![0.0_f32; (sc.max_output_frames(BLOCK) + 16) * CHANNELS];
            group.bench_function(BenchmarkId::new("fixed", &id), |bch| {
                bch.iter(|| {
                    let p = sc
                        .process_interleaved(black_box(&x), &mut out)
                        .expect("process");
                    black_box(p.frames_written)
                })
            });
            let mut gc = GlideConverter::<f32>::new(&glide, CHANNELS).expect("converter");
            let mut out = vec![0.0_f32; (gc.max_output_frames(BLOCK) + 16) * CHANNELS];
            group.bench_function(BenchmarkId::new("any-ratio", &id), |bch| {
                bch.iter(|| {
                    let p = gc
                        .process_interleaved(black_box(&x), &mut out)
                        .expect("process");
                    black_box(p.frames_written)
                })
            });
        }
    }
    group.finish();
}

fn main() {
    let mut c = Criterion::default().configure_from_args();
    bench(&mut c);
    c.final_summary();
}
