//! Every kernel compiled into this build and runnable on this CPU against the scalar
//! reference: single dot products, groups of outputs on random and designed tables, and the
//! independence of each output from which inputs share its kernel call.

use super::*;
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

/// Check `fns.groups` on `taps` (rows of `lanes`) against the scalar reference with the same
/// layout, output by output, within [`tolerance`] of the terms' size.
fn check_groups<T: Sample>(fns: &KernelFns<T>, taps: &[T], lanes: usize, inputs: &[&[T]]) {
    let rows = taps.len() / lanes;
    let mut got = vec![T::nan(); inputs.len() * lanes];
    let mut want = vec![T::nan(); inputs.len() * lanes];
    fns.groups(taps, lanes, inputs, &mut got).unwrap();
    let span = GroupSpan {
        taps,
        lanes,
        rows,
        shifts: &[0],
    };
    scalar::span(&span, inputs, &mut want);
    for (i, x) in inputs.iter().enumerate() {
        for l in 0..lanes {
            let column: Vec<T> = (0..rows).map(|r| taps[r * lanes + l]).collect();
            let scale = abs_dot(&column, x).max(f64::MIN_POSITIVE);
            let (g, w) = (
                got[i * lanes + l].to_f64_exact(),
                want[i * lanes + l].to_f64_exact(),
            );
            assert!(
                (g - w).abs() <= tolerance::<T>() * scale,
                "{} rows={rows} lanes={lanes} input {i} lane {l}: {g} vs {w}",
                fns.kernel().name()
            );
        }
    }
}

fn groups_agree_random<T: Sample>() {
    let mut rng = Rng(0xD1B5_4A32_D192_ED03);
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        let lanes = fns.lanes();
        for rows in [1, 2, 3, 7, 8, 64, 65, 200, 301] {
            for count in 1..=9 {
                let taps: Vec<T> = rng.vec(rows * lanes);
                let xs: Vec<Vec<T>> = (0..count).map(|_| rng.vec(rows + 2)).collect();
                let refs: Vec<&[T]> = xs.iter().map(Vec::as_slice).collect();
                check_groups(&fns, &taps, lanes, &refs);
            }
        }
    }
}

#[test]
fn groups_agree_with_scalar_on_random_data_f32() {
    groups_agree_random::<f32>();
}

#[test]
fn groups_agree_with_scalar_on_random_data_f64() {
    groups_agree_random::<f64>();
}

/// The real tables the converters use, for a few designs, every group.
fn groups_agree_designed<T: Sample>() {
    let mut rng = Rng(7);
    for &(a, b, db) in &[
        (44_100, 48_000, 100.0),
        (48_000, 44_100, 140.0),
        (44_100, 16_000, 60.0),
        (48_000, 16_000, 120.0),
    ] {
        let design = FilterSpec::new(a, b).stopband_db(db).design().unwrap();
        for kernel in Kernel::available() {
            let fns = KernelFns::<T>::new(kernel).unwrap();
            let table = crate::table::GroupTable::<T>::for_design(&design, fns.lanes()).unwrap();
            let xs: Vec<Vec<T>> = (0..3).map(|_| rng.vec(table.rows())).collect();
            let refs: Vec<&[T]> = xs.iter().map(Vec::as_slice).collect();
            for j in 0..table.groups() {
                check_groups(&fns, table.group(j), table.lanes(), &refs);
            }
        }
    }
}

#[test]
fn groups_agree_with_scalar_on_designed_tables_f32() {
    groups_agree_designed::<f32>();
}

#[test]
fn groups_agree_with_scalar_on_designed_tables_f64() {
    groups_agree_designed::<f64>();
}

/// An output's value must not depend on which other inputs share its kernel call: the
/// converters rely on this for bit-identical results under any chunking.
fn outputs_independent_of_batching<T: Sample>() {
    let mut rng = Rng(99);
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        let lanes = fns.lanes();
        let rows = 77;
        let taps: Vec<T> = rng.vec(rows * lanes);
        let xs: Vec<Vec<T>> = (0..25).map(|_| rng.vec(rows)).collect();
        let refs: Vec<&[T]> = xs.iter().map(Vec::as_slice).collect();
        let mut all = vec![T::zero(); 25 * lanes];
        fns.groups(&taps, lanes, &refs, &mut all).unwrap();
        for (i, x) in refs.iter().enumerate() {
            let mut one = vec![T::zero(); lanes];
            fns.groups(&taps, lanes, &[x], &mut one).unwrap();
            for l in 0..lanes {
                assert_eq!(
                    one[l].to_f64_exact().to_bits(),
                    all[i * lanes + l].to_f64_exact().to_bits(),
                    "{} input {i} lane {l}",
                    kernel.name()
                );
            }
        }
    }
}

