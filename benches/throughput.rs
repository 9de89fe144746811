//! Whole-buffer conversion speed: 10 s of stereo `f32` at 44.1 kHz -> 48 kHz,
//! 48 kHz -> 44.1 kHz and 44.1 kHz -> 16 kHz, at 100 and 140 dB stopband, through
//! (a) one stream converter on one thread, in 4096-frame chunks, and (b) the parallel
//! offline path on every core. Prints input frames per second and the multiple of real
//! time, then runs the same cases under criterion.
//!
//! `cargo bench -p resample-core --bench throughput` (`RERATE_SUMMARY_ONLY=1` prints only
//! the summary). Single-thread figures are per second of this thread's CPU time; parallel
//! figures are wall-clock (on a machine shared with other work they understate).

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::{offline, Design, FilterSpec, Kernel, StreamConverter};

#[path = "cpu_time.rs"]
mod cpu_time;
use cpu_time::thread_cpu_seconds;

const PAIRS: [(u32, u32); 3] = [(44_100, 48_000), (48_000, 44_100), (44_100, 16_000)];
const DBS: [f64; 2] = [100.0, 140.0];
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

/// One stream converter over the whole signal, `CHUNK` frames at a time.
fn stream(design: &Design, input: &[Vec<f32>], conv: &mut StreamConverter<f32>) -> usize {
    conv.reset();
    let n = input[0].len();
    let mut out = vec![vec![0.0_f32; CHUNK * 4]; 2];
    let mut read = 0;
    let mut written = 0;
    while read < n {
        let end = (read + CHUNK).min(n);
        let ins = [&input[0][read..end], &input[1][read..end]];
        let mut outs: Vec<&mut [f32]> = out.iter_mut().map(|c| &mut c[..]).collect();
        let p = conv.process_planar(&ins, &mut outs).expect("shapes");
        read += p.frames_read;
        written += p.frames_written;
    }
    loop {
        let mut outs: Vec<&mut [f32]> = out.iter_mut().map(|c| &mut c[..]).collect();
        let k = conv.flush_planar(&mut outs).expect("shapes");
        if k == 0 {
            break;
        }
        written += k;
    }
    black_box(&out);
    let _ = design;
    written
}

/// Seconds per call of `f`: best of three measurements, each repeating `f` for at least
/// 300 ms (CPU time of this thread if `cpu`, else wall time; `schedstat` is updated at
/// scheduler ticks, so short runs would be too coarse).
fn best_secs(cpu: bool, mut f: impl FnMut()) -> f64 {
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
        let s = match (cpu, c0, thread_cpu_seconds()) {
            (true, Some(a), Some(b)) if b > a => b - a,
            _ => w,
        };
        best = best.min(s / f64::from(calls));
    }
    best
}

fn main() {
    println!(
        "kernel: {}, threads for the parallel path: {}",
        Kernel::detect().name(),
        rayon::current_num_threads()
    );
    println!(
        "{:<16} {:>4} {:>5} {:>16} {:>10} {:>16} {:>10}",
        "rates", "dB", "taps", "1 thread fr/s", "x real", "parallel fr/s", "x real"
    );
    let mut cases = Vec::new();
    for &(a, b) in &PAIRS {
        let input = signal(a);
        for &db in &DBS {
            let design = FilterSpec::new(a, b)
                .stopband_db(db)
                .design()
                .expect("design");
            let mut conv = StreamConverter::<f32>::new(&design, 2).expect("converter");
            let frames = input[0].len() as f64;
            let t1 = best_secs(true, || {
                black_box(stream(&design, &input, &mut conv));
            });
            let tp = best_secs(false, || {
                black_box(offline::convert_planar(&design, &input).expect("convert"));
            });
            println!(
                "{:<16} {:>4} {:>5} {:>16.3e} {:>10.0} {:>16.3e} {:>10.0}",
                format!("{a}->{b}"),
                db,
                design.report().taps_per_phase,
                frames / t1,
                frames / t1 / f64::from(a),
                frames / tp,
                frames / tp / f64::from(a)
            );
            cases.push((a, b, db, design, input.clone()));
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
    let mut group = c.benchmark_group("throughput_stereo_f32_10s");
    for (a, b, db, design, input) in &cases {
        group.throughput(Throughput::Elements(input[0].len() as u64));
        let mut conv = StreamConverter::<f32>::new(design, 2).expect("converter");
        group.bench_function(
            BenchmarkId::new("stream_1_thread", format!("{a}-{b}-{db}dB")),
            |bch| bch.iter(|| stream(design, input, &mut conv)),
        );
        group.bench_function(
            BenchmarkId::new("offline_parallel", format!("{a}-{b}-{db}dB")),
            |bch| bch.iter(|| offline::convert_planar(design, input).expect("convert")),
        );
    }
    group.finish();
    c.final_summary();
}
