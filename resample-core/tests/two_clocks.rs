//! The drift follower and the any-ratio converter between two simulated clock domains: a
//! producer at 48000 x (1 + e) Hz delivering 480-frame bursts with timing jitter, a
//! consumer at 48000 Hz pulling 128-frame callbacks, e = +-300 ppm plus a slow +-50 ppm
//! wander (a sine of period 10 minutes). Ten simulated minutes each way: the fill settles
//! within seconds; after `SETTLE_S` the fill (without the arrival jitter, averaged over
//! 200 ms) stays within +-64 frames of its
//! target with no underrun or overrun, every one-minute mean of the ratio error against
//! the true clock ratio is under 1 ppm, and a 1 kHz tone keeps THD+N under -110 dB (f32).
//! The scenario is this project's own simulation (demo data); crystal clocks of audio
//! devices commonly differ by tens to about a hundred ppm (common practice, no source), so
//! 300 ppm is a hard case.
//!
//! `cargo test --release -p resample-core --test two_clocks -- --nocapture` prints the
//! figures.

use std::collections::VecDeque;

use resample_core::{DriftFollower, FilterSpec, GlideConverter};

const FS: f64 = 48_000.0;
const BURST: usize = 480;
const CALLBACK: usize = 128;
const TARGET: f64 = 960.0;
const CAPACITY: usize = 4096;
const WANDER_PERIOD_S: f64 = 600.0;
const WANDER: f64 = 50e-6;
const JITTER_S: f64 = 0.002;
const TONE_HZ: f64 = 1000.0;
/// Seconds after the consumer starts from which the steady state is checked: the loop
/// (0.2 rad/s, critically damped) has found a 300 ppm step within about 10 s; its last
/// tenths of a ppm take until about a minute (a one-minute mean from 30 s measured 0.8 ppm
/// without any jitter).
const SETTLE_S: f64 = 60.0;
/// Output frames of one THD+N analysis.
const ANALYSIS: usize = 1 << 16;

/// Results of one run.
#[derive(Debug, Default)]
struct Outcome {
    /// Last time (since the start) a 200 ms mean of the fill was off by more than 64 frames.
    settled_s: f64,
    /// Worst 200 ms mean of the fill against the target after settling, frames.
    worst_fill_dev: f64,
    /// Mean of the fill the follower was given (lowered by the lateness of the last burst)
    /// against the true fill, frames.
    measured_offset: f64,
    /// Worst instantaneous ratio error, ppm.
    worst_ratio_ppm: f64,
    /// Mean ratio error over the steady state, ppm.
    bias_ppm: f64,
    /// Worst mean ratio error over a minute, ppm.
    worst_minute_ppm: f64,
    worst_thdn_db: f64,
    underruns: usize,
    overruns: usize,
    analyses: usize,
}

/// The producer's speed-up over nominal at time `t`.
fn drift(e0: f64, t: f64) -> f64 {
    e0 + WANDER * (2.0 * std::f64::consts::PI * t / WANDER_PERIOD_S).sin()
}

/// Producer frames clocked by time `t`: the integral of 48000 (1 + e).
fn produced(e0: f64, t: f64) -> f64 {
    let w = 2.0 * std::f64::consts::PI / WANDER_PERIOD_S;
    FS * (t + e0 * t + WANDER * (1.0 - (w * t).cos()) / w)
}

fn i0(x: f64) -> f64 {
    let (mut sum, mut term, mut k) = (1.0, 1.0, 1.0);
    while term > 1e-20 * sum {
        term *= (x / (2.0 * k)).powi(2);
        sum += term;
        k += 1.0;
    }
    sum
}

/// THD+N of a tone near `TONE_HZ` in `y` (rate FS): the power of a Kaiser-windowed (beta
/// 20) spectrum from 20 Hz to 20 kHz outside +-15 Hz of the tone's peak, over the power
/// within it (the notch method of AES17, here on a spectrum; common practice, no source).
fn thd_n_db(y: &[f32]) -> f64 {
    use rustfft::num_complex::Complex;
    let n = y.len();
    let mut buf: Vec<Complex<f64>> = y
        .iter()
        .enumerate()
        .map(|(k, &v)| {
            let r = 2.0 * k as f64 / (n - 1) as f64 - 1.0;
            let w = i0(20.0 * (1.0 - r * r).max(0.0).sqrt()) / i0(20.0);
            Complex::new(f64::from(v) * w, 0.0)
        })
        .collect();
    rustfft::FftPlanner::new()
        .plan_fft_forward(n)
        .process(&mut buf);
    let hz = FS / n as f64;
    let p: Vec<f64> = buf[..n / 2].iter().map(|c| c.norm_sqr()).collect();
    let lo = (20.0 / hz) as usize;
    let hi = (20_000.0 / hz) as usize;
    let peak = (lo..hi)
        .max_by(|&a, &b| p[a].total_cmp(&p[b]))
        .unwrap_or(lo);
    let guard = (15.0 / hz).ceil() as usize;
    let (mut tone, mut rest) = (0.0, 0.0);
    for (k, &v) in p.iter().enumerate().take(hi).skip(lo) {
        if k.abs_diff(peak) <= guard {
            tone += v;
        } else {
            rest += v;
        }
    }
    10.0 * (rest / tone).log10()
}

