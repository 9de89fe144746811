//! Cost per output frame of the any-ratio converter (`GlideConverter`) against the fixed
//! engine (`StreamConverter`) at the same stopband, in the same run: stereo (and, in the
//! summary, mono) interleaved,
//! `f32` and `f64`, blocks of 4096 input frames, 44.1 kHz -> 48 kHz x (1 + 100 ppm) (ratio
//! above 1: taps between two or four table rows) and 48 kHz -> 44.1 kHz x (1 - 250 ppm)
//! (ratio below 1, a drifting clock: the table of the nominal ratio's band), at 100 and
//! 140 dB. The fixed engine runs the nominal pair (it cannot run the drifted ratio); the
//! cost is time per output frame. The input is demo material generated here.
//!
//! First a summary table measured in CPU time of the measuring thread (Linux `schedstat`;
//! wall time elsewhere): best of three runs of at least 300 ms for each engine, the two
//! engines alternating, so that other work on a shared machine weighs less. Then the
//! criterion groups (wall time), unless `RERATE_SUMMARY_ONLY=1`.
//!
//! `RERATE_SUMMARY_ONLY=1 cargo bench -p resample-core --bench glide`
//! `cargo bench -p resample-core --bench glide`
//!
//! For profiling one case: `RERATE_GLIDE_CASE="f32 stereo 44100 -> 48000 x (1 +100 ppm) 140"`
//! keeps the summary lines starting so, `RERATE_GLIDE_ONLY_ANY=1` skips the fixed engine.
//!
//! Built with `--features internals`, each summary line is followed by the run kernel alone
//! (`KernelFns::glide_run` on a prepared run of 1024 outputs: a table of the same size and
//! layout, the positions of the same ratio, sorted by block as the converter sorts them),
//! to split the converter's cost into the kernel and the rest.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion, Throughput};
use resample_core::{FilterSpec, GlideConverter, Kernel, Sample, StreamConverter};

#[path = "cpu_time.rs"]
mod cpu_time;
use cpu_time::thread_cpu_seconds;

const BLOCK: usize = 4096;
/// (input rate, output rate, ppm the output clock runs fast).
const CASES: [(u32, u32, f64); 2] = [(44_100, 48_000, 100.0), (48_000, 44_100, -250.0)];
const DBS: [f64; 2] = [100.0, 140.0];

fn input<T: Sample>(channels: usize) -> Vec<T> {
    (0..BLOCK * channels)
        .map(|k| T::from_f64_lossy(0.3 * (0.01 * k as f64).sin()))
        .collect()
}

/// Seconds per output frame of `f` (which returns the frames it wrote): one run repeating
/// `f` for at least 300 ms, CPU time of this thread where available.
fn secs_per_output(mut f: impl FnMut() -> usize) -> f64 {
    let wall = Instant::now();
    let c0 = thread_cpu_seconds();
    let mut frames = 0;
    while frames == 0 || wall.elapsed() < Duration::from_millis(300) {
        frames += f();
    }
    let w = wall.elapsed().as_secs_f64();
    let s = match (c0, thread_cpu_seconds()) {
        (Some(a), Some(b)) if b > a => b - a,
        _ => w,
    };
    s / frames as f64
}

struct Pair<T> {
    fixed: StreamConverter<T>,
    glide: GlideConverter<T>,
    out: Vec<T>,
    x: Vec<T>,
}

