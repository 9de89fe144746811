//! Measuring an FIR prototype's magnitude response on a dense grid (zero-padded FFT with peak
//! refinement), so that a design's stopband and ripple are measured, not assumed, and its
//! group delay. Symmetric (linear-phase) prototypes take a faster exact evaluation; any other
//! prototype (minimum phase) is evaluated in full.

use std::sync::{Arc, Mutex, PoisonError};

use crate::kernel::wide::{run, Width};
use crate::par::*;
use realfft::{ComplexToReal, RealFftPlanner};
use rustfft::num_complex::Complex;
use rustfft::{Fft, FftPlanner};

/// Largest FFT the design measurement will run (points). Larger prototypes are measured on
/// a resampled copy of the same continuous kernel (see [`crate::design`]).
pub const MAX_MEASURE_FFT: usize = 1 << 22;

/// Least zero-padding factor of the FFT grid used by [`measure`] (the FFT length is this
/// many times the smallest fast FFT length, 2^a 3^b 5^c, at or above the filter length).
pub const OVERSAMPLE: usize = 16;

/// What [`measure`] found, magnitudes as plain ratios (not dB).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measured {
    /// Largest magnitude anywhere in the stopband.
    pub stopband_peak: f64,
    /// Largest magnitude in the passband.
    pub passband_max: f64,
    /// Smallest magnitude in the passband.
    pub passband_min: f64,
    /// Magnitude at 0 Hz.
    pub dc: f64,
}

impl Measured {
    /// Stopband attenuation in dB relative to the DC gain (positive = attenuation).
    pub fn stopband_db(&self) -> f64 {
        20.0 * (self.dc / self.stopband_peak.max(f64::MIN_POSITIVE)).log10()
    }

    /// Passband ripple in dB, peak to peak.
    pub fn ripple_db(&self) -> f64 {
        20.0 * (self.passband_max / self.passband_min.max(f64::MIN_POSITIVE)).log10()
    }
}

/// Measure `taps` (at sample rate 1) over the passband `[0, pass]` and stopband `[stop, 0.5]`,
/// frequencies as fractions of the sample rate.
///
/// The FFT is zero-padded to at least [`OVERSAMPLE`] times the filter length (up to
/// [`MAX_MEASURE_FFT`]); the stopband's local peaks that could hold the maximum, and the
/// passband's local extremes that could hold its largest and smallest values, are refined
/// on the exact response, and both band edges are evaluated exactly, so lobe tops between
/// grid points are not missed and the figures do not depend on the grid.
///
/// Each call plans its FFT afresh; to measure several filters, a [`Measurer`] keeps the plans
/// and buffers between calls (same results, bit for bit).
pub fn measure(taps: &[f64], pass: f64, stop: f64) -> Measured {
    Measurer::new().measure(taps, pass, stop)
}

/// [`measure`] with FFT plans and work buffers kept between calls, for measuring several
/// filters in a row (a design's successive attempts). The results are bit-identical to
/// [`measure`]'s.
///
/// The zero-padded spectrum (`N = SUB_GRIDS M` points, at least [`OVERSAMPLE`] times the
/// filter length; `SUB_GRIDS = 2 OVERSAMPLE`, so `M` is at least half the filter length) is
/// computed as `SUB_GRIDS` interleaved sub-grids: bins `k = SUB_GRIDS m + r` are the
/// `M`-point FFT of the taps folded mod `M` and modulated by `e^{-j 2 pi n r / N}`
/// (decimation in frequency, with the zero padding pruned away). For real taps, sub-grid
/// `SUB_GRIDS - r` mirrors sub-grid `r`, so `SUB_GRIDS / 2 + 1` FFTs of `M` points give every
/// bin up to `N / 2`. The sub-grids are independent (they run in parallel), and an `M`-point
/// plan costs a fraction of an `N`-point one, whose twiddle factors take longer to compute
/// than the transform itself for a filter measured once (with twice [`OVERSAMPLE`]
/// sub-grids, half the filter's length: planning is on the critical path of a design).
pub struct Measurer {
    /// Complex FFTs (taps without symmetry).
    planner: FftPlanner<f64>,
    /// Complex-to-real FFTs (symmetric taps).
    real_planner: RealFftPlanner<f64>,
    /// Sub-grid FFT length the planners hold plans for (0: none).
    planned: usize,
    /// The factors `e^{-j 2 pi j / N}` of the grid of `SUB_GRIDS planned` points.
    twiddles: Twiddles,
    /// Work buffers not in use: each FFT's task takes a set and gives it back, so there
    /// are as many sets as FFTs that ran at once (one per thread at most).
    work: Mutex<Vec<Work>>,
    peaks: Vec<(f64, usize)>,
    /// The build of the spectrum's loops (the same bits for every width).
    width: Width,
}

impl std::fmt::Debug for Measurer {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Measurer")
            .field("sub_grid_len", &self.planned)
            .finish_non_exhaustive()
    }
}

impl Default for Measurer {
    fn default() -> Self {
        Self::new()
    }
}

/// One FFT task's buffers.
#[derive(Default)]
struct Work {
    /// The FFT's input (the whole buffer of an in-place complex FFT).
    input: Vec<Complex<f64>>,
    /// The FFT's scratch.
    scratch: Vec<Complex<f64>>,
    /// The magnitudes of the sub-grid computed.
    values: Vec<f64>,
}

/// Interleaved sub-grids the grid of `N` points is computed as (see [`Measurer`]).
const SUB_GRIDS: usize = 2 * OVERSAMPLE;
/// Sub-grids computed: `0..=SUB_GRIDS / 2` (the others mirror them).
const GRIDS: usize = SUB_GRIDS / 2 + 1;
/// Entries of the fine table of `e^{-j 2 pi j / N}` (see [`Twiddles`]).
const FINE: usize = 64;

/// `e^{-j 2 pi j / N}` for any `j < N`, as the product of a coarse and a fine table entry
/// (each product is within a few rounding errors of the exact value). The coarse table,
/// `N / 64` entries, is itself made of products of two tables (`e^{-j 2 pi 4096 a / N}` and
/// `e^{-j 2 pi 64 b / N}`), so that `N / 4096 + 128` evaluations of `sin_cos` make the
/// whole set: making it is on the critical path of a design. The default has no entries
/// (no grid yet).
#[derive(Default)]
struct Twiddles {
    coarse: Vec<Complex<f64>>,
    fine: Vec<Complex<f64>>,
}

impl Twiddles {
    fn new(n: usize) -> Self {
        let at = |j: usize| {
            let (s, c) = (-2.0 * core::f64::consts::PI * j as f64 / n as f64).sin_cos();
            Complex::new(c, s)
        };
        let len = n.div_ceil(FINE);
        let top: Vec<Complex<f64>> = (0..len.div_ceil(FINE))
            .map(|a| at(a * FINE * FINE))
            .collect();
        let step: Vec<Complex<f64>> = (0..FINE).map(|b| at(b * FINE)).collect();
        let coarse = top
            .iter()
            .flat_map(|&t| step.iter().map(move |&s| t * s))
            .take(len)
            .collect();
        Self {
            coarse,
            fine: (0..FINE).map(at).collect(),
        }
    }