/// Run the two clocks for `seconds` with the producer `e0` fast; checks start `settle_s`
/// after the consumer starts.
fn simulate(e0: f64, seconds: f64, settle_s: f64, seed: u64) -> Outcome {
    simulate_with(
        e0,
        seconds,
        settle_s,
        seed,
        resample_core::limits::DEFAULT_PEAK_HOLD_S,
    )
}

/// [`simulate`] with the follower's peak hold set to `hold_s` seconds.
fn simulate_with(e0: f64, seconds: f64, settle_s: f64, seed: u64, hold_s: f64) -> Outcome {
    let g = FilterSpec::new(48_000, 48_000)
        .stopband_db(120.0)
        .design_glide()
        .unwrap();
    let mut conv = GlideConverter::<f32>::new(&g, 1).unwrap();
    let mut follower = DriftFollower::new(48_000, 48_000, TARGET)
        .unwrap()
        .with_peak_hold(hold_s)
        .unwrap();
    let mut fifo: VecDeque<f32> = VecDeque::with_capacity(CAPACITY);
    let mut rng = seed | 1;
    let mut jitter = || {
        rng ^= rng << 13;
        rng ^= rng >> 7;
        rng ^= rng << 17;
        JITTER_S * (rng >> 11) as f64 / (1u64 << 53) as f64
    };
    // Producer: burst k is complete when `produced` reaches (k + 1) 480 frames, and arrives
    // up to 2 ms later.
    let mut burst = 0_u64;
    let mut t_complete = 0.0_f64;
    let next_burst_time = |k: u64, guess: f64| {
        let goal = ((k + 1) * BURST as u64) as f64;
        let mut t = guess;
        for _ in 0..4 {
            t -= (produced(e0, t) - goal) / (FS * (1.0 + drift(e0, t)));
        }
        t
    };
    t_complete = next_burst_time(burst, t_complete + 0.01);
    let mut arrive = t_complete + jitter();
    let mut last_arrival = 0.0_f64;
    let mut frame_no = 0_u64;

    let mut out = vec![0.0_f32; CALLBACK];
    let mut take = Vec::with_capacity(CAPACITY);
    let mut history: VecDeque<f32> = VecDeque::with_capacity(ANALYSIS);
    let mut o = Outcome::default();
    let mut started: Option<f64> = None;
    let mut window = (0.0, 0usize);
    let mut offset = (0.0, 0_u64);
    let mut next_analysis = settle_s;
    let mut last_bad = 0.0_f64;
    let mut sum_ppm = (0.0, 0_u64);
    let mut minute = (0.0, 0_u64);
    let callbacks = (seconds * FS / CALLBACK as f64) as u64;
    for j in 0..callbacks {
        let t = j as f64 * CALLBACK as f64 / FS;
        // Bursts that arrived by now.
        while arrive <= t {
            for _ in 0..BURST {
                let v = 0.5 * (2.0 * std::f64::consts::PI * TONE_HZ * frame_no as f64 / FS).sin();
                frame_no += 1;
                if fifo.len() == CAPACITY {
                    o.overruns += 1;
                } else {
                    fifo.push_back(v as f32);
                }
            }
            burst += 1;
            last_arrival = arrive;
            t_complete = next_burst_time(burst, t_complete + 0.01);
            arrive = t_complete + jitter();
        }
        let start = match started {
            Some(s) => s,
            None if fifo.len() as f64 >= TARGET => {
                started = Some(t);
                t
            }
            None => continue,
        };
        let pending = conv.input_frames() as f64 - conv.next_output_time();
        let fill =
            follower.fill_between_writes(fifo.len() as f64 + pending, BURST, t - last_arrival);
        // The true fill: what `fill_between_writes` would measure if every burst arrived
        // the moment its last frame was made (the producer's frames made by now, less the
        // burst being spread, less the consumer's position), averaged below over 200 ms
        // windows (20 burst periods)...
        let true_fill = produced(e0, t) - BURST as f64 - conv.next_output_time();
        let ratio = follower.update(fill, CALLBACK);
        conv.glide_to(ratio, CALLBACK as u64).unwrap();
        let need = conv.input_frames_for_output(CALLBACK as u64) as usize;
        if fifo.len() < need {
            o.underruns += 1;
            continue;
        }
        take.clear();
        take.extend(fifo.drain(..need));
        let p = conv.process_interleaved(&take, &mut out).unwrap();
        assert_eq!((p.frames_read, p.frames_written), (need, CALLBACK));
        for &v in &out {
            if history.len() == ANALYSIS {
                history.pop_front();
            }
            history.push_back(v);
        }
        // ... and the ratio error against the true clock ratio 1 / (1 + e).
        offset.0 += fill - true_fill;
        offset.1 += 1;
        window.0 += true_fill;
        window.1 += 1;
        let since = t - start;
        let ratio_ppm = (ratio * (1.0 + drift(e0, t)) - 1.0) * 1e6;
        if window.1 == 75 {
            let dev = window.0 / 75.0 - TARGET;
            window = (0.0, 0);
            if dev.abs() > 64.0 {
                last_bad = since;
            }
            if since >= settle_s {
                o.worst_fill_dev = o.worst_fill_dev.max(dev.abs());
            }
        }
        if since >= settle_s {
            sum_ppm.0 += ratio_ppm;
            sum_ppm.1 += 1;
            minute.0 += ratio_ppm;
            minute.1 += 1;
            if minute.1 == 22_500 {
                o.worst_minute_ppm = o.worst_minute_ppm.max((minute.0 / 22_500.0).abs());
                minute = (0.0, 0);
            }
        }
        if since >= settle_s {
            o.worst_ratio_ppm = o.worst_ratio_ppm.max(ratio_ppm.abs());
            if since >= next_analysis && history.len() == ANALYSIS {
                let h: Vec<f32> = history.iter().copied().collect();
                let v = thd_n_db(&h);
                o.worst_thdn_db = if o.analyses == 0 {
                    v
                } else {
                    o.worst_thdn_db.max(v)
                };
                o.analyses += 1;
                next_analysis += 30.0;
            }
        }
    }
    o.settled_s = last_bad;
    o.measured_offset = offset.0 / offset.1.max(1) as f64;
    o.bias_ppm = sum_ppm.0 / sum_ppm.1.max(1) as f64;
    o
}

