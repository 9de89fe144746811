//! Live-callback cost of the stream converter: what an app developer asks first. Stereo,
//! interleaved, `f32`, 44.1 kHz -> 48 kHz at 120 dB, driven as an audio output callback of
//! N frames (N = 32, 64, 128, 256, 1024): each callback asks for exactly N output frames and
//! feeds the converter the input it needs (`input_frames_for_output`), as a real-time
//! callback pulling from a 44.1 kHz source would.
//!
//! Every callback is timed on its own (`Instant`, about 20 ns of overhead); the summary gives
//! the mean, the 99.9th percentile and the maximum cost per callback, each as a share of the
//! callback's real-time period (N / 48000 s), over 60 s of audio per size after a warm-up,
//! and the mean in CPU time of the measuring thread over the whole run (time the core spent
//! on other work not counted). The wall-clock figures include whatever else the machine was
//! doing: an interrupt or another process taking the core for 10 us lands in the tail of a
//! 1 us callback.
//!
//! To tell the converter's own tail from the machine's, three identical converters run in
//! lockstep: each callback is made by all three, one after the other, from the same input
//! (each has its own copy of the source and its own buffers), so all three do the same work;
//! their outputs are checked to be the same (on every 32nd callback). The *own* cost of a
//! callback is the least of its three times: a callback that costs more by itself (more
//! groups, a longer copy, a cache miss of its own) costs more in all three, while an
//! interruption rarely hits all three. The later two find the code and branch history warm
//! from the first, so the own mean reads a few per cent under the plain mean. The plain
//! columns are the first converter's times, as a single converter's; the CPU-time mean is
//! the thread's over all three.
//! Then criterion times the mean per size.
//!
//! `cargo bench -p resample-core --bench callbacks` (`RERATE_SUMMARY_ONLY=1` prints only
//! the summary).

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{BenchmarkId, Criterion};
use resample_core::{FilterSpec, StreamConverter};

#[path = "cpu_time.rs"]
mod cpu_time;
use cpu_time::thread_cpu_seconds;

const IN_RATE: u32 = 44_100;
const OUT_RATE: u32 = 48_000;
const STOPBAND_DB: f64 = 120.0;
const SIZES: [usize; 5] = [32, 64, 128, 256, 1024];
const CHANNELS: usize = 2;
/// Seconds of output timed per callback size.
const SECONDS: usize = 60;

/// A source at the input rate: one second of two tones (441 and 882 Hz, whole cycles per
/// second so the loop is seamless; demo material, generated here), played in a loop. A
/// callback copies its input from it, as a real one copies from a FIFO, so the timing holds
/// the converter and a copy, not the making of the test signal.
struct Source {
    frames: Vec<f32>,
    at: usize,
}

impl Source {
    fn new() -> Self {
        let tau = 2.0 * std::f64::consts::PI;
        let rate = f64::from(IN_RATE);
        let frames = (0..IN_RATE as usize)
            .flat_map(|i| {
                let t = i as f64 / rate;
                [
                    (0.4 * (tau * 441.0 * t).sin()) as f32,
                    (0.4 * (tau * 882.0 * t).sin()) as f32,
                ]
            })
            .collect();
        Self { frames, at: 0 }
    }

    fn fill(&mut self, buf: &mut [f32]) {
        let mut done = 0;
        while done < buf.len() {
            let k = (buf.len() - done).min(self.frames.len() - self.at);
            buf[done..done + k].copy_from_slice(&self.frames[self.at..self.at + k]);
            done += k;
            self.at = (self.at + k) % self.frames.len();
        }
    }
}

/// One output callback of `out.len() / CHANNELS` frames: ask for exactly that many output
/// frames, feed the input they need. Returns the frames written.
fn callback(
    conv: &mut StreamConverter<f32>,
    src: &mut Source,
    input: &mut [f32],
    out: &mut [f32],
) -> usize {
    let want = out.len() / CHANNELS;
    let need = conv.input_frames_for_output(want as u64) as usize;
    let inp = &mut input[..need * CHANNELS];
    src.fill(inp);
    let p = conv.process_interleaved(inp, out).expect("buffer shapes");
    p.frames_written
}

/// Identical converters run in lockstep (see the crate docs).
const LOCKSTEP: usize = 3;

/// Mean, 99.9th percentile and maximum of callback times (seconds; sorted in place).
fn stats(times: &mut [f64]) -> (f64, f64, f64) {
    times.sort_by(f64::total_cmp);
    let mean = times.iter().sum::<f64>() / times.len() as f64;
    let p999 = times[(times.len() as f64 * 0.999) as usize - 1];
    (mean, p999, times[times.len() - 1])
}