    #[inline(always)]
    fn get(&self, j: usize) -> Complex<f64> {
        self.coarse[j / FINE] * self.fine[j % FINE]
    }
}

impl Measurer {
    /// A measurer with no plans yet.
    pub fn new() -> Self {
        Self {
            planner: FftPlanner::new(),
            real_planner: RealFftPlanner::new(),
            planned: 0,
            twiddles: Twiddles::default(),
            work: Mutex::new(Vec::new()),
            peaks: Vec::new(),
            width: Width::detect(),
        }
    }

    /// Plan the FFT for measuring a symmetric filter of `taps_len` taps, as a design's are
    /// (what [`Measurer::measure`] does first; calling it early, e.g. beside computing the
    /// taps, takes that work off the critical path). The work buffers are allocated by the
    /// tasks that use them, so a fresh process's page faults are taken on both cores.
    pub fn prepare(&mut self, taps_len: usize) {
        self.real_plan(sub_grid_len(taps_len));
    }

    /// The complex-to-real FFT of `sub` points (planned if needed).
    fn real_plan(&mut self, sub: usize) -> Arc<dyn ComplexToReal<f64>> {
        self.forget_other_plans(sub);
        self.real_planner.plan_fft_inverse(sub)
    }

    /// The complex FFT of `sub` points (planned if needed).
    fn complex_plan(&mut self, sub: usize) -> Arc<dyn Fft<f64>> {
        self.forget_other_plans(sub);
        self.planner.plan_fft_forward(sub)
    }

    /// Drop the plans of another FFT length (one length at a time is kept).
    fn forget_other_plans(&mut self, sub: usize) {
        if self.planned != sub {
            self.planner = FftPlanner::new();
            self.real_planner = RealFftPlanner::new();
            self.twiddles = Twiddles::new(sub * SUB_GRIDS);
            self.planned = sub;
        }
    }

    /// The magnitude spectrum of `taps` on `SUB_GRIDS sub` points, sub-grid by sub-grid
    /// (plans and buffers for `sub` are made if needed): `per_grid(r, values)` is called
    /// on a worker with each sub-grid `r < GRIDS` as soon as it is computed, and its
    /// results come back in the order of `r` (bin `k` of the whole grid is read as
    /// `bin` reads it). The sub-grids are not kept: what the caller needs of them is what
    /// `per_grid` returns. Symmetric taps of odd length that fit the grid (of even `sub`)
    /// take the faster path ([`Measurer::spectrum_symmetric`]).
    fn spectrum<T: Send>(
        &mut self,
        taps: &[f64],
        sub: usize,
        per_grid: impl Fn(usize, &[f64]) -> T + Sync,
    ) -> Vec<T> {
        // (The grid lengths are even; an odd one would have no real middle entry.)
        if sub % 2 == 0 && taps.len() <= sub * SUB_GRIDS && is_symmetric(taps) {
            self.spectrum_symmetric(taps, sub, per_grid)
        } else {
            self.spectrum_general(taps, sub, per_grid)
        }
    }

    /// [`Measurer::spectrum`] for odd-length symmetric taps: each sub-grid by a
    /// complex-to-real FFT, which reads half the input and computes half the work of a
    /// complex one.
    ///
    /// Centred on tap 0 (a circular shift, which moves only the phase), the taps are a real
    /// even sequence, so every bin of their DFT is real, and sub-grid `r`'s FFT input `u_r`
    /// (the taps folded mod `M`, tap `n` times `e^{-j 2 pi n r / N}`) is conjugate
    /// symmetric, `u_r[-k] = conj(u_r[k])`. Its DFT `X` is then real, so `X = conj(X)` is the
    /// unnormalised inverse DFT of `conj(u_r)`: a complex-to-real FFT of entries `0..=M/2`
    /// of `conj(u_r)` (properties of the DFT, common practice, no source). The entries are
    /// written in passes up to twice the sub-grid's length ([`write_symmetric`], every
    /// design's case) and folded tap by tap past it ([`fold_symmetric`]).
    fn spectrum_symmetric<T: Send>(
        &mut self,
        taps: &[f64],
        sub: usize,
        per_grid: impl Fn(usize, &[f64]) -> T + Sync,
    ) -> Vec<T> {
        let c2r = self.real_plan(sub);
        let scratch_len = c2r.get_scratch_len();
        let half = sub / 2;
        let c = taps.len() / 2;
        let tw = &self.twiddles;
        let width = self.width;
        let sizes = (half + 1, scratch_len, sub);
        each_sub_grid(&self.work, sizes, per_grid, |r, work| {
            let Work {
                input,
                scratch,
                values,
            } = work;
            if c < sub {
                write_symmetric(input, taps, tw, r, sub, width);
            } else {
                fold_symmetric(input, taps, tw, r, sub, width);
            }
            // Entries 0 and M/2 are real (their own conjugates): drop the rounding.
            input[0].im = 0.0;
            input[half].im = 0.0;
            // The lengths are the plan's and both imaginary parts are 0, the only errors
            // it reports.
            let _ = c2r.process_with_scratch(input, values, &mut scratch[..scratch_len]);
            for v in values.iter_mut() {
                *v = v.abs();
            }
        })
    }

    /// [`Measurer::spectrum`] for any taps: one FFT per sub-grid.
    fn spectrum_general<T: Send>(
        &mut self,
        taps: &[f64],
        sub: usize,
        per_grid: impl Fn(usize, &[f64]) -> T + Sync,
    ) -> Vec<T> {
        let fft = self.complex_plan(sub);
        let scratch_len = fft.get_inplace_scratch_len();
        let size = sub * SUB_GRIDS;
        // Taps past the grid's length would wrap around it: they are left out, as a plain
        // N-point FFT of the first N taps would.
        let taps = &taps[..taps.len().min(size)];
        let tw = &self.twiddles;
        let width = self.width;
        each_sub_grid(&self.work, (sub, scratch_len, sub), per_grid, |r, work| {
            let Work {
                input: buf,
                scratch,
                values: mags,
            } = work;
            buf.fill(Complex::new(0.0, 0.0));
            // Tap n goes to n mod M (the sub-grid's FFT is M-periodic in n), times
            // e^{-j 2 pi (n r mod N) / N}.
            let mut j = 0usize;
            run(
                width,
                #[inline(always)]
                || {
                    for piece in taps.chunks(sub) {
                        for (slot, &h) in buf.iter_mut().zip(piece) {
                            *slot += tw.get(j) * h;
                            j += r;
                            if j >= size {
                                j -= size;
                            }
                        }
                    }
                },
            );
            fft.process_with_scratch(buf, &mut scratch[..scratch_len]);
            for (m, c) in mags.iter_mut().zip(buf.iter()) {
                *m = c.norm_sqr().sqrt();
            }
        })
    }

