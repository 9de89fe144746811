//! Every kernel compiled into this build and runnable on this CPU against the scalar
//! reference: single dot products, blocks of outputs over several channels, and the
//! independence of each output from how outputs are grouped into blocks.

use super::*;
use crate::polyphase::PhaseTable;
use crate::FilterSpec;

/// Small deterministic generator (xorshift64*), values in [-1, 1).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let v = self.0.wrapping_mul(0x2545_F491_4F6C_DD1D);
        (v >> 11) as f64 / (1u64 << 52) as f64 - 1.0
    }

    fn vec<T: Sample>(&mut self, n: usize) -> Vec<T> {
        (0..n).map(|_| T::from_f64_lossy(self.next())).collect()
    }
}

/// Agreement bound between two summation orders, relative to `sum |t_i x_i|` (the size of
/// the terms; relative to the result itself would be meaningless when terms cancel). Issue
/// requirement: 1e-6 for f32, 1e-12 for f64.
fn tolerance<T: Sample>() -> f64 {
    if core::mem::size_of::<T>() == 4 {
        1e-6
    } else {
        1e-12
    }
}

fn abs_dot<T: Sample>(t: &[T], x: &[T]) -> f64 {
    t.iter()
        .zip(x)
        .map(|(a, b)| (a.to_f64_exact() * b.to_f64_exact()).abs())
        .sum()
}

fn simd_kernels() -> Vec<Kernel> {
    Kernel::available()
        .into_iter()
        .filter(|k| *k != Kernel::Scalar)
        .collect()
}

fn dot_agrees<T: Sample>() {
    let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        for n in (0..=70).chain([127, 128, 129, 255, 256, 257, 1000]) {
            let t: Vec<T> = rng.vec(n);
            let x: Vec<T> = rng.vec(n + 3);
            let got = fns.dot(&t, &x).to_f64_exact();
            let want = scalar::dot(&t, &x).to_f64_exact();
            let scale = abs_dot(&t, &x).max(f64::MIN_POSITIVE);
            assert!(
                (got - want).abs() <= tolerance::<T>() * scale,
                "{} n={n}: {got} vs {want} (scale {scale})",
                kernel.name()
            );
        }
    }
}

#[test]
fn dot_agrees_with_scalar_f32() {
    dot_agrees::<f32>();
}

#[test]
fn dot_agrees_with_scalar_f64() {
    dot_agrees::<f64>();
}

/// Run a block of `frames` outputs and check every output against the scalar dot product
/// of the row and window it should use.
#[allow(clippy::too_many_arguments)]
fn check_block<T: Sample>(
    fns: &KernelFns<T>,
    coeffs: &[T],
    tpp: usize,
    up: u64,
    down: u64,
    history: &[T],
    stride: usize,
    channels: usize,
    frames: usize,
) {
    let block = Block::new(
        coeffs,
        tpp,
        up,
        down,
        history,
        stride,
        channels,
        3,
        1 % up,
        frames,
    )
    .expect("valid block");
    let mut out = vec![T::nan(); channels * frames];
    fns.block(&block, &mut out).unwrap();
    for c in 0..channels {
        let hist = &history[c * stride..(c + 1) * stride];
        for k in 0..frames {
            let pos = (1 % up) + k as u64 * down;
            let row = (pos % up) as usize * tpp;
            let at = 3 + (pos / up) as usize;
            let t = &coeffs[row..row + tpp];
            let x = &hist[at..at + tpp];
            let want = scalar::dot(t, x).to_f64_exact();
            let got = out[c * frames + k].to_f64_exact();
            let scale = abs_dot(t, x).max(f64::MIN_POSITIVE);
            assert!(
                (got - want).abs() <= tolerance::<T>() * scale,
                "{} tpp={tpp} up={up} down={down} ch={c}/{channels} k={k}: {got} vs {want}",
                fns.kernel().name()
            );
        }
    }
}

fn block_agrees_random<T: Sample>() {
    let mut rng = Rng(0xD1B5_4A32_D192_ED03);
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        for &tpp in &[8, 16, 24, 32, 40, 64, 72, 128, 136, 256] {
            for &(up, down) in &[(1, 1), (2, 1), (160, 147), (147, 160), (1, 3), (3, 7)] {
                let frames = 37;
                let span = 3 + ((1 % up) + (frames as u64 - 1) * down) / up;
                let stride = span as usize + tpp + 5;
                for channels in 1..=5 {
                    let coeffs: Vec<T> = rng.vec(up as usize * tpp);
                    let history: Vec<T> = rng.vec(stride * channels);
                    check_block(
                        &fns, &coeffs, tpp, up, down, &history, stride, channels, frames,
                    );
                }
            }
        }
    }
}

#[test]
fn block_agrees_with_scalar_on_random_data_f32() {
    block_agrees_random::<f32>();
}

#[test]
fn block_agrees_with_scalar_on_random_data_f64() {
    block_agrees_random::<f64>();
}

