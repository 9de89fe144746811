//! Property tests of the any-ratio converter: chunk invariance (bit for bit, also through
//! glides, linear and minimum phase), runs computed in table order = one output at a time,
//! planar = interleaved, and typed errors instead of panics.

use proptest::prelude::*;
use resample_core::{Error, FilterSpec, GlideConverter, GlideDesign, Kernel, Phase};
use std::sync::OnceLock;

fn design() -> &'static GlideDesign {
    static D: OnceLock<GlideDesign> = OnceLock::new();
    D.get_or_init(|| {
        FilterSpec::new(44_100, 48_000)
            .stopband_db(100.0)
            .design_glide()
            .unwrap()
    })
}

/// A minimum-phase table: its kernel reaches far behind each output's time and little
/// ahead, so the history kept and the look-ahead differ from the linear-phase one's.
fn minimum() -> &'static GlideDesign {
    static D: OnceLock<GlideDesign> = OnceLock::new();
    D.get_or_init(|| {
        FilterSpec::new(44_100, 48_000)
            .stopband_db(120.0)
            .phase(Phase::Minimum)
            .design_glide()
            .unwrap()
    })
}

fn noise(n: usize, seed: u64) -> Vec<f64> {
    // A small xorshift generator: deterministic test input, not product data.
    let mut s = seed | 1;
    (0..n)
        .map(|_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        })
        .collect()
}

/// Feed interleaved `x` in chunks (cycled) with output room (cycled); a glide to `r1` over
/// `frames` starts at output `glide_at` (or at the end of the output, if sooner); then
/// flush.
#[allow(clippy::too_many_arguments)]
fn stream(
    d: &GlideDesign,
    x: &[f64],
    ch: usize,
    r0: f64,
    r1: f64,
    frames: u64,
    glide_at: usize,
    chunks: &[usize],
    outs: &[usize],
) -> Vec<f64> {
    let mut conv = GlideConverter::<f64>::with_kernel(d, ch, r0, Kernel::detect()).unwrap();
    let mut y = Vec::new();
    let mut out = vec![0.0; 3000 * ch];
    let total = x.len() / ch;
    let mut pos = 0;
    let mut k = 0;
    let mut glided = false;
    loop {
        let produced = y.len() / ch;
        if !glided && produced == glide_at {
            conv.glide_to(r1, frames).unwrap();
            glided = true;
        }
        let n = chunks[k % chunks.len()].min(total - pos);
        let mut o = outs[k % outs.len()];
        if !glided {
            o = o.min(glide_at - produced);
        }
        k += 1;
        let p = conv
            .process_interleaved(&x[pos * ch..(pos + n) * ch], &mut out[..o * ch])
            .unwrap();
        y.extend_from_slice(&out[..p.frames_written * ch]);
        pos += p.frames_read;
        if pos == total && p.frames_written == 0 {
            break; // all input taken and every ready output delivered
        }
    }
    if !glided {
        conv.glide_to(r1, frames).unwrap();
    }
    loop {
        let w = conv.flush_interleaved(&mut out[..13 * ch]).unwrap();
        if w == 0 {
            break;
        }
        y.extend_from_slice(&out[..w * ch]);
    }
    assert!(conv.is_finished());
    y
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    #[test]
    fn output_does_not_depend_on_chunking(
        seed in 1u64..1000,
        ch in 1usize..4,
        r0 in 0.2f64..3.0,
        r1 in 0.2f64..3.0,
        frames in 0u64..3000,
        glide_at in 0usize..3000,
        chunks in prop::collection::vec(1usize..700, 1..5),
        outs in prop::collection::vec(1usize..900, 1..5),
    ) {
        let x = noise(4000 * ch, seed);
        let whole = stream(design(), &x, ch, r0, r1, frames, glide_at, &[4000], &[3000]);
        let pieces = stream(design(), &x, ch, r0, r1, frames, glide_at, &chunks, &outs);
        prop_assert_eq!(whole.len(), pieces.len());
        prop_assert!(whole.iter().zip(&pieces).all(|(a, b)| a.to_bits() == b.to_bits()));
    }

    #[test]
    fn minimum_phase_output_does_not_depend_on_chunking(
        seed in 1u64..1000,
        ch in 1usize..4,
        r0 in 0.2f64..3.0,
        r1 in 0.2f64..3.0,
        frames in 0u64..3000,
        glide_at in 0usize..3000,
        chunks in prop::collection::vec(1usize..700, 1..5),
        outs in prop::collection::vec(1usize..900, 1..5),
    ) {
        let x = noise(4000 * ch, seed);
        let whole = stream(minimum(), &x, ch, r0, r1, frames, glide_at, &[4000], &[3000]);
        let pieces = stream(minimum(), &x, ch, r0, r1, frames, glide_at, &chunks, &outs);
        prop_assert_eq!(whole.len(), pieces.len());
        prop_assert!(whole.iter().zip(&pieces).all(|(a, b)| a.to_bits() == b.to_bits()));
    }
}