    /// Measure `taps` as [`measure`] does.
    pub fn measure(&mut self, taps: &[f64], pass: f64, stop: f64) -> Measured {
        let sub = sub_grid_len(taps.len());
        let size = sub * SUB_GRIDS;
        let bins = size / 2; // bin k is at frequency k / size; the last is 0.5
        let pass_end = ((pass * size as f64).floor() as usize).min(bins);
        let stop_start = ((stop * size as f64).ceil() as usize).min(bins);
        // Each sub-grid is reduced as it is computed to what is read below (see `Digest`),
        // so the whole spectrum is never held.
        let digests = self.spectrum(taps, sub, |r, values| {
            Digest::of(r, values, sub, pass_end, stop_start, bins)
        });
        let mut passband = vec![0.0; pass_end + 1];
        let mut near = Vec::new();
        let mut largest = 0.0_f64;
        for d in digests {
            for (k, v) in d.pass {
                passband[k] = v;
            }
            near.extend(d.near);
            largest = largest.max(d.top);
        }
        near.sort_unstable_by_key(|&(_, k)| k);
        // The grid's value at bin `k` where it was kept: the passband, and the stopband
        // bins within NEAR of the largest of their run.
        let kept = |k: usize| -> Option<f64> {
            if k <= pass_end {
                Some(passband[k])
            } else {
                near.binary_search_by_key(&k, |&(_, j)| j)
                    .ok()
                    .map(|i| near[i].0)
            }
        };
        let (mut pmax, mut pmin) = (0.0_f64, f64::INFINITY);
        for &m in &passband {
            pmax = pmax.max(m);
            pmin = pmin.min(m);
        }
        // Every local peak of the grid that could still beat the best value found, largest
        // first, refined on the exact response within one bin either side (successive
        // parabolic interpolation, see `refine`). The narrowest lobes, next to the
        // transition band of a Kaiser design, are about a third of 1 / taps wide, so the
        // grid has five or more points across each and sits at most about 0.45 dB (a
        // factor 0.9) under any lobe's top. (scipy.signal.freqz on a 16 x grid plus the
        // exact edges agrees: see tests/reference_scipy.rs.)
        //
        // Only local peaks within GRID_LOSS of the stopband's largest bin can ever be
        // refined (the running best starts there and only grows; the rest sort after them,
        // and the first of them stops the walk below). The largest bin is itself a local
        // peak, so it is the largest of the peaks. Every bin within GRID_LOSS of it was
        // kept (NEAR <= GRID_LOSS); a neighbour that was not kept is below GRID_LOSS of
        // it, so below any candidate.
        let least = largest * GRID_LOSS;
        let below = |k: usize, m: f64| kept(k).is_none_or(|n| m >= n);
        let peaks = &mut self.peaks;
        peaks.clear();
        peaks.extend(near.iter().copied().filter(|&(m, k)| {
            // (A NaN fails the first test, as it fails the neighbour tests.)
            m >= least && (k == stop_start || below(k - 1, m)) && (k == bins || below(k + 1, m))
        }));
        // Largest first; equal values in order of frequency.
        peaks.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let mut speak = peaks.first().map_or(0.0, |p| p.0);
        let bin = 1.0 / size as f64;
        let peaks = &*peaks;
        // The passband's extremes likewise: the grid's local maxima (minima) within a tenth
        // of the grid's peak-to-peak ripple of its largest (smallest) value are refined on
        // the exact response, so that the ripple reported is the response's, not the grid's.
        let resp = Response::new(taps);
        let swing = pmax - pmin;
        let extremes: Vec<(usize, f64)> = if swing > 0.0 {
            (1..pass_end)
                .filter_map(|k| {
                    let (p, m, n) = (passband[k - 1], passband[k], passband[k + 1]);
                    if m >= p && m >= n && m >= pmax - (1.0 - GRID_LOSS) * swing {
                        Some((k, 1.0))
                    } else if m <= p && m <= n && m <= pmin + (1.0 - GRID_LOSS) * swing {
                        Some((k, -1.0))
                    } else {
                        None
                    }
                })
                .collect()
        } else {
            Vec::new()
        };
        // The grid's values around a bin, the bracket `refine` starts from (a neighbour
        // the grid reduction did not keep is evaluated exactly).
        let around = |k: usize| {
            [k - 1, k, k + 1].map(|j| kept(j).unwrap_or_else(|| resp.at(j as f64 * bin)))
        };
        let ((refined, ripple), (at_stop, at_pass)) = join(
            || {
                join(
                    || -> Vec<f64> {
                        peaks
                            .par_iter()
                            .map(|&(_, k)| refine(&resp, k, bin, around(k), stop, 0.5, 1.0))
                            .collect()
                    },
                    || -> Vec<(f64, f64)> {
                        extremes
                            .par_iter()
                            .map(|&(k, sign)| {
                                (refine(&resp, k, bin, around(k), 0.0, pass, sign), sign)
                            })
                            .collect()
                    },
                )
            },
            // The band edges rarely fall on a grid point, and the response changes fastest
            // there: evaluate them exactly.
            || join(|| resp.at(stop), || resp.at(pass)),
        );
        for (&(m, _), &r) in peaks.iter().zip(&refined) {
            if m < speak * GRID_LOSS {
                break;
            }
            speak = speak.max(r);
        }
        for (v, sign) in ripple {
            if sign > 0.0 {
                pmax = pmax.max(v);
            } else {
                pmin = pmin.min(v);
            }
        }
        Measured {
            stopband_peak: speak.max(at_stop),
            passband_max: pmax.max(at_pass),
            passband_min: pmin.min(at_pass),
            dc: passband[0],
        }
    }
}

/// A lobe top on the grid is at most this factor under the lobe's true top (see
/// [`Measurer::measure`]).
const GRID_LOSS: f64 = 0.9;

/// Stopband bins at least this factor of the largest of their run are kept by [`Digest`]
/// (at most [`GRID_LOSS`], so every candidate peak is kept; lower, so that a candidate's
/// neighbours, which `refine` starts from, usually are too).
const NEAR: f64 = GRID_LOSS * GRID_LOSS;

/// What the measurement keeps of one sub-grid: its passband bins, its largest stopband
/// value, and its stopband bins within [`NEAR`] of the largest of their run.
#[derive(Debug, Default)]
struct Digest {
    /// `(bin, value)` of the passband bins `0..=pass_end` on this sub-grid.
    pass: Vec<(usize, f64)>,
    /// Largest stopband value on this sub-grid (0 for none; NaNs are passed over).
    top: f64,
    /// `(value, bin)` of the stopband bins kept.
    near: Vec<(f64, usize)>,
}

