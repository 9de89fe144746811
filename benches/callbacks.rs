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
//! doing: run it on a quiet machine for percentiles to quote. Then criterion times the mean
//! per size.
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

fn summary() {
    let design = FilterSpec::new(IN_RATE, OUT_RATE)
        .stopband_db(STOPBAND_DB)
        .design()
        .expect("design");
    println!(
        "stream converter as an output callback: stereo f32 {IN_RATE} -> {OUT_RATE} Hz, \
         {STOPBAND_DB} dB ({} taps per phase), {SECONDS} s of output per size",
        design.report().taps_per_phase
    );
    println!(
        "{:>7} {:>10} {:>12} {:>12} {:>12} {:>12} {:>10} {:>10} {:>10}",
        "frames",
        "period us",
        "mean us",
        "cpu mean us",
        "p99.9 us",
        "max us",
        "mean %",
        "cpu mean %",
        "p99.9/mean"
    );
    for &n in &SIZES {
        let mut conv = StreamConverter::<f32>::new(&design, CHANNELS).expect("converter");
        let mut src = Source::new();
        let mut input = vec![0.0_f32; (2 * n + 4096) * CHANNELS];
        let mut out = vec![0.0_f32; n * CHANNELS];
        let calls = SECONDS * OUT_RATE as usize / n;
        // Warm-up: fill the history, touch the table.
        for _ in 0..(calls / 20).max(100) {
            callback(&mut conv, &mut src, &mut input, &mut out);
        }
        let mut times = Vec::with_capacity(calls);
        let cpu0 = thread_cpu_seconds();
        for _ in 0..calls {
            let t = Instant::now();
            let w = callback(&mut conv, &mut src, &mut input, &mut out);
            times.push(t.elapsed().as_secs_f64());
            assert_eq!(w, n, "a callback fell short");
            black_box(&out);
        }
        // CPU time over the whole run (this thread only: time other work took the core
        // from it is not counted), per callback; the per-call wall times hold that time.
        let cpu_mean = match (cpu0, thread_cpu_seconds()) {
            (Some(a), Some(b)) => (b - a) / calls as f64,
            _ => f64::NAN,
        };
        times.sort_by(f64::total_cmp);
        let mean = times.iter().sum::<f64>() / times.len() as f64;
        let p999 = times[(times.len() as f64 * 0.999) as usize - 1];
        let max = times[times.len() - 1];
        let period = n as f64 / f64::from(OUT_RATE);
        println!(
            "{n:>7} {:>10.1} {:>12.3} {:>12.3} {:>12.3} {:>12.3} {:>9.3}% {:>9.3}% {:>10.1}",
            period * 1e6,
            mean * 1e6,
            cpu_mean * 1e6,
            p999 * 1e6,
            max * 1e6,
            100.0 * mean / period,
            100.0 * cpu_mean / period,
            p999 / mean
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