fn check(e0: f64, seconds: f64, seed: u64) -> Outcome {
    let o = simulate(e0, seconds, SETTLE_S, seed);
    eprintln!(
        "e = {:+.0} ppm, {seconds} s: fill settled after {:.1} s; after {SETTLE_S} s: fill \
         within {:.1} frames of {TARGET} (the follower's input {:+.1} frames off on \
         average), ratio error: mean {:+.3} ppm, worst one-minute mean {:.3} ppm, worst \
         instant {:.1} ppm; THD+N {:.1} dB ({} analyses), underruns {}, overruns {}",
        e0 * 1e6,
        o.settled_s,
        o.worst_fill_dev,
        o.measured_offset,
        o.bias_ppm,
        o.worst_minute_ppm,
        o.worst_ratio_ppm,
        o.worst_thdn_db,
        o.analyses,
        o.underruns,
        o.overruns
    );
    assert_eq!((o.underruns, o.overruns), (0, 0));
    assert!(o.settled_s < SETTLE_S, "{o:?}");
    assert!(o.worst_fill_dev <= 64.0, "{o:?}");
    assert!(o.analyses > 0 && o.worst_thdn_db < -110.0, "{o:?}");
    o
}

#[test]
fn follower_holds_the_fill_and_the_ratio_for_ten_minutes() {
    for (e0, seed) in [(300e-6, 21), (-300e-6, 22)] {
        let o = check(e0, 600.0, seed);
        // Issue 12: steady-state ratio error under 1 ppm, here for every one-minute mean
        // (nine minutes after settling), not only the mean over all of them.
        assert!(o.worst_minute_ppm < 1.0, "{o:?}");
        assert!(o.bias_ppm.abs() < 1.0, "{o:?}");
    }
}

#[test]
fn follower_holds_other_jitter_draws() {
    // Other random arrival times, four simulated minutes each (three one-minute means).
    for (e0, seed) in [(300e-6, 5), (-300e-6, 6), (120e-6, 7), (-45e-6, 8)] {
        let o = check(e0, 240.0, seed);
        assert!(o.worst_minute_ppm < 1.0, "{o:?}");
    }
}

#[test]
fn without_the_peak_hold_a_minute_is_off_by_more() {
    // The same ten minutes with the follower acting on every fill as measured (the loop
    // before the peak hold): the arrival jitter's slow part moves a minute's mean ratio by
    // more than 1 ppm. Shows that the per-minute check above can fail.
    let o = simulate_with(300e-6, 600.0, SETTLE_S, 21, 0.0);
    eprintln!(
        "without the peak hold, +300 ppm: worst one-minute mean {:.3} ppm",
        o.worst_minute_ppm
    );
    assert!(o.worst_minute_ppm > 1.0, "{o:?}");
}