impl Digest {
    /// Reduce sub-grid `grid`'s `values` for the passband bins `0..=pass_end` and the
    /// stopband bins `stop_start..=bins` (of `SUB_GRIDS sub`).
    fn of(
        grid: usize,
        values: &[f64],
        sub: usize,
        pass_end: usize,
        stop_start: usize,
        bins: usize,
    ) -> Self {
        let mut d = Digest::default();
        for (r, g, from, to) in runs(0, pass_end, sub) {
            if g == grid {
                d.pass
                    .extend((from..to).map(|j| (bin_index(r, j, sub), values[j])));
            }
        }
        for (r, g, from, to) in runs(stop_start, bins, sub) {
            if g != grid {
                continue;
            }
            let run = &values[from..to];
            let top = slice_max(run);
            d.top = d.top.max(top);
            let least = top * NEAR;
            // Eight values at a time: most groups have none to keep.
            for (c, eight) in run.chunks(8).enumerate() {
                if slice_max(eight) < least {
                    continue;
                }
                for (i, &m) in eight.iter().enumerate() {
                    if m >= least {
                        d.near.push((m, bin_index(r, from + 8 * c + i, sub)));
                    }
                }
            }
        }
        d
    }
}

/// Magnitude of bin `k` (of `SUB_GRIDS sub`) from the sub-grids: bin `SUB_GRIDS m + s` is
/// sub-grid `s` at `m`, or for `s` past the middle, the mirror image (conjugate) of bin
/// `N - k`: sub-grid `SUB_GRIDS - s` at `sub - 1 - m`.
#[cfg(test)]
fn bin(grids: &[Vec<f64>], sub: usize, k: usize) -> f64 {
    let (m, s) = (k / SUB_GRIDS, k % SUB_GRIDS);
    if s < GRIDS {
        grids[s][m]
    } else {
        grids[SUB_GRIDS - s][sub - 1 - m]
    }
}

/// The bins `lo..=hi` (`hi` at most `SUB_GRIDS sub / 2`) as runs of sub-grid values:
/// `(s, grid, from, to)` for the bins of residue `s`, `grids[grid][from..to]`. Bins `SUB_GRIDS m + s` of one residue
/// `s` are one run: sub-grid `s` at `m` (`s < GRIDS`), or its mirror image, sub-grid
/// `SUB_GRIDS - s` at `sub - 1 - m` (as `bin` reads them).
fn runs(lo: usize, hi: usize, sub: usize) -> impl Iterator<Item = (usize, usize, usize, usize)> {
    (0..SUB_GRIDS).filter_map(move |s| {
        // Bins k = SUB_GRIDS m + s with lo <= k <= hi.
        let m_lo = lo.saturating_sub(s).div_ceil(SUB_GRIDS);
        if s > hi {
            return None;
        }
        let m_hi = (hi - s) / SUB_GRIDS;
        if m_lo > m_hi {
            return None;
        }
        Some(if s < GRIDS {
            (s, s, m_lo, m_hi + 1)
        } else {
            (s, SUB_GRIDS - s, sub - 1 - m_hi, sub - m_lo)
        })
    })
}

/// The bin of residue `s` whose value is `grids[grid][j]` (see [`runs`]).
fn bin_index(s: usize, j: usize, sub: usize) -> usize {
    if s < GRIDS {
        SUB_GRIDS * j + s
    } else {
        SUB_GRIDS * (sub - 1 - j) + s
    }
}

/// Largest value of `v` (0 for none; NaNs are passed over), in lanes that vectorize.
fn slice_max(v: &[f64]) -> f64 {
    let mut lanes = [0.0_f64; 8];
    let mut chunks = v.chunks_exact(8);
    for c in &mut chunks {
        for (l, &x) in lanes.iter_mut().zip(c) {
            *l = if x > *l { x } else { *l };
        }
    }
    chunks
        .remainder()
        .iter()
        .chain(&lanes)
        .fold(0.0, |a, &x| if x > a { x } else { a })
}

/// The symmetric path's input for sub-grid `r`, entries `0..=sub/2` of `conj(u_r)`, for
/// taps shorter than twice the sub-grid (`c < sub`, `c` the centre tap): written in three
/// passes that vectorize, with no folding tap by tap.
///
/// Entry `k` of `u_r` holds tap `c + k` (if `k <= c`) and tap `c + k - sub` (if `sub - k
/// <= c`), which by symmetry equals tap `c + sub - k` = tap `c - (sub - k)`: so
/// `u_r[k] = W^{k r} (h[c + k] + E h[c + k - sub])` with `W = e^{-j 2 pi / N}` and
/// `E = W^{-sub r}`. `W^{k r}` is, for `k = FINE a + b`, the grid's factor of `FINE a r`
/// (a coarse table entry) times that of `b r` (one product).
fn write_symmetric(
    input: &mut [Complex<f64>],
    taps: &[f64],
    tw: &Twiddles,
    r: usize,
    sub: usize,
    width: Width,
) {
    let half = sub / 2;
    let c = taps.len() / 2;
    let input = &mut input[..=half];
    // (Built for the CPU's widest vectors: the same bits, see `kernel::wide`.)
    run(
        width,
        #[inline(always)]
        || {
            // The taps from the centre on.
            let own = c.min(half);
            for (o, &h) in input[..=own].iter_mut().zip(&taps[c..]) {
                *o = Complex::new(h, 0.0);
            }
            input[own + 1..].fill(Complex::new(0.0, 0.0));
            // The taps folded over from the far side, times E.
            let from = sub - c;
            if from <= half {
                let e = tw.get(sub * r).conj();
                let folded = &taps[from + c - sub..=half + c - sub];
                for (o, &h) in input[from..].iter_mut().zip(folded) {
                    *o += e * h;
                }
            }
            // Times W^{k r}, conjugated.
            let steps: [Complex<f64>; FINE] = std::array::from_fn(|b| tw.get(b * r));
            for (a, out) in input.chunks_mut(FINE).enumerate() {
                let anchor = tw.coarse[a * r];
                for (o, s) in out.iter_mut().zip(&steps) {
                    *o = (anchor * s * *o).conj();
                }
            }
        },
    );
}

/// The symmetric path's input for sub-grid `r` when the taps reach past twice the sub-grid
/// (`c >= sub`: a prototype too long for 16 grid points a tap, whose grid is capped at
/// [`MAX_MEASURE_FFT`]): entries `0..=sub/2` of `conj(u_r)`,
/// summed tap by tap (taps `n` and `-n` share one twiddle factor, its conjugate).
fn fold_symmetric(
    input: &mut [Complex<f64>],
    taps: &[f64],
    tw: &Twiddles,
    r: usize,
    sub: usize,
    width: Width,
) {
    let size = sub * SUB_GRIDS;
    let half = sub / 2;
    let c = taps.len() / 2;
    input.fill(Complex::new(0.0, 0.0));
    input[0] = Complex::new(taps[c], 0.0);
    // Tap `c + n` sits at `n mod sub` with factor `t = e^{-j 2 pi (n r mod N) / N}`,
    // tap `c - n` at `-n mod sub` with `conj(t)`; entries past M/2 are not read.
    let (mut j, mut plus) = (0usize, 0usize);
    // (Built for the CPU's widest vectors: the same bits, see `kernel::wide`.)
    run(
        width,
        #[inline(always)]
        || {
            for &h in &taps[c + 1..] {
                j += r;
                if j >= size {
                    j -= size;
                }
                plus += 1;
                if plus == sub {
                    plus = 0;
                }
                let t = tw.get(j);
                if plus <= half {
                    input[plus] += t.conj() * h;
                }
                let minus = if plus == 0 { 0 } else { sub - plus };
                if minus <= half {
                    input[minus] += t * h;
                }
            }
        },
    );
}