#[test]
fn outputs_independent_of_batching_f32() {
    outputs_independent_of_batching::<f32>();
}

#[test]
fn outputs_independent_of_batching_f64() {
    outputs_independent_of_batching::<f64>();
}

/// A span of several groups, each reading the inputs from its own shift, gives every group
/// the bits it gets on its own (the converters take whole spans, the tests above single
/// groups), and agrees with the scalar reference.
#[test]
fn spans_give_each_group_its_own_bits() {
    let mut rng = Rng(31);
    for kernel in Kernel::available() {
        let fns = KernelFns::<f32>::new(kernel).unwrap();
        let lanes = fns.lanes();
        for rows in [1, 40, 41] {
            // Six groups: with one to three inputs the kernels run several groups side by
            // side (and the last ones alone); with eleven, one group at a time.
            let shifts = [3, 10, 18, 18, 25, 31];
            let g = shifts.len();
            let taps: Vec<f32> = rng.vec(g * rows * lanes);
            let reach = 31 - 3 + rows;
            let xs: Vec<Vec<f32>> = (0..11).map(|_| rng.vec(reach)).collect();
            let refs: Vec<&[f32]> = xs.iter().map(Vec::as_slice).collect();
            let span = GroupSpan {
                taps: &taps,
                lanes,
                rows,
                shifts: &shifts,
            };
            // Each group on its own, for all eleven inputs.
            let alone: Vec<Vec<f32>> = (0..g)
                .map(|j| {
                    let own: Vec<&[f32]> = refs.iter().map(|x| &x[shifts[j] - 3..]).collect();
                    let mut one = vec![f32::NAN; 11 * lanes];
                    let t = &taps[j * rows * lanes..(j + 1) * rows * lanes];
                    fns.groups(t, lanes, &own, &mut one).unwrap();
                    one
                })
                .collect();
            for count in [1, 2, 3, 11] {
                let mut all = vec![f32::NAN; count * g * lanes];
                fns.span(&span, &refs[..count], &mut all).unwrap();
                let mut want = vec![f32::NAN; count * g * lanes];
                scalar::span(&span, &refs[..count], &mut want);
                for (j, one) in alone.iter().enumerate() {
                    for i in 0..count {
                        for l in 0..lanes {
                            let (a, b) = (all[(i * g + j) * lanes + l], one[i * lanes + l]);
                            let k = kernel.name();
                            assert_eq!(a.to_bits(), b.to_bits(), "{k} rows {rows} count {count}");
                            let w = want[(i * g + j) * lanes + l];
                            assert!((a - w).abs() <= 1e-5, "{k} rows {rows}: {a} vs {w}");
                        }
                    }
                }
            }
        }
    }
}

#[test]
fn bad_spans_are_errors_not_panics() {
    let taps = vec![0.0_f32; 64];
    let x = vec![0.0_f32; 8];
    let mut out = vec![0.0_f32; 64];
    let ok = GroupSpan {
        taps: &taps,
        lanes: 4,
        rows: 4,
        shifts: &[0, 2, 4],
    };
    for k in Kernel::available() {
        let fns = KernelFns::new(k).unwrap();
        assert!(fns.span(&ok, &[&x, &x], &mut out).is_ok());
        // No rows; no groups; decreasing shifts; taps short of three groups; an input short
        // of the last group's reach; no lanes; an output short of six inputs' groups.
        assert!(fns
            .span(&GroupSpan { rows: 0, ..ok }, &[&x], &mut out)
            .is_err());
        assert!(fns
            .span(&GroupSpan { shifts: &[], ..ok }, &[&x], &mut out)
            .is_err());
        assert!(fns
            .span(
                &GroupSpan {
                    shifts: &[2, 0],
                    ..ok
                },
                &[&x],
                &mut out
            )
            .is_err());
        assert!(fns
            .span(
                &GroupSpan {
                    taps: &taps[..40],
                    ..ok
                },
                &[&x],
                &mut out
            )
            .is_err());
        assert!(fns.span(&ok, &[&x[..7]], &mut out).is_err());
        assert!(fns
            .span(&GroupSpan { lanes: 0, ..ok }, &[&x], &mut out)
            .is_err());
        assert!(fns.span(&ok, &[x.as_slice(); 6], &mut out).is_err());
    }
}

