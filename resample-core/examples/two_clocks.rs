//! Demo (simulated, demo data generated here): a loop between two audio clocks. A capture
//! device runs 120 ppm fast and delivers 480-frame bursts a little late at random; a
//! playback device at 48 kHz pulls 128-frame callbacks. A `DriftFollower` steers a
//! `GlideConverter` from the FIFO's fill; every 10 simulated seconds the demo prints the
//! fill, the ratio and the drift the loop has found.
//!
//! `cargo run --release -p resample-core --example two_clocks`
//!
//! Listening to test tones: keep the playback level low (full-scale tones can damage
//! hearing and loudspeakers). This demo writes no audio.

use std::collections::VecDeque;

use resample_core::{DriftFollower, FilterSpec, GlideConverter};

const FS: f64 = 48_000.0;
const BURST: usize = 480;
const CALLBACK: usize = 128;
const TARGET: f64 = 960.0;
const DRIFT: f64 = 120e-6;

fn main() -> Result<(), resample_core::Error> {
    // Outside the audio callbacks: design, converter, follower, buffers.
    let design = FilterSpec::new(48_000, 48_000)
        .stopband_db(120.0)
        .design_glide()?;
    let r = design.report();
    println!(
        "table: P = {} phases, {} interpolation, {} taps per output, {} bytes (f32), \
         interpolation error {:.1} dB",
        r.phases,
        r.interpolation.name(),
        r.taps_per_output,
        r.table_bytes_f32,
        r.interpolation_error_db
    );
    let mut conv = GlideConverter::<f32>::new(&design, 1)?;
    let mut follower = DriftFollower::new(48_000, 48_000, TARGET)?;
    let mut fifo: VecDeque<f32> = VecDeque::with_capacity(8192);
    let mut take: Vec<f32> = Vec::with_capacity(8192);
    let mut out = vec![0.0_f32; CALLBACK];
    let mut rng = 0x9e37_79b9_7f4a_7c15_u64;

    let burst_period = BURST as f64 / (FS * (1.0 + DRIFT));
    let mut next_burst = burst_period;
    let mut last_write = 0.0;
    let mut produced = 0_u64;
    let mut started = false;
    for j in 0..(60.0 * FS / CALLBACK as f64) as u64 {
        let t = j as f64 * CALLBACK as f64 / FS;
        // The capture side: bursts arrive up to 2 ms after they are complete.
        rng ^= rng << 13;
        rng ^= rng >> 7;
        rng ^= rng << 17;
        let late = 0.002 * (rng >> 11) as f64 / (1u64 << 53) as f64;
        while next_burst + late <= t {
            for _ in 0..BURST {
                let v = 0.25 * (2.0 * std::f64::consts::PI * 1000.0 * produced as f64 / FS).sin();
                fifo.push_back(v as f32);
                produced += 1;
            }
            last_write = next_burst + late;
            next_burst += burst_period;
        }
        if !started {
            started = fifo.len() as f64 >= TARGET;
            continue;
        }
        // The playback callback: measure, steer, convert exactly CALLBACK frames.
        let pending = fifo.len() as f64 + conv.input_frames() as f64 - conv.next_output_time();
        let fill = follower.fill_between_writes(pending, BURST, t - last_write);
        let ratio = follower.update(fill, CALLBACK);
        conv.glide_to(ratio, CALLBACK as u64)?;
        let need = conv.input_frames_for_output(CALLBACK as u64) as usize;
        if fifo.len() < need {
            println!("{t:7.2} s: underrun");
            continue;
        }
        take.clear();
        take.extend(fifo.drain(..need));
        conv.process_interleaved(&take, &mut out)?;
        if j % 3750 == 0 {
            println!(
                "{t:5.1} s: fill {:7.1} frames (target {TARGET}), ratio {:.9}, drift found \
                 {:+7.2} ppm (true {:+.2})",
                follower.smoothed_fill(),
                ratio,
                follower.correction() * 1e6,
                DRIFT * 1e6
            );
        }
    }
    Ok(())
}