/// One task per sub-grid `r < GRIDS` (a thread held up elsewhere leaves its share to the
/// other): each takes a set of work buffers from `pool` (a new one if none is free), sizes
/// it as [`ready`] does for `sizes` (input, scratch, values), has `fill(r, work)` leave the
/// sub-grid's magnitudes in `work.values`, hands them to `per_grid` and gives the set
/// back. The results come in the order of `r`.
fn each_sub_grid<T: Send>(
    pool: &Mutex<Vec<Work>>,
    sizes: (usize, usize, usize),
    per_grid: impl Fn(usize, &[f64]) -> T + Sync,
    fill: impl Fn(usize, &mut Work) + Sync,
) -> Vec<T> {
    let lock = || pool.lock().unwrap_or_else(PoisonError::into_inner);
    (0..GRIDS)
        .into_par_iter()
        .map(|r| {
            let mut work = lock().pop().unwrap_or_default();
            ready(&mut work, sizes.0, sizes.1, sizes.2);
            fill(r, &mut work);
            let done = per_grid(r, &work.values);
            lock().push(work);
            done
        })
        .collect()
}

/// Size a task's buffers for its next transform: `input` points (their values left to the
/// task's fill), at least `scratch` points of scratch, `values` magnitudes. Each is
/// allocated on first use (zeroed by the allocator: fresh memory costs nothing until
/// written, so the pages are first touched by the task that fills them).
fn ready(work: &mut Work, input: usize, scratch: usize, values: usize) {
    if work.values.len() != values {
        work.values = vec![0.0; values];
    }
    if work.input.len() != input {
        work.input = vec![Complex::new(0.0, 0.0); input];
    }
    if work.scratch.len() < scratch {
        work.scratch = vec![Complex::new(0.0, 0.0); scratch];
    }
}

/// Odd length and `taps[i] == taps[n - 1 - i]`: the zero-phase forms apply.
fn is_symmetric(taps: &[f64]) -> bool {
    let n = taps.len();
    n % 2 == 1 && (0..n / 2).all(|i| taps[i] == taps[n - 1 - i])
}

/// Sub-grid length `M` [`measure`] uses for a filter of `taps_len` taps: the FFT grid has
/// `SUB_GRIDS M` points (at least `OVERSAMPLE taps_len`), from 4096 up to
/// [`MAX_MEASURE_FFT`].
fn sub_grid_len(taps_len: usize) -> usize {
    smooth_at_least(taps_len.max(1).div_ceil(SUB_GRIDS / OVERSAMPLE))
        .clamp(4096 / SUB_GRIDS, MAX_MEASURE_FFT / SUB_GRIDS)
}

/// Smallest even number at or above `n` with no prime factor above 5 (fast FFT sizes).
fn smooth_at_least(n: usize) -> usize {
    let mut best = n.next_power_of_two();
    let mut p5 = 1usize;
    while p5 < best {
        let mut p35 = p5;
        while p35 < best {
            // Smallest power of two taking p35 to at least n.
            let mut m = p35;
            while m < n {
                m *= 2;
            }
            if m % 2 == 0 && m < best {
                best = m;
            }
            p35 *= 3;
        }
        p5 *= 5;
    }
    best
}

/// The largest (`sign` 1) or smallest (`sign` -1) magnitude near grid bin `k` (at frequency
/// `k bin`), a local extreme of the grid whose values at `k - 1, k, k + 1` are `y`, within
/// `[lo, hi]`.
///
/// Successive parabolic interpolation on a bracket (common practice, no source): the three
/// grid values bracket the extreme; each step evaluates the exact response at the vertex
/// of the parabola through the bracket's points (a golden-section point when they do not
/// curve the right way) and keeps the three points around the best value. A lobe's top is
/// a parabola to within the cube of the distance, so a few steps reach it (at most
/// [`REFINE_STEPS`]; they stop when the next point would lie within [`REFINE_TOL`] bins of
/// one already taken); `refinement_finds_the_top` checks the result against a dense
/// search. The result is the most extreme of the values taken inside `[lo, hi]`, the
/// grid's own included, each a true value of the response: it can fall short of the
/// extreme only by the residual, never pass it.
fn refine(
    resp: &Response<'_>,
    k: usize,
    bin: f64,
    y: [f64; 3],
    lo: f64,
    hi: f64,
    sign: f64,
) -> f64 {
    const INV_PHI: f64 = 0.618_033_988_749_894_8;
    let f = k as f64 * bin;
    let (xlo, xhi) = (((lo - f) / bin).max(-1.0), ((hi - f) / bin).min(1.0));
    let mut best = sign * y[1];
    let mut p = [(-1.0, sign * y[0]), (0.0, best), (1.0, sign * y[2])];
    for _ in 0..REFINE_STEPS {
        let [(x0, _), (x1, _), (x2, _)] = p;
        let x = vertex(p).unwrap_or(if x2 - x1 > x1 - x0 {
            x1 + (1.0 - INV_PHI) * (x2 - x1)
        } else {
            x1 - (1.0 - INV_PHI) * (x1 - x0)
        });
        let x = x.clamp(x0.max(xlo), x2.min(xhi));
        if p.iter().any(|q| (q.0 - x).abs() < REFINE_TOL) {
            break;
        }
        let v = sign * resp.at(f + x * bin);
        best = best.max(v);
        p = match (v >= p[1].1, x > x1) {
            (true, true) => [p[1], (x, v), p[2]],
            (true, false) => [p[0], (x, v), p[1]],
            (false, true) => [p[0], p[1], (x, v)],
            (false, false) => [(x, v), p[1], p[2]],
        };
    }
    sign * best
}

/// Most exact evaluations [`refine`] makes for one extreme.
const REFINE_STEPS: usize = 8;
/// [`refine`] stops when its next point is this close to one it has (in bins).
const REFINE_TOL: f64 = 1e-4;

/// The abscissa of the vertex of the parabola through three points (distinct abscissas),
/// when it opens downwards; `None` otherwise.
fn vertex(p: [(f64, f64); 3]) -> Option<f64> {
    let [(x0, y0), (x1, y1), (x2, y2)] = p;
    let (a, b) = ((x1 - x0) * (y1 - y2), (x1 - x2) * (y1 - y0));
    // Twice the leading coefficient, times (x1 - x0)(x1 - x2)(x2 - x0) > 0 when sorted.
    let den = a - b;
    let curve = (y0 - y1) / (x0 - x1) - (y1 - y2) / (x1 - x2);
    if curve.is_nan() || curve <= 0.0 || den == 0.0 || !den.is_finite() {
        return None;
    }
    let x = x1 - 0.5 * ((x1 - x0) * a - (x1 - x2) * b) / den;
    x.is_finite().then_some(x)
}