fn pair<T: Sample>(a: u32, b: u32, ppm: f64, db: f64, channels: usize) -> (Pair<T>, String) {
    let spec = FilterSpec::new(a, b).stopband_db(db);
    let fixed = spec.design().expect("design");
    let glide = spec.design_glide().expect("glide design");
    let ratio = f64::from(b) * (1.0 + ppm * 1e-6) / f64::from(a);
    let r = glide.report();
    let table = match r.band.as_ref() {
        Some(band) if ratio < 1.0 && band.contains(ratio) => format!(
            "band table {:.5}..{:.5}: P {} {}, {} taps per output, error {:.1} dB",
            band.lowest_ratio,
            band.highest_ratio,
            band.phases,
            band.interpolation.name(),
            band.taps_per_output,
            band.interpolation_error_db
        ),
        _ => format!(
            "P {} {}, {} taps per output, error {:.1} dB",
            r.phases,
            r.interpolation.name(),
            r.taps_per_output,
            r.interpolation_error_db
        ),
    };
    let about = format!(
        "fixed {} taps per phase; any-ratio at {ratio:.7}: {table}",
        fixed.report().taps_per_phase
    );
    let fixed = StreamConverter::<T>::new(&fixed, channels).expect("converter");
    let glide = GlideConverter::<T>::with_kernel(&glide, channels, ratio, Kernel::detect())
        .expect("converter");
    let n = fixed
        .max_output_frames(BLOCK)
        .max(glide.max_output_frames(BLOCK))
        + 16;
    let p = Pair {
        fixed,
        glide,
        out: vec![T::zero(); n * channels],
        x: input(channels),
    };
    (p, about)
}

impl<T: Sample> Pair<T> {
    fn run_fixed(&mut self) -> usize {
        let p = self
            .fixed
            .process_interleaved(black_box(&self.x), &mut self.out)
            .expect("process");
        p.frames_written
    }

    fn run_glide(&mut self) -> usize {
        let p = self
            .glide
            .process_interleaved(black_box(&self.x), &mut self.out)
            .expect("process");
        p.frames_written
    }
}

fn summary<T: Sample>(name: &str, channels: usize) {
    let layout = if channels == 1 { "mono" } else { "stereo" };
    // Optional, for profiling one case: only the lines starting with this text, and only
    // the any-ratio converter if `RERATE_GLIDE_ONLY_ANY` is set.
    let only = std::env::var("RERATE_GLIDE_CASE").unwrap_or_default();
    let any_only = std::env::var_os("RERATE_GLIDE_ONLY_ANY").is_some();
    for (a, b, ppm) in CASES {
        for db in DBS {
            let line = format!("{name} {layout} {a} -> {b} x (1 {ppm:+} ppm) {db} dB");
            if !line.starts_with(&only) {
                continue;
            }
            let (mut p, about) = pair::<T>(a, b, ppm, db, channels);
            let (mut f, mut g) = (f64::INFINITY, f64::INFINITY);
            for _ in 0..3 {
                if !any_only {
                    f = f.min(secs_per_output(|| p.run_fixed()));
                }
                g = g.min(secs_per_output(|| p.run_glide()));
            }
            println!(
                "{line}: fixed {:.2} ns, any-ratio {:.2} ns \
                 per output frame: {:.2}x  ({about})",
                1e9 * f,
                1e9 * g,
                g / f
            );
            #[cfg(feature = "internals")]
            {
                let k = kernel_alone::<T>(a, b, ppm, db, channels);
                println!(
                    "    run kernel alone: {:.2} ns per output frame ({:.0} % of the converter's)",
                    1e9 * k,
                    100.0 * k / g
                );
            }
        }
    }
}

