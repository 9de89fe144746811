//! Kernel speed: multiply-accumulates per second of every kernel this CPU runs, at 16, 32,
//! 64, 128 and 256 taps per phase, `f32` and `f64`, one and two channels, and the core's
//! peak multiply-add rate measured in the same run by a register-only loop
//! (`resample_core::internals::peak`). Prints a summary table with the fraction of peak, then
//! runs the same cases under criterion.
//!
//! One run is what a converter does for one block: every group of a 44.1 kHz -> 48 kHz
//! group table (160/147) against the inputs of 4096 consecutive outputs per channel, through
//! [`KernelFns::span`] (all the groups of a period per call, for up to 64 inputs). Only the
//! useful multiply-adds are counted (outputs x taps per phase x channels), not the zero taps
//! at a group's edges.
//!
//! `cargo bench -p resample-core --bench kernels` (add `-- --quick` for a shorter criterion
//! pass; set `RERATE_SUMMARY_ONLY=1` to print only the summary, `RERATE_KERNEL=avx512f` (a
//! kernel name) to summarise one kernel, `RERATE_TAPS=64` one length). Summary rates are per
//! second of this thread's CPU time, so they hold on a machine busy with other work.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::internals::GroupTable;
use resample_core::internals::{peak, KernelFns};
use resample_core::{Kernel, Sample};

#[path = "cpu_time.rs"]
mod cpu_time;
use cpu_time::thread_cpu_seconds;

const TAPS: [usize; 5] = [16, 32, 64, 128, 256];
const CHANNELS: [usize; 2] = [1, 2];
/// Outputs per channel per run (the stream converter's block).
const FRAMES: u64 = 4096;
/// The 44.1 kHz -> 48 kHz ratio.
const UP: u64 = 160;
const DOWN: u64 = 147;
/// Inputs per kernel call, at most (as the converters batch them).
const BATCH: usize = 64;
/// Output values per kernel call, at most (the converters' buffer).
const TMP: usize = 4096;

/// A group table for a prototype of `taps` taps per phase, and an input history long enough
/// for one run of every channel.
struct Case<T> {
    table: GroupTable<T>,
    history: Vec<T>,
    stride: usize,
    channels: usize,
    out: Vec<T>,
    fns: KernelFns<T>,
}

impl<T: Sample> Case<T> {
    fn new(fns: KernelFns<T>, taps: usize, channels: usize) -> Self {
        let val = |i: usize| ((i * 7919) % 1000) as f64 / 1000.0 - 0.5;
        let proto: Vec<f64> = (0..UP as usize * taps)
            .map(|i| val(i) / UP as f64)
            .collect();
        let half = proto.len() as u64 / 2;
        let table = GroupTable::from_prototype(&proto, UP, DOWN, half, fns.lanes())
            .expect("valid prototype");
        let periods = FRAMES.div_ceil(table.period());
        let last = table.first_input(table.groups() - 1) + (periods * table.period_inputs()) as i64;
        let stride = (last - table.first_input(0)) as usize + table.rows();
        Self {
            history: (0..stride * channels)
                .map(|i| T::from_f64_lossy(val(i + 13)))
                .collect(),
            out: vec![T::zero(); TMP],
            table,
            stride,
            channels,
            fns,
        }
    }

    fn macs(&self) -> u64 {
        FRAMES * self.channels as u64 * self.table.taps() as u64
    }

    /// One run; returns the useful multiply-accumulates done.
    fn run(&mut self) -> u64 {
        let t = &self.table;
        let periods = FRAMES.div_ceil(t.period());
        // As the converters call the kernel: every group of a period in one span, for up to
        // 64 inputs (periods x channels) per call, as many as the output buffer holds, spread
        // evenly over the calls.
        let span = t.span(0..t.groups());
        let most = (TMP / (t.groups() * t.lanes())).clamp(1, BATCH);
        let jobs = periods as usize * self.channels;
        let per_call = jobs.div_ceil(jobs.div_ceil(most));
        let reach = t.first_input(t.groups() - 1) - t.first_input(0);
        let len = reach as usize + t.rows();
        let mut inputs: [&[T]; BATCH] = [&[]; BATCH];
        let mut k = 0;
        for q in 0..periods {
            let at = (q * t.period_inputs()) as usize;
            for c in 0..self.channels {
                let s = c * self.stride + at;
                inputs[k] = &self.history[s..s + len];
                k += 1;
                if k == per_call || (q + 1 == periods && c + 1 == self.channels) {
                    self.fns
                        .span(&span, &inputs[..k], &mut self.out)
                        .expect("sizes fit");
                    black_box(&self.out);
                    k = 0;
                }
            }
        }
        self.macs()
    }
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
        "{type_name}: kernel rate, {FRAMES} outputs per channel per run, ratio {UP}/{DOWN}\n  {:<10} {:>5} {:>3} {:>10} {:>12} {:>14}",
        "kernel", "taps", "ch", "GMAC/s", "of core peak", "of own peak"
    );
    let only = std::env::var("RERATE_KERNEL").ok();
    let taps_only: Option<usize> = std::env::var("RERATE_TAPS")
        .ok()
        .and_then(|v| v.parse().ok());
    for &(k, own_peak) in &peaks {
        if only.as_deref().is_some_and(|name| name != k.name()) {
            continue;
        }
        let fns = KernelFns::<T>::new(k).expect("available");
        for &ch in &CHANNELS {
            for &tpp in &TAPS {
                if taps_only.is_some_and(|t| t != tpp) {
                    continue;
                }
                let mut case = Case::<T>::new(fns, tpp, ch);
                let r = best_rate(|| case.run());
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
                let mut case = Case::<T>::new(fns, tpp, ch);
                group.throughput(Throughput::Elements(case.macs()));
                group.bench_function(
                    BenchmarkId::new(k.name(), format!("{tpp}taps_{ch}ch")),
                    |b| b.iter(|| case.run()),
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
