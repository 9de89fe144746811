//! Kernel speed: multiply-accumulates per second of every kernel this CPU runs, at 16, 32,
//! 64, 128 and 256 taps per phase, `f32` and `f64`, one and two channels per call, and the
//! core's peak multiply-add rate measured in the same run by a register-only loop
//! (`resample_core::kernel::peak`). Prints a summary table with the fraction of peak, then
//! runs the same cases under criterion.
//!
//! `cargo bench -p resample-core --bench kernels` (add `-- --quick` for a shorter criterion
//! pass; set `RERATE_SUMMARY_ONLY=1` to print only the summary). Summary rates are per
//! second of this thread's CPU time, so they hold on a machine busy with other work.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::kernel::{peak, Block, Kernel, KernelFns, Sample};

const TAPS: [usize; 5] = [16, 32, 64, 128, 256];
const CHANNELS: [usize; 2] = [1, 2];
/// Outputs per channel per kernel call (the stream converter's block size).
const FRAMES: usize = 256;
/// The 44.1 kHz -> 48 kHz ratio: 160 rows, consecutive outputs use different rows.
const UP: u64 = 160;
const DOWN: u64 = 147;

/// A phase table and a history long enough for one block of every channel.
struct Case<T> {
    coeffs: Vec<T>,
    history: Vec<T>,
    stride: usize,
    tpp: usize,
    channels: usize,
    out: Vec<T>,
}

impl<T: Sample> Case<T> {
    fn new(tpp: usize, channels: usize) -> Self {
        let val = |i: usize| T::from_f64_lossy(((i * 7919) % 1000) as f64 / 1000.0 - 0.5);
        let span = ((FRAMES as u64 * DOWN) / UP) as usize + 2;
        let stride = span + tpp;
        Self {
            coeffs: (0..UP as usize * tpp).map(val).collect(),
            history: (0..stride * channels).map(|i| val(i + 13)).collect(),
            stride,
            tpp,
            channels,
            out: vec![T::zero(); FRAMES * channels],
        }
    }

    fn macs(&self) -> u64 {
        (FRAMES * self.channels * self.tpp) as u64
    }

    /// One block; returns the multiply-accumulates done.
    fn run(&mut self, fns: &KernelFns<T>) -> u64 {
        let block = Block::new(
            &self.coeffs,
            self.tpp,
            UP,
            DOWN,
            &self.history,
            self.stride,
            self.channels,
            0,
            0,
            FRAMES,
        )
        .expect("valid block");
        fns.block(&block, &mut self.out).expect("output fits");
        black_box(&self.out);
        block.macs()
    }
}

/// CPU time this thread has run, seconds (Linux `schedstat`), so that figures taken on a
/// machine shared with other work count only the time this thread was on a core. Falls
/// back to wall time elsewhere.
fn thread_cpu_seconds() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: f64 = s.split_whitespace().next()?.parse().ok()?;
    Some(ns * 1e-9)
}

/// Best rate (units per second of CPU time) of `f` over five runs of at least 150 ms each
/// (the kernel updates `schedstat` at scheduler ticks, a few ms apart: long runs keep that
/// error to a few percent).
fn best_rate(mut f: impl FnMut() -> u64) -> f64 {
    let mut best = 0.0_f64;
    for _ in 0..5 {
        let wall = Instant::now();
        let cpu = thread_cpu_seconds();
        let mut units = 0;
        while wall.elapsed() < Duration::from_millis(150) {
            units += f();
        }
        let secs = match (cpu, thread_cpu_seconds()) {
            (Some(a), Some(b)) if b > a => b - a,
            _ => wall.elapsed().as_secs_f64(),
        };
        best = best.max(units as f64 / secs);
    }
    best
}

fn peak_rate(kernel: Kernel, f64_type: bool) -> f64 {
    best_rate(|| {
        if f64_type {
            let (m, v) = peak::fma_loop_f64(kernel, 100_000);
            black_box(v);
            m
        } else {
            let (m, v) = peak::fma_loop_f32(kernel, 100_000);
            black_box(v);
            m
        }
    })
}