fn summary() {
    let design = FilterSpec::new(IN_RATE, OUT_RATE)
        .stopband_db(STOPBAND_DB)
        .design()
        .expect("design");
    println!(
        "stream converter as an output callback: stereo f32 {IN_RATE} -> {OUT_RATE} Hz, \
         {STOPBAND_DB} dB ({} taps per phase), {SECONDS} s of output per size; own = the \
         least of {LOCKSTEP} identical converters' times for the same callback",
        design.report().taps_per_phase
    );
    println!(
        "{:>7} {:>10} {:>10} {:>11} {:>10} {:>10} {:>8} {:>10} {:>10} {:>11} {:>10} {:>9} {:>9}",
        "frames",
        "period us",
        "mean us",
        "cpu mean us",
        "p99.9 us",
        "max us",
        "mean %",
        "cpu mean %",
        "p99.9/mean",
        "own mean us",
        "own p99.9",
        "own max",
        "own ratio"
    );
    for &n in &SIZES {
        let mut convs: Vec<_> = (0..LOCKSTEP)
            .map(|_| StreamConverter::<f32>::new(&design, CHANNELS).expect("converter"))
            .collect();
        let mut srcs: Vec<_> = (0..LOCKSTEP).map(|_| Source::new()).collect();
        let mut inputs = vec![vec![0.0_f32; (2 * n + 4096) * CHANNELS]; LOCKSTEP];
        let mut outs = vec![vec![0.0_f32; n * CHANNELS]; LOCKSTEP];
        let calls = SECONDS * OUT_RATE as usize / n;
        // Warm-up: fill the history, touch the table.
        for _ in 0..(calls / 20).max(100) {
            for k in 0..LOCKSTEP {
                callback(&mut convs[k], &mut srcs[k], &mut inputs[k], &mut outs[k]);
            }
        }
        let mut first = Vec::with_capacity(calls);
        let mut own = Vec::with_capacity(calls);
        let cpu0 = thread_cpu_seconds();
        for _ in 0..calls {
            let mut least = f64::INFINITY;
            for k in 0..LOCKSTEP {
                let t = Instant::now();
                let w = callback(&mut convs[k], &mut srcs[k], &mut inputs[k], &mut outs[k]);
                let dt = t.elapsed().as_secs_f64();
                assert_eq!(w, n, "a callback fell short");
                black_box(&outs[k]);
                if k == 0 {
                    first.push(dt);
                }
                least = least.min(dt);
            }
            own.push(least);
            // The same work in each: the same output, bit for bit (checked on every 32nd
            // callback, so the check's own time stays out of the CPU-time mean).
            if own.len() % 32 == 0 {
                assert!(
                    outs.iter().all(|o| o == &outs[0]),
                    "lockstep converters differ"
                );
            }
        }
        // CPU time over the whole run (this thread only: time other work took the core
        // from it is not counted), per callback; the per-call wall times hold that time.
        let cpu_mean = match (cpu0, thread_cpu_seconds()) {
            (Some(a), Some(b)) => (b - a) / (LOCKSTEP * calls) as f64,
            _ => f64::NAN,
        };
        let (mean, p999, max) = stats(&mut first);
        let (own_mean, own_p999, own_max) = stats(&mut own);
        let period = n as f64 / f64::from(OUT_RATE);
        println!(
            "{n:>7} {:>10.1} {:>10.3} {:>11.3} {:>10.3} {:>10.3} {:>7.3}% {:>9.3}% {:>10.1} {:>11.3} {:>10.3} {:>9.3} {:>9.1}",
            period * 1e6,
            mean * 1e6,
            cpu_mean * 1e6,
            p999 * 1e6,
            max * 1e6,
            100.0 * mean / period,
            100.0 * cpu_mean / period,
            p999 / mean,
            own_mean * 1e6,
            own_p999 * 1e6,
            own_max * 1e6,
            own_p999 / own_mean
        );
    }
}

fn main() {
    summary();
    if std::env::var_os("RERATE_SUMMARY_ONLY").is_some() {
        return;
    }
    let design = FilterSpec::new(IN_RATE, OUT_RATE)
        .stopband_db(STOPBAND_DB)
        .design()
        .expect("design");
    let mut c = Criterion::default()
        .configure_from_args()
        .measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_secs(1));
    let mut g = c.benchmark_group("callback");
    for &n in &SIZES {
        let mut conv = StreamConverter::<f32>::new(&design, CHANNELS).expect("converter");
        let mut src = Source::new();
        let mut input = vec![0.0_f32; (2 * n + 4096) * CHANNELS];
        let mut out = vec![0.0_f32; n * CHANNELS];
        g.bench_function(BenchmarkId::from_parameter(n), |b| {
            b.iter(|| callback(&mut conv, &mut src, &mut input, &mut out))
        });
    }
    g.finish();
    c.final_summary();
}