/// Seconds per output of the run kernel alone for the table the converter reads at this
/// case's ratio: a table of the same geometry (values are demo numbers; the cost does not
/// depend on them), 1024 outputs at the ratio's positions, sorted by block.
#[cfg(feature = "internals")]
fn kernel_alone<T: Sample>(a: u32, b: u32, ppm: f64, db: f64, channels: usize) -> f64 {
    use resample_core::internals::{glide_block_len, GlideRun, KernelFns};
    let spec = FilterSpec::new(a, b).stopband_db(db);
    let design = spec.design_glide().expect("glide design");
    let ratio = f64::from(b) * (1.0 + ppm * 1e-6) / f64::from(a);
    let r = design.report();
    let (phases, cols, order) = match r.band.as_ref() {
        Some(band) if ratio < 1.0 && band.contains(ratio) => (
            band.phases as usize,
            band.taps_per_output,
            band.interpolation.order(),
        ),
        _ => (
            r.phases as usize,
            r.taps_per_output,
            r.interpolation.order(),
        ),
    };
    // Probe: another number of taps per output.
    let cols = std::env::var("RERATE_GLIDE_COLS")
        .ok()
        .and_then(|c| c.parse().ok())
        .unwrap_or(cols);
    let block = glide_block_len::<T>(cols, order);
    let table: Vec<T> = (0..phases * block)
        .map(|k| T::from_f64_lossy(1e-3 * ((k % 97) as f64 - 48.0)))
        .collect();
    const OUTPUTS: usize = 1024;
    let step = 1.0 / ratio;
    let stride = cols + (OUTPUTS as f64 * step) as usize + 2;
    let hist: Vec<T> = (0..stride * channels)
        .map(|k| T::from_f64_lossy(0.3 * (0.01 * k as f64).sin()))
        .collect();
    let mut run: Vec<(usize, usize, T)> = (0..OUTPUTS)
        .map(|k| {
            let t = 0.37 + k as f64 * step;
            let x = t.fract() * phases as f64;
            let p = (x as usize).min(phases - 1);
            (p * block, t as usize, T::from_f64_lossy(x.fract()))
        })
        .collect();
    // Probes of where the kernel's time goes (not a product case): every input start on a
    // 64-byte boundary (no load crosses a cache line), or every output reading block 0 (the
    // table stays in the first-level cache).
    let probe = std::env::var("RERATE_GLIDE_PROBE").unwrap_or_default();
    for e in &mut run {
        if probe.contains("aligned") {
            e.1 -= e.1 % (64 / core::mem::size_of::<T>());
        }
        if probe.contains("oneblock") {
            e.0 = 0;
        }
    }
    run.sort_by_key(|e| e.0);
    let blocks: Vec<usize> = run.iter().map(|e| e.0).collect();
    let starts: Vec<usize> = run.iter().map(|e| e.1).collect();
    let fracs: Vec<T> = run.iter().map(|e| e.2).collect();
    let fns = KernelFns::<T>::new(Kernel::detect()).expect("kernel");
    let g = GlideRun {
        table: &table,
        cols,
        order,
        hist: &hist,
        stride,
        channels,
        blocks: &blocks,
        starts: &starts,
        fracs: &fracs,
    };
    let mut out = vec![T::zero(); OUTPUTS * channels];
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        best = best.min(secs_per_output(|| {
            fns.glide_run(black_box(&g), &mut out).expect("run");
            black_box(&out);
            OUTPUTS
        }));
    }
    best
}

fn bench<T: Sample>(c: &mut Criterion, name: &str) {
    let mut group = c.benchmark_group(format!("per_output_{name}"));
    group
        .sample_size(20)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(3));
    for (a, b, ppm) in CASES {
        for db in DBS {
            let (mut p, _) = pair::<T>(a, b, ppm, db, 2);
            let frames_out = (BLOCK as u64 * u64::from(b)) / u64::from(a);
            group.throughput(Throughput::Elements(frames_out));
            let id = format!("{a}-{b}-{ppm:+}ppm-{db}dB");
            group.bench_function(BenchmarkId::new("fixed", &id), |bch| {
                bch.iter(|| black_box(p.run_fixed()))
            });
            group.bench_function(BenchmarkId::new("any-ratio", &id), |bch| {
                bch.iter(|| black_box(p.run_glide()))
            });
        }
    }
    group.finish();
}

fn main() {
    println!(
        "kernel: {}; cost per output frame, blocks of {BLOCK} input frames (CPU time)",
        Kernel::detect().name()
    );
    summary::<f32>("f32", 2);
    summary::<f64>("f64", 2);
    summary::<f32>("f32", 1);
    summary::<f64>("f64", 1);
    if std::env::var_os("RERATE_SUMMARY_ONLY").is_some() {
        return;
    }
    let mut c = Criterion::default().configure_from_args();
    bench::<f32>(&mut c, "f32");
    bench::<f64>(&mut c, "f64");
    c.final_summary();
}