fn summary<T: Sample>(type_name: &str, f64_type: bool) {
    let kernels = Kernel::available();
    let peaks: Vec<(Kernel, f64)> = kernels
        .iter()
        .map(|&k| (k, peak_rate(k, f64_type)))
        .collect();
    let core_peak = peaks.iter().map(|p| p.1).fold(0.0, f64::max);
    println!("\n{type_name}: peak multiply-add rate (register-only loop, one core)");
    for (k, p) in &peaks {
        println!("  {:<10} {:>8.2} GMAC/s", k.name(), p / 1e9);
    }
    println!(
        "  core peak  {:>8.2} GMAC/s (the highest of these)",
        core_peak / 1e9
    );
    println!(
        "{type_name}: kernel rate, {FRAMES} outputs per call, ratio {UP}/{DOWN}\n  {:<10} {:>5} {:>3} {:>10} {:>12} {:>14}",
        "kernel", "taps", "ch", "GMAC/s", "of core peak", "of own peak"
    );
    for &(k, own_peak) in &peaks {
        let fns = KernelFns::<T>::new(k).expect("available");
        for &ch in &CHANNELS {
            for &tpp in &TAPS {
                let mut case = Case::<T>::new(tpp, ch);
                let r = best_rate(|| case.run(&fns));
                println!(
                    "  {:<10} {:>5} {:>3} {:>10.2} {:>11.1}% {:>13.1}%",
                    k.name(),
                    tpp,
                    ch,
                    r / 1e9,
                    100.0 * r / core_peak,
                    100.0 * r / own_peak
                );
            }
        }
    }
}

fn criterion_cases<T: Sample>(c: &mut Criterion, type_name: &str) {
    let mut group = c.benchmark_group(format!("kernel_{type_name}"));
    for k in Kernel::available() {
        let fns = KernelFns::<T>::new(k).expect("available");
        for &ch in &CHANNELS {
            for &tpp in &TAPS {
                let mut case = Case::<T>::new(tpp, ch);
                group.throughput(Throughput::Elements(case.macs()));
                group.bench_function(
                    BenchmarkId::new(k.name(), format!("{tpp}taps_{ch}ch")),
                    |b| b.iter(|| case.run(&fns)),
                );
            }
        }
    }
    group.finish();
    let mut group = c.benchmark_group(format!("peak_{type_name}"));
    for k in Kernel::available() {
        let steps = 10_000;
        let macs = if type_name == "f64" {
            peak::fma_loop_f64(k, steps).0
        } else {
            peak::fma_loop_f32(k, steps).0
        };
        group.throughput(Throughput::Elements(macs));
        group.bench_function(k.name(), |b| {
            b.iter(|| {
                if type_name == "f64" {
                    black_box(peak::fma_loop_f64(k, steps).1);
                } else {
                    black_box(peak::fma_loop_f32(k, steps).1);
                }
            })
        });
    }
    group.finish();
}

fn main() {
    if let Ok(info) = std::fs::read_to_string("/proc/cpuinfo") {
        if let Some(model) = info.lines().find(|l| l.starts_with("model name")) {
            println!("{}", model.trim());
        }
    }
    println!(
        "kernels available: {:?}, chosen by detection: {}",
        Kernel::available()
            .iter()
            .map(|k| k.name())
            .collect::<Vec<_>>(),
        Kernel::detect().name()
    );
    summary::<f32>("f32", false);
    summary::<f64>("f64", true);
    if std::env::var_os("RERATE_SUMMARY_ONLY").is_some() {
        return;
    }

    let mut c = Criterion::default()
        .warm_up_time(Duration::from_millis(200))
        .measurement_time(Duration::from_millis(800))
        .sample_size(10)
        .configure_from_args();
    criterion_cases::<f32>(&mut c, "f32");
    criterion_cases::<f64>(&mut c, "f64");
    c.final_summary();
}