/// `(sum_k h[k] cos(w (start + k)), sum_k h[k] sin(w (start + k)))`.
///
/// The phasors `e^{j w k}` come from complex rotations in eight independent lanes (lane `i`
/// takes `k = i, i + 8, ...`, rotating by `8 w` a step), so the multiply-adds do not wait on
/// one another; every lane is re-anchored every 32 steps (a block), from an anchor that is
/// itself rotated on by a block's angle and computed exactly (`sin_cos`) every
/// [`EXACT_EVERY`] blocks, so the error stays near the rounding of a few dozen products
/// while `sin_cos` (about as costly as a block of multiply-adds) runs once per 2048 taps.
///
/// Built for AVX2 also where the CPU has AVX-512: the AVX-512 build of this loop measured
/// slower (14 against 9 us for 16 850 taps on the project's 2-core Xeon machine), and the
/// refinement of a design's measurement waits on a few dozen of these sums in a row.
fn cos_sin_sums(h: &[f64], w: f64, start: usize) -> (f64, f64) {
    cos_sin_sums_with(Width::detect().at_most_avx2(), h, w, start)
}

/// [`cos_sin_sums`] built for `width`: the same bits for every width (see `kernel::wide`).
fn cos_sin_sums_with(width: Width, h: &[f64], w: f64, start: usize) -> (f64, f64) {
    run(
        width,
        #[inline(always)]
        || cos_sin_sums_here(h, w, start),
    )
}

/// [`cos_sin_sums`] as compiled where it is inlined.
#[inline(always)]
fn cos_sin_sums_here(h: &[f64], w: f64, start: usize) -> (f64, f64) {
    const LANES: usize = 8;
    const STEPS: usize = 32;
    const BLOCK: usize = LANES * STEPS;
    /// Blocks between anchors computed exactly.
    const EXACT_EVERY: usize = 8;
    let (s8, c8) = (w * LANES as f64).sin_cos();
    let (sb, cb) = (w * BLOCK as f64).sin_cos();
    let offsets: [(f64, f64); LANES] = std::array::from_fn(|i| (w * i as f64).sin_cos());
    let (mut re, mut im) = ([0.0_f64; LANES], [0.0_f64; LANES]);
    let (mut s0, mut c0) = (0.0_f64, 1.0_f64);
    for (b, block) in h.chunks(BLOCK).enumerate() {
        if b % EXACT_EVERY == 0 {
            (s0, c0) = (w * (start + b * BLOCK) as f64).sin_cos();
        } else {
            (s0, c0) = (s0 * cb + c0 * sb, c0 * cb - s0 * sb);
        }
        let mut zc: [f64; LANES] = std::array::from_fn(|i| c0 * offsets[i].1 - s0 * offsets[i].0);
        let mut zs: [f64; LANES] = std::array::from_fn(|i| s0 * offsets[i].1 + c0 * offsets[i].0);
        // Whole rows with a fixed trip count (the compiler keeps the lanes in vector
        // registers), then the short last row: each lane's operations in the same order.
        let rows = block.chunks_exact(LANES);
        let last = rows.remainder();
        for row in rows {
            for i in 0..LANES {
                re[i] += row[i] * zc[i];
                im[i] += row[i] * zs[i];
            }
            for i in 0..LANES {
                let nc = zc[i] * c8 - zs[i] * s8;
                zs[i] = zs[i] * c8 + zc[i] * s8;
                zc[i] = nc;
            }
        }
        for (i, &x) in last.iter().enumerate() {
            re[i] += x * zc[i];
            im[i] += x * zs[i];
        }
    }
    (re.iter().sum(), im.iter().sum())
}

/// The passband ripple (dB peak to peak) allowed a filter with `stopband_db` of stopband
/// attenuation: `20 log10((1 + 2 d) / (1 - 2 d))`, `d = 10^(-A / 20)` (the allowance
/// `measure::ripple_limit_db` documents, which reads it here; a minimum-phase design keeps
/// its derived prototype's ripple within it).
pub fn ripple_allowance_db(stopband_db: f64) -> f64 {
    let d = 2.0 * 10f64.powf(-stopband_db / 20.0);
    if d >= 1.0 {
        f64::INFINITY
    } else {
        20.0 * ((1.0 + d) / (1.0 - d)).log10()
    }
}

/// Group delay of `taps` (at sample rate 1) at frequency `f` (fraction of the rate), in
/// samples: `Re(D(f) / H(f))` with `H(f) = sum_n h[n] e^{-j 2 pi f n}` and
/// `D(f) = sum_n n h[n] e^{-j 2 pi f n}` (the derivative of the phase, common practice, no
/// source). NaN where `H(f) = 0`.
pub fn group_delay(taps: &[f64], f: f64) -> f64 {
    GroupDelay::new(taps).at(f)
}

/// Smallest and largest group delay of `taps` (samples) over `[0, pass]` (fraction of the
/// rate), evaluated at `points + 1` evenly spaced frequencies including both ends, in
/// parallel.
pub fn group_delay_range(taps: &[f64], pass: f64, points: usize) -> (f64, f64) {
    let gd = GroupDelay::new(taps);
    let points = points.max(1);
    (0..=points)
        .into_par_iter()
        .map(|i| gd.at(pass * i as f64 / points as f64))
        .fold(
            || (f64::INFINITY, f64::NEG_INFINITY),
            |(lo, hi), v| (lo.min(v), hi.max(v)),
        )
        .reduce(
            || (f64::INFINITY, f64::NEG_INFINITY),
            |a, b| (a.0.min(b.0), a.1.max(b.1)),
        )
}

/// The sums a group delay needs, with `n h[n]` computed once.
struct GroupDelay<'a> {
    taps: &'a [f64],
    weighted: Vec<f64>,
}

impl<'a> GroupDelay<'a> {
    fn new(taps: &'a [f64]) -> Self {
        let weighted = taps
            .iter()
            .enumerate()
            .map(|(n, &h)| n as f64 * h)
            .collect();
        Self { taps, weighted }
    }

    fn at(&self, f: f64) -> f64 {
        let w = 2.0 * core::f64::consts::PI * f;
        // e^{-j w n} = cos - j sin: H = (c, -s), D = (dc, -ds).
        let (c, s) = cos_sin_sums(self.taps, w, 0);
        let (dc, ds) = cos_sin_sums(&self.weighted, w, 0);
        (dc * c + ds * s) / (c * c + s * s)
    }
}

/// A filter's exact magnitude response, with its symmetry found once for many frequencies.
struct Response<'a> {
    taps: &'a [f64],
    /// Odd length and `taps[i] == taps[n - 1 - i]`: the zero-phase form applies.
    symmetric: bool,
}

impl<'a> Response<'a> {
    fn new(taps: &'a [f64]) -> Self {
        Self {
            taps,
            symmetric: is_symmetric(taps),
        }
    }

