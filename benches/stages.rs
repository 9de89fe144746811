//! One stage against two for large ratios: cost per input frame of stereo `f32` streaming
//! (one converter on one thread, 4096-frame chunks, 10 s of signal) for 192 kHz -> 44.1 kHz,
//! 48 kHz -> 8 kHz, 8 kHz -> 48 kHz and 48 kHz -> 16 kHz beside 44.1 kHz -> 48 kHz, at 120
//! and 140 dB, in one run. For each pair: the single stage (two stages turned off) and the
//! two-stage plan (forced with `StageChoice::Two`), the ratio of their costs, the stopband
//! measured on the designs, the cost model's ratio, and what `plan` chooses by itself. Then
//! the same cases under criterion.
//!
//! `cargo bench -p resample-core --bench stages` (`RERATE_SUMMARY_ONLY=1` prints only the
//! summary; `RERATE_PAIR=48000-16000` one pair, listed or not; `RERATE_DB=160` one
//! stopband). Costs are nanoseconds of this thread's CPU time per input frame (both
//! channels), best of three runs of at least 300 ms each.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::{ChainConverter, FilterSpec, Kernel, StageChoice, StagePlan};

#[path = "cpu_time.rs"]
mod cpu_time;
use cpu_time::thread_cpu_seconds;

const PAIRS: [(u32, u32); 5] = [
    (44_100, 48_000),
    (192_000, 44_100),
    (48_000, 8_000),
    (8_000, 48_000),
    (48_000, 16_000),
];
const DBS: [f64; 2] = [120.0, 140.0];
const SECONDS: usize = 10;
const CHUNK: usize = 4096;

fn signal(rate: u32) -> Vec<Vec<f32>> {
    let n = SECONDS * rate as usize;
    (0..2)
        .map(|c| {
            (0..n)
                .map(|i| {
                    let t = i as f64 / f64::from(rate);
                    (0.5 * (2.0 * std::f64::consts::PI * (440.0 + 100.0 * c as f64) * t).sin())
                        as f32
                })
                .collect()
        })
        .collect()
}

/// One converter over the whole signal, `CHUNK` frames at a time, then flushed.
fn stream(input: &[Vec<f32>], conv: &mut ChainConverter<f32>) -> usize {
    conv.reset();
    let n = input[0].len();
    let room = conv.max_output_frames(CHUNK);
    let mut out = vec![vec![0.0_f32; room]; 2];
    let mut read = 0;
    let mut written = 0;
    while read < n {
        let end = (read + CHUNK).min(n);
        let ins = [&input[0][read..end], &input[1][read..end]];
        let p = conv.process_planar(&ins, &mut out).expect("shapes");
        read += p.frames_read;
        written += p.frames_written;
    }
    loop {
        let k = conv.flush_planar(&mut out).expect("shapes");
        if k == 0 {
            break;
        }
        written += k;
    }
    black_box(&out);
    written
}

/// Seconds per call of `f`, CPU time of this thread: best of three, each at least 300 ms.
fn best_secs(mut f: impl FnMut()) -> f64 {
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let wall = Instant::now();
        let c0 = thread_cpu_seconds();
        let mut calls = 0;
        while calls == 0 || wall.elapsed() < Duration::from_millis(300) {
            f();
            calls += 1;
        }
        let w = wall.elapsed().as_secs_f64();
        let s = match (c0, thread_cpu_seconds()) {
            (Some(a), Some(b)) if b > a => b - a,
            _ => w,
        };
        best = best.min(s / f64::from(calls));
    }
    best
}

/// The two-stage plan of a pair, where it has one (forced, whatever the cost model says).
fn two_stage(a: u32, b: u32, db: f64) -> Option<StagePlan> {
    let p = FilterSpec::new(a, b)
        .stopband_db(db)
        .stage_choice(StageChoice::Two)
        .plan()
        .ok()?;
    p.is_two_stage().then_some(p)
}