/// A table of another width than the kernel's runs on the scalar reference, bit for bit.
#[test]
fn other_widths_fall_back_to_the_reference() {
    let mut rng = Rng(5);
    let taps: Vec<f32> = rng.vec(30 * 3);
    let x: Vec<f32> = rng.vec(30);
    let mut want = vec![0.0_f32; 3];
    let span = GroupSpan {
        taps: &taps,
        lanes: 3,
        rows: 30,
        shifts: &[0],
    };
    scalar::span(&span, &[&x], &mut want);
    for kernel in Kernel::available() {
        let mut got = vec![0.0_f32; 3];
        KernelFns::new(kernel)
            .unwrap()
            .groups(&taps, 3, &[&x], &mut got)
            .unwrap();
        assert_eq!(got, want, "{}", kernel.name());
    }
}

#[test]
fn bad_groups_are_errors_not_panics() {
    let taps = vec![0.0_f32; 32];
    let x = vec![0.0_f32; 4];
    let mut out = vec![0.0_f32; 16];
    for k in Kernel::available() {
        let fns = KernelFns::new(k).unwrap();
        // Zero lanes; lanes not dividing the taps; an input shorter than the rows; an
        // output shorter than lanes per input.
        assert!(fns.groups(&taps, 0, &[&x], &mut out).is_err());
        assert!(fns.groups(&taps, 5, &[&x], &mut out).is_err());
        assert!(fns.groups(&taps, 4, &[&x[..3]], &mut out).is_err());
        assert!(fns.groups(&taps, 8, &[&x, &x, &x], &mut out).is_err());
        assert!(fns.groups(&taps, 8, &[&x, &x], &mut out).is_ok());
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

/// `glide_run` of every kernel against the scalar reference: linear and cubic tables, one to
/// five channels, taps per output around the vector widths, runs of one to nine outputs
/// at random blocks (also two or four at a time the same block) and positions, within [`tolerance`] of
/// the terms' size; and each
/// output's value alone (a run of one, one channel) is its value in the run, bit for bit.
fn glide_run_agrees<T: Sample>() {
    let mut rng = Rng(0x2545_F491_4F6C_DD1D);
    let chunk = glide_chunk::<T>();
    for kernel in Kernel::available() {
        let fns = KernelFns::<T>::new(kernel).unwrap();
        for order in [1, 3] {
            for cols in [1, 7, 8, 15, 16, 17, 33, 145, 213] {
                let block = glide_block_len::<T>(cols, order);
                let phases = 5;
                let mut table: Vec<T> = rng.vec(phases * block);
                // Padding past `cols` is zero in a real table.
                for b in table.chunks_exact_mut(block) {
                    for (i, v) in b.iter_mut().enumerate() {
                        if (i / ((order + 1) * chunk)) * chunk + i % chunk >= cols {
                            *v = T::zero();
                        }
                    }
                }
                for channels in 1..=5 {
                    let stride = cols + 9;
                    let hist: Vec<T> = rng.vec(channels * stride);
                    // Outputs at blocks of their own, and in pairs or fours sharing a block
                    // (the SIMD kernels then load the block's rows once for them).
                    for (outputs, share) in (1..=9).flat_map(|n| [(n, 1), (n, 2), (n, 4)]) {
                        let blocks: Vec<usize> = (0..outputs)
                            .map(|k| (k / share * 3 % phases) * block)
                            .collect();
                        let starts: Vec<usize> = (0..outputs).map(|k| k % 9).collect();
                        let fracs: Vec<T> = (0..outputs)
                            .map(|_| T::from_f64_lossy(0.5 * (rng.next() + 1.0)))
                            .collect();
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
                        let mut got = vec![T::nan(); outputs * channels];
                        let mut want = vec![T::nan(); outputs * channels];
                        fns.glide_run(&g, &mut got).unwrap();
                        assert!(glide::glide_run(&g, &mut want));
                        for k in 0..outputs {
                            // The size of each interpolated tap's terms, in f64: `sum_r |c_r|
                            // f^r` (Horner's rounding errors scale with the terms, not with
                            // the tap, which may be small by cancellation).
                            let f = fracs[k].to_f64_exact();
                            let taps: Vec<f64> = (0..cols)
                                .map(|j| {
                                    let at =
                                        blocks[k] + (j / chunk) * (order + 1) * chunk + j % chunk;
                                    (0..=order).rev().fold(0.0, |t, r| {
                                        t * f.abs() + table[at + r * chunk].to_f64_exact().abs()
                                    })
                                })
                                .collect();
                            for c in 0..channels {
                                let x = &hist[starts[k] + c * stride..][..cols];
                                let scale: f64 = taps
                                    .iter()
                                    .zip(x)
                                    .map(|(t, v)| (t * v.to_f64_exact()).abs())
                                    .sum::<f64>()
                                    * 4.0;
                                let (gv, wv) = (
                                    got[k * channels + c].to_f64_exact(),
                                    want[k * channels + c].to_f64_exact(),
                                );
                                assert!(
                                    (gv - wv).abs() <= tolerance::<T>() * scale.max(f64::MIN_POSITIVE),
                                    "{} order {order} cols {cols} ch {c}/{channels} out {k}/{outputs}: {gv} vs {wv}",
                                    kernel.name()
                                );
                                let one = GlideRun {
                                    hist: &hist[c * stride..],
                                    channels: 1,
                                    blocks: &blocks[k..=k],
                                    starts: &starts[k..=k],
                                    fracs: &fracs[k..=k],
                                    ..g
                                };
                                let mut alone = [T::nan()];
                                fns.glide_run(&one, &mut alone).unwrap();
                                assert_eq!(alone[0].to_f64_exact().to_bits(), gv.to_bits());
                            }
                        }
                    }
                }
            }
        }
    }
}

#[test]
fn glide_run_agrees_with_scalar_f32() {
    glide_run_agrees::<f32>();
}

#[test]
fn glide_run_agrees_with_scalar_f64() {
    glide_run_agrees::<f64>();
}

#[test]
fn bad_glide_runs_are_errors_not_panics() {
    let table = vec![0.0_f32; glide_block_len::<f32>(10, 3) * 2];
    let hist = vec![0.0_f32; 40];
    let ok = GlideRun {
        table: &table,
        cols: 10,
        order: 3,
        hist: &hist,
        stride: 20,
        channels: 2,
        blocks: &[0, glide_block_len::<f32>(10, 3)],
        starts: &[0, 10],
        fracs: &[0.5, 0.25],
    };
    for k in Kernel::available() {
        let fns = KernelFns::<f32>::new(k).unwrap();
        let mut out = [0.0_f32; 4];
        assert!(fns.glide_run(&ok, &mut out).is_ok());
        assert!(fns.glide_run(&ok, &mut out[..3]).is_err());
        assert!(fns
            .glide_run(&GlideRun { order: 2, ..ok }, &mut out)
            .is_err());
        assert!(fns
            .glide_run(&GlideRun { order: 1, ..ok }, &mut out)
            .is_ok());
        assert!(fns
            .glide_run(&GlideRun { channels: 3, ..ok }, &mut out)
            .is_err());
        assert!(fns
            .glide_run(&GlideRun { channels: 0, ..ok }, &mut out)
            .is_err());
        assert!(fns
            .glide_run(
                &GlideRun {
                    starts: &[0, 11],
                    ..ok
                },
                &mut out
            )
            .is_err());
        assert!(fns
            .glide_run(
                &GlideRun {
                    blocks: &[0, glide_block_len::<f32>(10, 3) + 1],
                    ..ok
                },
                &mut out
            )
            .is_err());
        assert!(fns
            .glide_run(
                &GlideRun {
                    fracs: &[0.5],
                    ..ok
                },
                &mut out
            )
            .is_err());
    }
}

#[test]
fn cubic_coefficients_are_the_lagrange_weights() {
    // The polynomial of `glide::cubic_coefficients` at position `a` equals the Lagrange
    // weights of `Interpolation::weights` applied to the same four rows (both expand the
    // basis on the nodes -1, 0, 1, 2; common practice, no source).
    let y = [0.3, -1.2, 2.5, 0.7];
    let c = glide::cubic_coefficients(y);
    for a in [0.0, 0.1, 0.5, 0.787, 0.999] {
        let w = crate::Interpolation::Cubic.weights(a);
        let lagrange: f64 = w.iter().zip(y).map(|(w, y)| w * y).sum();
        let horner = ((c[3] * a + c[2]) * a + c[1]) * a + c[0];
        assert!(
            (lagrange - horner).abs() < 1e-14,
            "{a}: {lagrange} vs {horner}"
        );
    }
}