    /// `|H(f)|`, `f` as a fraction of the rate.
    fn at(&self, f: f64) -> f64 {
        let w = 2.0 * core::f64::consts::PI * f;
        let taps = self.taps;
        if self.symmetric {
            let c = taps.len() / 2;
            let (cos, _) = cos_sin_sums(&taps[c + 1..], w, 1);
            (taps[c] + 2.0 * cos).abs()
        } else {
            let (re, im) = cos_sin_sums(taps, w, 0);
            re.hypot(-im)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moving_average_has_published_response() {
        // Moving average of length N: |H(f)| = |sin(pi f N) / (N sin(pi f))| (Harris 1978,
        // Dirichlet kernel). Its first side lobe is near -13.26 dB
        // (rectangular window, Harris 1978 Table 1).
        let n = 64;
        let taps = vec![1.0 / n as f64; n];
        let m = measure(&taps, 0.0, 1.0 / n as f64);
        assert!((m.dc - 1.0).abs() < 1e-12);
        assert!(
            (m.stopband_db() - 13.26).abs() < 0.05,
            "{}",
            m.stopband_db()
        );
    }

    #[test]
    fn exact_evaluation_matches_dirichlet_formula() {
        // |H(f)| = |sin(pi f N) / (N sin(pi f))| (Harris 1978, Dirichlet kernel).
        let n = 8;
        let taps = vec![1.0 / n as f64; n];
        let f = 1000.0 / 48_000.0;
        let exact = ((core::f64::consts::PI * f * n as f64).sin()
            / (n as f64 * (core::f64::consts::PI * f).sin()))
        .abs();
        assert!((Response::new(&taps).at(f) - exact).abs() < 1e-14);
        // CHECKS.md: N = 8 at 48 kHz is -0.3944 dB at 1 kHz.
        assert!((20.0 * exact.log10() + 0.3944).abs() < 1e-4);
    }

    #[test]
    fn wider_vectors_give_the_same_sums() {
        let h: Vec<f64> = (0..20_001)
            .map(|n| ((n as f64) * 0.37).sin() / (1.0 + n as f64))
            .collect();
        for (w, start) in [(0.001, 0), (1.234, 1), (3.1, 7)] {
            let b = cos_sin_sums_with(Width::Baseline, &h, w, start);
            for width in [Width::detect(), Width::detect().at_most_avx2()] {
                let a = cos_sin_sums_with(width, &h, w, start);
                assert_eq!(
                    (a.0.to_bits(), a.1.to_bits()),
                    (b.0.to_bits(), b.1.to_bits())
                );
            }
        }
    }

    #[test]
    fn long_filters_are_evaluated_to_rounding() {
        // The same Dirichlet formula (Harris 1978) for boxcars long enough that the rotated
        // anchors between exact ones are used many times: odd lengths take the zero-phase
        // path, even ones the full sum. Values down to about -190 dB are compared in
        // absolute terms against the DC gain of 1.
        for n in [4_096usize, 40_001, 40_000, 123_457] {
            let taps = vec![1.0 / n as f64; n];
            let resp = Response::new(&taps);
            for f in [1e-6, 3.3e-5, 0.001_234_5, 0.1, 0.25 + 1e-7, 0.499_99] {
                let x = core::f64::consts::PI * f;
                let exact = ((x * n as f64).sin() / (n as f64 * x.sin())).abs();
                let got = resp.at(f);
                assert!((got - exact).abs() < 2e-14, "n {n} f {f}: {got} vs {exact}");
            }
        }
    }

    /// Magnitudes of the plain `n`-point DFT of `taps` (zero-padded, or cut at `n`).
    fn direct(taps: &[f64], n: usize) -> Vec<f64> {
        let mut buf: Vec<Complex<f64>> = (0..n)
            .map(|i| Complex::new(taps.get(i).copied().unwrap_or(0.0), 0.0))
            .collect();
        FftPlanner::new().plan_fft_forward(n).process(&mut buf);
        buf[..=n / 2].iter().map(|c| c.norm()).collect()
    }

    #[test]
    fn runs_cover_each_bin_once() {
        // Every bin from lo to hi, read through the runs, is the bin `bin` reads, once.
        for sub in [256, 270, 4096 / SUB_GRIDS] {
            let grids: Vec<Vec<f64>> = (0..GRIDS)
                .map(|g| (0..sub).map(|m| (g * 100_000 + m) as f64).collect())
                .collect();
            let top = SUB_GRIDS * sub / 2;
            for (lo, hi) in [
                (0, top),
                (1, top),
                (17, top),
                (top - 3, top),
                (5, 5),
                (40, 61),
            ] {
                let mut seen = vec![0; top + 1];
                for (r, g, from, to) in runs(lo, hi, sub) {
                    for j in from..to {
                        let k = bin_index(r, j, sub);
                        assert!((lo..=hi).contains(&k), "bin {k} outside {lo}..={hi}");
                        assert_eq!(grids[g][j], bin(&grids, sub, k), "bin {k}");
                        seen[k] += 1;
                    }
                }
                assert!(seen[lo..=hi].iter().all(|&n| n == 1), "{sub} {lo} {hi}");
            }
        }
    }

    #[test]
    fn slice_max_passes_nan_over() {
        assert_eq!(slice_max(&[]), 0.0);
        let v: Vec<f64> = (0..37).map(|i| ((i * 7) % 37) as f64).collect();
        assert_eq!(slice_max(&v), 36.0);
        assert_eq!(slice_max(&[1.0, f64::NAN, 3.0, 2.0]), 3.0);
    }

    #[test]
    fn sub_grids_give_the_plain_zero_padded_spectrum() {
        // Every bin up to N / 2 of the pruned computation against one plain N-point FFT:
        // odd and even lengths, symmetric and not, taps filling the sub-grid, and taps
        // longer than it (folded) or than the whole grid (cut).
        // Symmetric odd lengths take the symmetric path (complex-to-real FFTs) where the
        // sub-grid length is even: written in passes while shorter than twice the sub-grid
        // (255 in 256: one tap an entry; 257, 401 and 511 in 256: taps folded over from the
        // far side), folded tap by tap from 513 in 256 on. It is also checked against the
        // one-FFT-per-sub-grid path.
        let mut m = Measurer::new();
        let mut paired = 0;
        for (len, sub, bump) in [
            (1, 256, 0.01),
            (37, 256, 0.01),
            (256, 256, 0.01),
            (255, 300, 0.01),
            (1000, 100, 0.01),
            (5000, 300, 0.01),
            (1, 256, 0.0),
            (37, 256, 0.0),
            (255, 256, 0.0),
            (257, 256, 0.0),
            (401, 256, 0.0),
            (511, 256, 0.0),
            (513, 256, 0.0),
            (1001, 100, 0.0),
            (4799, 300, 0.0),
            (5001, 300, 0.0),
            (1001, 255, 0.0),
        ] {
            let taps: Vec<f64> = (0..len)
                .map(|i| {
                    let x = i as f64 - (len as f64 - 1.0) / 2.0;
                    (-(x * x) / (len as f64 * 3.0)).exp() + if i % 7 == 3 { bump } else { 0.0 }
                })
                .collect();
            let want = direct(&taps, sub * SUB_GRIDS);
            let scale: f64 = taps.iter().take(sub * SUB_GRIDS).map(|h| h.abs()).sum();
            let check = |grids: &[Vec<f64>], path: &str| {
                for (k, w) in want.iter().enumerate() {
                    let got = bin(grids, sub, k);
                    assert!(
                        (got - w).abs() <= 1e-13 * scale,
                        "{path}: len {len}, sub {sub}, bin {k}: {got} against {w}"
                    );
                }
            };
            let keep = |_: usize, v: &[f64]| v.to_vec();
            let grids = m.spectrum(&taps, sub, keep);
            check(&grids, "chosen");
            // The baseline build of the loops gives the same bits.
            let mut base = Measurer::new();
            base.width = Width::Baseline;
            assert_eq!(base.spectrum(&taps, sub, keep), grids);
            let grids = m.spectrum_general(&taps, sub, keep);
            check(&grids, "general");
            assert_eq!(base.spectrum_general(&taps, sub, keep), grids);
            if sub % 2 == 0 && len <= sub * SUB_GRIDS && is_symmetric(&taps) {
                paired += 1;
            }
        }
        assert_eq!(paired, 11);
    }

    #[test]
    fn asymmetric_taps_are_measured_in_full() {
        // A causal, asymmetric filter: the exact response against the plain DFT at the bins
        // of a 4096-point grid, and the measured stopband against the grid's largest value
        // (the refined peak may only be higher, by at most the grid's loss).
        let taps: Vec<f64> = (0..300)
            .map(|n| (-(n as f64) / 40.0).exp() * (0.3 * n as f64).cos())
            .collect();
        let resp = Response::new(&taps);
        assert!(!resp.symmetric);
        let want = direct(&taps, 4096);
        for k in (0..=2048).step_by(37) {
            let got = resp.at(k as f64 / 4096.0);
            assert!(
                (got - want[k]).abs() < 1e-12,
                "bin {k}: {got} vs {}",
                want[k]
            );
        }
        let m = measure(&taps, 0.01, 0.2);
        let grid_peak = want[(0.2_f64 * 4096.0).ceil() as usize..]
            .iter()
            .cloned()
            .fold(0.0, f64::max);
        assert!(m.stopband_peak >= grid_peak && m.stopband_peak < grid_peak * 1.2);
        assert!((m.dc - want[0]).abs() < 1e-12);
    }

    #[test]
    fn refinement_finds_the_top() {
        // Against a dense search (1601 exact values across the two bins around each grid
        // extreme): the stopband peaks and passband extremes of real designs (short and long
        // prototypes, moderate and high attenuation) are found to within 1e-7 of the peak
        // (1e-6 dB) and 1e-3 of the extreme's deviation from 1. (The dense search may itself
        // sit a little under a narrow lobe's top: the refined peak may pass it by 1e-6.)
        for (i, o, db) in [
            (44_100, 48_000, 140.0),
            (48_000, 44_100, 100.0),
            (8_000, 48_000, 120.0),
        ] {
            let d = crate::FilterSpec::new(i, o)
                .stopband_db(db)
                .design()
                .unwrap();
            let taps = d.taps();
            let up = f64::from(d.report().up);
            let pass = d.report().passband_edge_hz / (f64::from(i) * up);
            let stop = d.report().stopband_edge_hz / (f64::from(i) * up);
            let mut m = Measurer::new();
            let sub = sub_grid_len(taps.len());
            let grids = m.spectrum(taps, sub, |_, v| v.to_vec());
            let size = sub * SUB_GRIDS;
            let bin_w = 1.0 / size as f64;
            let mag = |k: usize| bin(&grids, sub, k);
            let resp = Response::new(taps);
            let dense = |k: usize, sign: f64, lo: f64, hi: f64| {
                (0..=1600)
                    .map(|j| (k as f64 - 1.0 + j as f64 / 800.0) * bin_w)
                    .filter(|f| (lo..=hi).contains(f))
                    .map(|f| sign * resp.at(f))
                    .fold(f64::NEG_INFINITY, f64::max)
                    * sign
            };
            // The largest stopband peaks of the grid.
            let first = (stop * size as f64).ceil() as usize + 1;
            let mut peaks: Vec<(f64, usize)> = (first..size / 2)
                .filter(|&k| mag(k) >= mag(k - 1) && mag(k) >= mag(k + 1))
                .map(|k| (mag(k), k))
                .collect();
            peaks.sort_by(|a, b| b.0.total_cmp(&a.0));
            for &(_, k) in peaks.iter().take(6) {
                let y = [mag(k - 1), mag(k), mag(k + 1)];
                let got = refine(&resp, k, bin_w, y, stop, 0.5, 1.0);
                let want = dense(k, 1.0, stop, 0.5);
                assert!(
                    got >= want * (1.0 - 1e-7) && got <= want * (1.0 + 1e-6),
                    "{i} -> {o}, bin {k}: {got} against {want}"
                );
            }
            // Passband extremes (away from the edges).
            let last = (pass * size as f64).floor() as usize - 1;
            let mut checked = 0;
            for k in 2..last {
                let (p, c, n) = (mag(k - 1), mag(k), mag(k + 1));
                let sign = if c > p && c > n {
                    1.0
                } else if c < p && c < n {
                    -1.0
                } else {
                    continue;
                };
                let got = refine(&resp, k, bin_w, [p, c, n], 0.0, pass, sign);
                let want = dense(k, sign, 0.0, pass);
                let dev = (want - 1.0).abs();
                assert!(
                    (got - want).abs() <= 1e-3 * dev + 1e-14 && sign * (got - want) <= 1e-14,
                    "{i} -> {o}, passband bin {k}: {got} against {want}"
                );
                checked += 1;
                if checked == 6 {
                    break;
                }
            }
            assert!(checked > 0);
        }
    }

    #[test]
    fn group_delay_of_known_filters() {
        // A symmetric filter of length N delays every frequency by (N - 1) / 2 samples; a
        // one-pole-like decaying filter h[n] = a^n (n < N, large N) has group delay
        // a (cos w - a) / (1 - 2 a cos w + a^2) (differentiate the phase of 1 / (1 - a
        // e^{-jw}); standard result, any DSP text).
        let sym = [0.1, 0.2, 0.4, 0.2, 0.1];
        for f in [0.0, 0.05, 0.2] {
            assert!((group_delay(&sym, f) - 2.0).abs() < 1e-12);
        }
        let a: f64 = 0.7;
        let h: Vec<f64> = (0..200).map(|n| a.powi(n)).collect();
        for f in [0.0, 0.1, 0.3] {
            let w = 2.0 * core::f64::consts::PI * f;
            let want = a * (w.cos() - a) / (1.0 - 2.0 * a * w.cos() + a * a);
            assert!((group_delay(&h, f) - want).abs() < 1e-9, "{f}");
        }
        let (lo, hi) = group_delay_range(&h, 0.3, 64);
        let at = |f: f64| group_delay(&h, f);
        assert!(lo <= at(0.3) && hi >= at(0.0) && lo < hi);
    }

    #[test]
    fn dc_and_passband_of_an_impulse() {
        let m = measure(&[1.0], 0.4, 0.45);
        assert!((m.ripple_db()).abs() < 1e-12);
        assert!((m.stopband_db()).abs() < 1e-12);
    }
}