fn main() {
    println!("kernel: {}", Kernel::detect().name());
    println!(
        "{:<15} {:>4} {:>6} {:>9} {:>9} {:>7} {:>9} {:>9} {:>9} {:>9}",
        "rates",
        "dB",
        "stages",
        "1st ns/fr",
        "2st ns/fr",
        "2st/1st",
        "1st dB",
        "2st dB",
        "model",
        "chosen"
    );
    let mut cases = Vec::new();
    // `RERATE_PAIR=48000-16000` runs one pair only (any pair, listed or not);
    // `RERATE_DB=160` one stopband only.
    let only: Option<(u32, u32)> = std::env::var("RERATE_PAIR").ok().and_then(|p| {
        let (a, b) = p.split_once('-')?;
        Some((a.parse().ok()?, b.parse().ok()?))
    });
    let dbs: Vec<f64> = match std::env::var("RERATE_DB").ok().and_then(|d| d.parse().ok()) {
        Some(db) => vec![db],
        None => DBS.to_vec(),
    };
    let pairs: Vec<(u32, u32)> = only.map_or_else(|| PAIRS.to_vec(), |p| vec![p]);
    for &(a, b) in &pairs {
        let input = signal(a);
        for &db in &dbs {
            let single = FilterSpec::new(a, b)
                .stopband_db(db)
                .stage_choice(StageChoice::Single)
                .plan()
                .expect("design");
            let auto = FilterSpec::new(a, b)
                .stopband_db(db)
                .plan()
                .expect("design");
            let two = two_stage(a, b, db);
            let frames = input[0].len() as f64;
            let mut c1 = ChainConverter::<f32>::new(&single, 2).expect("converter");
            let t1 = best_secs(|| {
                black_box(stream(&input, &mut c1));
            }) / frames;
            let (t2, db2) = match &two {
                Some(p) => {
                    let mut c2 = ChainConverter::<f32>::new(p, 2).expect("converter");
                    let t = best_secs(|| {
                        black_box(stream(&input, &mut c2));
                    }) / frames;
                    (Some(t), Some(p.measured_stopband_db()))
                }
                None => (None, None),
            };
            let fmt = |v: Option<f64>, scale: f64, prec: usize| {
                v.map_or("-".to_string(), |x| format!("{:.*}", prec, x * scale))
            };
            let model = auto.two_stage_cost().map(|c| c / auto.single_stage_cost());
            println!(
                "{:<15} {:>4} {:>6} {:>9.2} {:>9} {:>7} {:>9.2} {:>9} {:>9} {:>9}",
                format!("{a}->{b}"),
                db,
                auto.stages().len(),
                t1 * 1e9,
                fmt(t2, 1e9, 2),
                fmt(t2.map(|t| t / t1), 1.0, 3),
                single.measured_stopband_db(),
                fmt(db2, 1.0, 2),
                fmt(model, 1.0, 3),
                if auto.is_two_stage() { "two" } else { "one" }
            );
            cases.push((a, b, db, single, two, input.clone()));
        }
    }
    if std::env::var_os("RERATE_SUMMARY_ONLY").is_some() {
        return;
    }
    let mut c = Criterion::default()
        .warm_up_time(Duration::from_millis(300))
        .measurement_time(Duration::from_secs(2))
        .sample_size(10)
        .configure_from_args();
    let mut group = c.benchmark_group("stages_stereo_f32_10s");
    for (a, b, db, single, two, input) in &cases {
        group.throughput(Throughput::Elements(input[0].len() as u64));
        let mut c1 = ChainConverter::<f32>::new(single, 2).expect("converter");
        group.bench_function(
            BenchmarkId::new("one_stage", format!("{a}-{b}-{db}dB")),
            |bch| bch.iter(|| stream(input, &mut c1)),
        );
        if let Some(p) = two {
            let mut c2 = ChainConverter::<f32>::new(p, 2).expect("converter");
            group.bench_function(
                BenchmarkId::new("two_stages", format!("{a}-{b}-{db}dB")),
                |bch| bch.iter(|| stream(input, &mut c2)),
            );
        }
    }
    group.finish();
    c.final_summary();
}