/// The converter computes a run's outputs in the order of the table blocks they read; with
/// room for one output per call every run holds one output, so nothing is reordered. Both
/// must agree bit for bit (steady ratio, and a glide across it), for 1 to 3 channels.
#[test]
fn runs_in_table_order_equal_one_output_at_a_time() {
    for ch in 1..=3 {
        let x = noise(4000 * ch, 7 + ch as u64);
        for (r0, r1, frames) in [(1.088_544_2, 1.088_544_2, 0), (1.088_544_2, 1.37, 2500)] {
            let whole = stream(design(), &x, ch, r0, r1, frames, 300, &[4000], &[3000]);
            let single = stream(design(), &x, ch, r0, r1, frames, 300, &[4000], &[1]);
            assert_eq!(whole.len(), single.len());
            assert!(
                whole
                    .iter()
                    .zip(&single)
                    .all(|(a, b)| a.to_bits() == b.to_bits()),
                "{ch} channels, ratio {r0} -> {r1}"
            );
        }
    }
}

#[test]
fn planar_equals_interleaved() {
    let ch = 3;
    let x = noise(5000 * ch, 7);
    let mut a = GlideConverter::<f64>::with_kernel(design(), ch, 0.7, Kernel::detect()).unwrap();
    let mut b = a.clone();
    let mut yi = vec![0.0; 8000 * ch];
    let pi = a.process_interleaved(&x, &mut yi).unwrap();
    let planar: Vec<Vec<f64>> = (0..ch)
        .map(|c| x.iter().skip(c).step_by(ch).copied().collect())
        .collect();
    let mut yp = vec![vec![0.0; 8000]; ch];
    let pp = b.process_planar(&planar, &mut yp).unwrap();
    assert_eq!(pi, pp);
    for f in 0..pi.frames_written {
        for c in 0..ch {
            assert_eq!(yi[f * ch + c].to_bits(), yp[c][f].to_bits());
        }
    }
}

#[test]
fn bad_buffers_are_errors_not_panics() {
    let mut c = GlideConverter::<f32>::with_kernel(design(), 2, 1.0, Kernel::Scalar).unwrap();
    let mut out = vec![0.0_f32; 64];
    assert!(matches!(
        c.process_interleaved(&[0.0; 3], &mut out),
        Err(Error::BufferShape { .. })
    ));
    assert!(matches!(
        c.process_interleaved(&[0.0; 4], &mut out[..5]),
        Err(Error::BufferShape { .. })
    ));
    let one = [vec![0.0_f32; 4]];
    let mut two = [vec![0.0_f32; 4], vec![0.0; 4]];
    assert!(c.process_planar(&one, &mut two).is_err());
    let uneven = [vec![0.0_f32; 4], vec![0.0; 3]];
    assert!(c.process_planar(&uneven, &mut two).is_err());
    let empty: [Vec<f32>; 0] = [];
    assert!(c.process_planar(&empty, &mut two).is_err());
    c.flush_interleaved(&mut out).unwrap();
    assert!(matches!(
        c.process_interleaved(&[0.0; 4], &mut out),
        Err(Error::InputAfterFlush)
    ));
    // Empty output room is fine: nothing read, nothing written.
    c.reset();
    let p = c.process_interleaved(&[0.0; 4000], &mut []).unwrap();
    assert_eq!(p.frames_written, 0);
}

#[test]
fn converter_is_send() {
    fn send<T: Send>() {}
    send::<GlideConverter<f32>>();
    send::<GlideConverter<f64>>();
    send::<GlideDesign>();
}