/// The real tables the converters use, for a few designs.
fn block_agrees_designed<T: Sample>() {
    let mut rng = Rng(7);
    for &(a, b, db) in &[
        (44_100, 48_000, 100.0),
        (48_000, 44_100, 140.0),
        (44_100, 16_000, 60.0),
    ] {
        let design = FilterSpec::new(a, b).stopband_db(db).design().unwrap();
        let table = PhaseTable::<T>::new(&design);
        let tpp = table.taps_per_phase();
        let frames = 300;
        let span = 3 + (1 + (frames as u64 - 1) * table.down()) / table.up();
        let stride = span as usize + tpp;
        let history: Vec<T> = rng.vec(stride * 2);
        for kernel in Kernel::available() {
            let fns = KernelFns::<T>::new(kernel).unwrap();
            check_block(
                &fns,
                table.coeffs(),
                tpp,
                table.up(),
                table.down(),
                &history,
                stride,
                2,
                frames,
            );
        }
    }
}

#[test]
fn block_agrees_with_scalar_on_designed_tables_f32() {
    block_agrees_designed::<f32>();
}

#[test]
fn block_agrees_with_scalar_on_designed_tables_f64() {
    block_agrees_designed::<f64>();
}

/// An output's value must not depend on its position in a block, on the block's size or on
/// how many channels share the call: the converters rely on this for bit-identical results
/// under any chunking.
fn outputs_independent_of_grouping<T: Sample>() {
    let mut rng = Rng(99);
    let (up, down, tpp) = (160_u64, 147_u64, 72);
    let coeffs: Vec<T> = rng.vec(up as usize * tpp);
    let frames = 200;
    let stride = 3 + ((frames as u64) * down / up) as usize + tpp + 1;
    let history: Vec<T> = rng.vec(stride * 3);
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        let whole = Block::new(&coeffs, tpp, up, down, &history, stride, 3, 3, 5, frames).unwrap();
        let mut all = vec![T::zero(); 3 * frames];
        fns.block(&whole, &mut all).unwrap();
        // One channel at a time, one output at a time.
        for c in 0..3 {
            let hist = &history[c * stride..(c + 1) * stride];
            for k in 0..frames {
                let pos = 5 + k as u64 * down;
                let one = Block::new(
                    &coeffs,
                    tpp,
                    up,
                    down,
                    hist,
                    stride,
                    1,
                    3 + (pos / up) as usize,
                    pos % up,
                    1,
                )
                .unwrap();
                let mut v = [T::zero()];
                fns.block(&one, &mut v).unwrap();
                assert_eq!(
                    v[0].to_f64_exact().to_bits(),
                    all[c * frames + k].to_f64_exact().to_bits(),
                    "{} channel {c} output {k}",
                    kernel.name()
                );
            }
        }
    }
}

#[test]
fn outputs_independent_of_grouping_f32() {
    outputs_independent_of_grouping::<f32>();
}

#[test]
fn outputs_independent_of_grouping_f64() {
    outputs_independent_of_grouping::<f64>();
}

#[test]
fn bad_blocks_are_errors_not_panics() {
    let c = vec![0.0_f32; 32];
    let h = vec![0.0_f32; 40];
    // Taps per phase not a multiple of 8.
    assert!(Block::new(&c, 12, 2, 1, &h, 40, 1, 0, 0, 1).is_err());
    assert!(Block::new(&c, 0, 2, 1, &h, 40, 1, 0, 0, 1).is_err());
    // Zero factors, phase out of range, table too short.
    assert!(Block::new(&c, 8, 0, 1, &h, 40, 1, 0, 0, 1).is_err());
    assert!(Block::new(&c, 8, 2, 0, &h, 40, 1, 0, 0, 1).is_err());
    assert!(Block::new(&c, 8, 2, 1, &h, 40, 1, 0, 2, 1).is_err());
    assert!(Block::new(&c, 16, 4, 1, &h, 40, 1, 0, 0, 1).is_err());
    // Windows past the channel stride or the history.
    assert!(Block::new(&c, 8, 2, 1, &h, 40, 1, 0, 0, 67).is_err());
    assert!(Block::new(&c, 8, 2, 1, &h, 20, 1, 0, 0, 27).is_err());
    assert!(Block::new(&c, 8, 2, 1, &h, 20, 3, 0, 0, 2).is_err());
    assert!(Block::new(&c, 8, 2, 1, &h, 40, 0, 0, 0, 1).is_err());
    assert!(Block::new(&c, 8, u64::MAX, u64::MAX, &h, 40, 1, 0, 0, 3).is_err());
    // The largest block that fits is fine; a short output buffer is an error.
    let ok = Block::new(&c, 8, 2, 1, &h, 40, 1, 0, 0, 66).unwrap();
    let mut out = vec![0.0_f32; 65];
    for k in Kernel::available() {
        let fns = KernelFns::new(k).unwrap();
        assert!(fns.block(&ok, &mut out).is_err());
    }
}

#[test]
fn kernel_choice_and_listing() {
    let avail = Kernel::available();
    assert_eq!(avail[0], Kernel::Scalar);
    assert!(avail.contains(&Kernel::detect()));
    for k in Kernel::ALL {
        assert_eq!(Kernel::from_name(k.name()), Some(k));
        let fns = KernelFns::<f64>::new(k);
        assert_eq!(fns.is_ok(), k.is_available());
    }
    #[cfg(target_arch = "x86_64")]
    assert!(!Kernel::Neon.is_available());
    #[cfg(not(target_arch = "x86_64"))]
    assert!(!Kernel::Avx512.is_available());
}

#[test]
fn simd_kernels_listed_on_this_machine() {
    // Not an assertion about any particular CPU: print what this run covered.
    let names: Vec<&str> = simd_kernels().iter().map(|k| k.name()).collect();
    eprintln!("SIMD kernels tested on this machine: {names:?}");
}
