//! Property tests of the streaming and offline converters: chunk invariance, linearity,
//! exact length, DC gain, reduced ratios, and typed errors instead of panics.

mod common;

use proptest::prelude::*;
use resample_core::{
    offline, Error, FilterSpec, Kernel, RatePair, StreamConverter, MAX_CHANNELS, MAX_RATE,
};

/// Feed `x` (interleaved, `ch` channels) in chunks of the given sizes (cycled), with
/// output buffers of the given sizes (cycled), then flush; return everything written.
fn stream_interleaved<T: resample_core::Sample>(
    conv: &mut StreamConverter<T>,
    x: &[T],
    ch: usize,
    chunks: &[usize],
    outs: &[usize],
) -> Vec<T> {
    let mut y = Vec::new();
    let mut pos = 0;
    let mut k = 0;
    let mut out = vec![T::zero(); 4096 * ch];
    while pos < x.len() / ch {
        let n = chunks[k % chunks.len()].min(x.len() / ch - pos);
        let o = outs[k % outs.len()];
        k += 1;
        let mut fed = 0;
        // Keep passing the rest of this chunk until it is all taken.
        let mut spins = 0;
        while fed < n {
            let p = conv
                .process_interleaved(&x[(pos + fed) * ch..(pos + n) * ch], &mut out[..o * ch])
                .unwrap();
            y.extend_from_slice(&out[..p.frames_written * ch]);
            fed += p.frames_read;
            if p.frames_read == 0 && p.frames_written == 0 {
                spins += 1;
                assert!(o == 0 || spins < 2, "no progress with room for output");
                if o == 0 {
                    break;
                }
            }
        }
        pos += fed;
    }
    loop {
        let w = conv.flush_interleaved(&mut out[..7 * ch]).unwrap();
        if w == 0 {
            break;
        }
        y.extend_from_slice(&out[..w * ch]);
    }
    assert!(conv.is_finished());
    y
}

fn noise(n: usize, seed: u64) -> Vec<f64> {
    // A small xorshift generator: deterministic test input, not product data.
    let mut s = seed | 1;
    (0..n)
        .map(|_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            (s >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// Any chunking of input and output gives output bit-identical to the offline result
    /// (f64 and f32, interleaved), including chunks of 0 and 1 frames, for linear-phase and
    /// minimum-phase designs.
    #[test]
    fn chunking_never_changes_a_bit(
        pair in 0usize..common::PAIRS.len(),
        phase in 0usize..2,
        ch in 1usize..4,
        len in 0usize..3000,
        chunks in proptest::collection::vec(0usize..700, 1..6),
        outs in proptest::collection::vec(1usize..900, 1..6),
        seed in any::<u64>(),
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design_phase(a, b, 80.0, common::PHASES[phase]);
        let x = noise(len * ch, seed);
        let want = offline::convert_interleaved_with(&d, ch, &x, Kernel::Scalar).unwrap();
        let mut conv = StreamConverter::<f64>::with_kernel(&d, ch, Kernel::Scalar).unwrap();
        let chunks: Vec<usize> = chunks.iter().map(|&c| if c == 0 { 0 } else { c }).collect();
        let chunks = if chunks.iter().all(|&c| c == 0) { vec![1] } else { chunks };
        let got = stream_interleaved(&mut conv, &x, ch, &chunks, &outs);
        prop_assert_eq!(got.len(), want.len());
        prop_assert!(got.iter().zip(&want).all(|(p, q)| p.to_bits() == q.to_bits()));

        let xf: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let want32 = offline::convert_interleaved(&d, ch, &xf).unwrap();
        let mut conv32 = StreamConverter::<f32>::new(&d, ch).unwrap();
        let got32 = stream_interleaved(&mut conv32, &xf, ch, &chunks, &outs);
        prop_assert!(got32.iter().zip(&want32).all(|(p, q)| p.to_bits() == q.to_bits()));
        prop_assert_eq!(got32.len(), want32.len());

        // After reset the converter starts over and gives the same again.
        conv.reset();
        let again = stream_interleaved(&mut conv, &x, ch, &[len.max(1)], &[4096]);
        prop_assert!(again.iter().zip(&want).all(|(p, q)| p.to_bits() == q.to_bits()));
    }

    /// One infinite input sample spoils only the outputs whose window holds it: fed as
    /// callbacks of any size, every output further than two filter lengths from it is
    /// finite (the room past the newest input the groups read must hold zeros, never a
    /// stale copy of an earlier input moved along with the history).
    #[test]
    fn a_bad_sample_stays_where_it_is(
        pair in 0usize..common::PAIRS.len() - 1,
        at in 0usize..6000,
        chunks in proptest::collection::vec(1usize..300, 1..6),
        outs in proptest::collection::vec(1usize..300, 1..6),
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design_phase(a, b, 80.0, common::PHASES[0]);
        let len = 12_000;
        let mut x: Vec<f32> = noise(len, 7).iter().map(|&v| v as f32).collect();
        x[at] = f32::INFINITY;
        let mut conv = StreamConverter::<f32>::new(&d, 1).unwrap();
        let y = stream_interleaved(&mut conv, &x, 1, &chunks, &outs);
        // Output m sits at input time m a / b; the filter spans taps / L inputs around it.
        let reach = 2.0 * (d.taps().len() as f64 / f64::from(d.pair().up()) + 64.0);
        for (m, v) in y.iter().enumerate() {
            let t = m as f64 * f64::from(a) / f64::from(b);
            if (t - at as f64).abs() > reach {
                prop_assert!(v.is_finite(), "output {} (input time {:.1}) is {}", m, t, v);
            }
        }
    }

    /// Planar processing agrees bit for bit with interleaved processing.
    #[test]
    fn planar_equals_interleaved(
        pair in 0usize..common::PAIRS.len(),
        len in 0usize..2000,
        chunk in 1usize..500,
        seed in any::<u64>(),
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design(a, b, 80.0);
        let planar = [noise(len, seed), noise(len, seed ^ 0xabcdef)];
        let inter: Vec<f64> = (0..len).flat_map(|i| [planar[0][i], planar[1][i]]).collect();
        let want = offline::convert_interleaved(&d, 2, &inter).unwrap();
        let mut conv = StreamConverter::<f64>::new(&d, 2).unwrap();
        let mut got = [Vec::new(), Vec::new()];
        let mut o0 = vec![0.0; 333];
        let mut o1 = vec![0.0; 333];
        let mut pos = 0;
        while pos < len {
            let end = (pos + chunk).min(len);
            let p = conv
                .process_planar(&[&planar[0][pos..end], &planar[1][pos..end]], &mut [&mut o0[..], &mut o1[..]])
                .unwrap();
            got[0].extend_from_slice(&o0[..p.frames_written]);
            got[1].extend_from_slice(&o1[..p.frames_written]);
            pos += p.frames_read;
        }
        loop {
            let w = conv.flush_planar(&mut [&mut o0[..], &mut o1[..]]).unwrap();
            if w == 0 { break; }
            got[0].extend_from_slice(&o0[..w]);
            got[1].extend_from_slice(&o1[..w]);
        }
        prop_assert_eq!(got[0].len() * 2, want.len());
        for (f, pair) in want.chunks_exact(2).enumerate() {
            prop_assert_eq!(pair[0].to_bits(), got[0][f].to_bits());
            prop_assert_eq!(pair[1].to_bits(), got[1][f].to_bits());
        }
    }

    /// Conversion is linear: convert(a x + b y) = a convert(x) + b convert(y) to rounding.
    #[test]
    fn conversion_is_linear(
        pair in 0usize..common::PAIRS.len(),
        len in 1usize..1500,
        ga in -2.0f64..2.0,
        gb in -2.0f64..2.0,
        seed in any::<u64>(),
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design(a, b, 100.0);
        let x = noise(len, seed);
        let y = noise(len, seed.wrapping_add(1));
        let mix: Vec<f64> = x.iter().zip(&y).map(|(p, q)| ga * p + gb * q).collect();
        let (cx, cy, cm) = (offline::convert(&d, &x), offline::convert(&d, &y), offline::convert(&d, &mix));
        for i in 0..cm.len() {
            let lin = ga * cx[i] + gb * cy[i];
            prop_assert!((cm[i] - lin).abs() <= 1e-12, "{} vs {}", cm[i], lin);
        }
    }

    /// Output length is exactly ceil(n L / M), and the queries predict what the stream does
    /// (both phase responses: the queries read the design's delay).
    #[test]
    fn lengths_and_queries_are_exact(
        pair in 0usize..common::PAIRS.len(),
        phase in 0usize..2,
        len in 0usize..5000,
        first in 0usize..2000,
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design_phase(a, b, 60.0, common::PHASES[phase]);
        let r = RatePair::new(a, b).unwrap();
        let want = (len as u128 * u128::from(r.up())).div_ceil(u128::from(r.down())) as usize;
        prop_assert_eq!(offline::convert(&d, &vec![0.1_f32; len]).len(), want);
        prop_assert_eq!(r.output_len(len as u64) as usize, want);

        let mut conv = StreamConverter::<f32>::new(&d, 1).unwrap();
        let first = first.min(len);
        let predicted = conv.output_frames_for_input(first as u64) as usize;
        let mut out = vec![0.0_f32; predicted + 16];
        let p = conv.process_interleaved(&vec![0.0; first], &mut out).unwrap();
        prop_assert_eq!(p.frames_read, first);
        prop_assert_eq!(p.frames_written, predicted);
        // input_frames_for_output(k) is the smallest input giving k more outputs.
        let k = 5u64;
        let need = conv.input_frames_for_output(k);
        prop_assert!(conv.output_frames_for_input(need) >= k);
        if need > 0 {
            prop_assert!(conv.output_frames_for_input(need - 1) < k);
        }
    }

    /// Reduced ratios: gcd(L, M) = 1 and out / in = L / M.
    #[test]
    fn ratios_are_reduced(a in 1u32..=MAX_RATE, b in 1u32..=MAX_RATE) {
        let r = RatePair::new(a, b).unwrap();
        let (l, m) = (u64::from(r.up()), u64::from(r.down()));
        let (mut x, mut y) = (l, m);
        while y != 0 { let t = x % y; x = y; y = t; }
        prop_assert_eq!(x, 1);
        prop_assert_eq!(u64::from(b) * m, u64::from(a) * l);
    }

    /// Any spec in range designs or reports a typed error (budget), never panics; any spec
    /// out of range is a typed error.
    #[test]
    fn specs_in_range_never_panic(
        a in 1u32..=MAX_RATE,
        b in 1u32..=MAX_RATE,
        db in 20.0f64..=200.0,
        pass in 0.5f64..=0.995,
    ) {
        let r = FilterSpec::new(a, b).stopband_db(db).passband(pass).table_budget_bytes(1 << 20).design();
        match r {
            Ok(d) => prop_assert!(d.report().measured_stopband_db >= db),
            Err(Error::TableTooLarge { .. }) => {}
            Err(e) => prop_assert!(false, "unexpected error {e}"),
        }
    }

    #[test]
    fn specs_out_of_range_are_typed_errors(
        a in prop_oneof![Just(0u32), (MAX_RATE + 1)..=u32::MAX],
        db in prop_oneof![-1e300f64..19.999, 200.001f64..1e300, Just(f64::NAN)],
        pass in prop_oneof![-1.0f64..0.4999, 0.9951f64..10.0, Just(f64::NAN)],
    ) {
        let rate_err = |r: Result<_, Error>| matches!(r, Err(Error::RateOutOfRange { .. }));
        prop_assert!(rate_err(FilterSpec::new(a, 48_000).design()));
        prop_assert!(rate_err(FilterSpec::new(48_000, a).design()));
        let db_err = matches!(
            FilterSpec::new(44_100, 48_000).stopband_db(db).design(),
            Err(Error::StopbandOutOfRange { .. })
        );
        prop_assert!(db_err);
        let pass_err = matches!(
            FilterSpec::new(44_100, 48_000).passband(pass).design(),
            Err(Error::PassbandOutOfRange { .. })
        );
        prop_assert!(pass_err);
    }

    /// Mismatched buffers are typed errors.
    #[test]
    fn bad_buffers_are_typed_errors(ch in 2usize..8, extra in 1usize..7) {
        let d = common::design(44_100, 48_000, 60.0);
        let mut conv = StreamConverter::<f32>::new(&d, ch).unwrap();
        let bad = vec![0.0_f32; ch * 10 + (extra % ch).max(1)];
        let mut out = vec![0.0_f32; ch * 16];
        fn is_shape<V>(r: Result<V, Error>) -> bool {
            matches!(r, Err(Error::BufferShape { .. }))
        }
        prop_assert!(is_shape(conv.process_interleaved(&bad, &mut out)));
        let good = vec![0.0_f32; ch * 10];
        let mut bad_out = vec![0.0_f32; ch * 16 + 1];
        prop_assert!(is_shape(conv.process_interleaved(&good, &mut bad_out)));
        let planar = vec![vec![0.0_f32; 10]; ch - 1];
        let mut pout = vec![vec![0.0_f32; 10]; ch];
        prop_assert!(is_shape(conv.process_planar(&planar, &mut pout)));
        let mut ragged = vec![vec![0.0_f32; 10]; ch];
        ragged[ch - 1].push(0.0);
        prop_assert!(is_shape(conv.process_planar(&ragged, &mut pout)));
        prop_assert!(is_shape(conv.flush_planar(&mut ragged)));
    }
}

/// A constant input comes out as the same constant away from the edges, within
/// 10^(-A/20) (common practice, no source: every phase of a low-pass with unity DC gain has
/// unity DC gain up to its stopband attenuation at multiples of the input rate).
#[test]
fn dc_gain_is_unity_within_the_stopband() {
    for (a, b) in common::PAIRS {
        for db in [60.0, 100.0, 140.0] {
            let d = common::design(a, b, db);
            let x = vec![0.75_f64; 20_000];
            let y = offline::convert(&d, &x);
            let margin = (d.report().latency_output_frames.ceil() as usize) * 2 + 4;
            let tol = 0.75 * 10f64.powf(-db / 20.0);
            let worst = y[margin..y.len() - margin]
                .iter()
                .map(|v| (v - 0.75).abs())
                .fold(0.0, f64::max);
            assert!(
                worst <= tol,
                "{a}->{b} {db} dB: DC error {worst:e} > {tol:e}"
            );
        }
    }
}

#[test]
fn channel_count_is_checked() {
    let d = common::design(44_100, 48_000, 60.0);
    assert!(matches!(
        StreamConverter::<f32>::new(&d, 0),
        Err(Error::ChannelsOutOfRange { channels: 0 })
    ));
    assert!(StreamConverter::<f32>::new(&d, MAX_CHANNELS + 1).is_err());
    assert!(offline::convert_interleaved(&d, 0, &[0.0_f32; 4]).is_err());
}

#[test]
fn input_after_flush_is_refused_until_reset() {
    let d = common::design(44_100, 48_000, 60.0);
    let mut conv = StreamConverter::<f64>::new(&d, 1).unwrap();
    let mut out = vec![0.0; 64];
    conv.flush_interleaved(&mut out).unwrap();
    assert_eq!(
        conv.process_interleaved(&[0.0; 4], &mut out),
        Err(Error::InputAfterFlush)
    );
    conv.reset();
    assert!(conv.process_interleaved(&[0.0; 4], &mut out).is_ok());
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    /// `max_output_frames` is enough: with exactly that much output room, every call of any
    /// chunking (0 frames to several blocks, interleaved or planar) reads all of its input,
    /// writes no more than the bound and leaves no ready output behind; and the whole stream
    /// is still the offline result.
    #[test]
    fn max_output_frames_bounds_every_call(
        pair in 0usize..common::PAIRS.len(),
        ch in 1usize..4,
        planar in any::<bool>(),
        chunks in prop::collection::vec(0usize..6000, 1..24),
        seed in any::<u64>(),
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design(a, b, 80.0);
        let mut conv = StreamConverter::<f64>::new(&d, ch).unwrap();
        let total: usize = chunks.iter().sum();
        let x = noise(total * ch, seed);
        let mut y = Vec::new();
        let mut pos = 0;
        for &k in &chunks {
            let bound = conv.max_output_frames(k);
            prop_assert_eq!(bound as u64, d.pair().output_len(k as u64));
            let ready = conv.output_frames_for_input(k as u64);
            prop_assert!(ready <= bound as u64, "ready {} > bound {}", ready, bound);
            let chunk = &x[pos * ch..(pos + k) * ch];
            let p = if planar {
                let inp: Vec<Vec<f64>> = (0..ch)
                    .map(|c| chunk.iter().skip(c).step_by(ch).copied().collect())
                    .collect();
                let mut out = vec![vec![0.0; bound]; ch];
                let p = conv.process_planar(&inp, &mut out).unwrap();
                for f in 0..p.frames_written {
                    y.extend(out.iter().map(|o| o[f]));
                }
                p
            } else {
                let mut out = vec![0.0; bound * ch];
                let p = conv.process_interleaved(chunk, &mut out).unwrap();
                y.extend_from_slice(&out[..p.frames_written * ch]);
                p
            };
            prop_assert_eq!(p.frames_read, k, "fell behind");
            prop_assert_eq!(p.frames_written as u64, ready);
            prop_assert!(p.frames_written <= bound);
            prop_assert_eq!(conv.output_frames_for_input(0), 0, "ready output left behind");
            pos += k;
        }
        let mut out = vec![0.0; 333 * ch];
        loop {
            let w = conv.flush_interleaved(&mut out).unwrap();
            if w == 0 {
                break;
            }
            y.extend_from_slice(&out[..w * ch]);
        }
        let want = offline::convert_interleaved(&d, ch, &x).unwrap();
        prop_assert!(y == want, "stream differs from offline");
    }

    /// The bound is exact: for any chunk length there is a point in the stream where a call
    /// of that length writes exactly `max_output_frames` (the point where `n L - half` is a
    /// multiple of `M`; one of any `M` consecutive input counts past the look-ahead).
    #[test]
    fn max_output_frames_is_attained(
        pair in 0usize..common::PAIRS.len(),
        k in 1usize..3000,
    ) {
        let (a, b) = common::PAIRS[pair];
        let d = common::design(a, b, 60.0);
        let mut conv = StreamConverter::<f32>::new(&d, 1).unwrap();
        let bound = conv.max_output_frames(k);
        let mut big = vec![0.0_f32; 1 << 16];
        // Past the look-ahead: at least one output is ready.
        let lead = conv.input_frames_for_output(1) as usize;
        let p = conv.process_interleaved(&vec![0.1; lead], &mut big).unwrap();
        prop_assert_eq!(p.frames_read, lead);
        let mut most = 0;
        let chunk = vec![0.1_f32; k];
        for _ in 0..d.pair().down() {
            let mut probe = conv.clone();
            let mut out = vec![0.0_f32; bound];
            let p = probe.process_interleaved(&chunk, &mut out).unwrap();
            prop_assert_eq!(p.frames_read, k);
            most = most.max(p.frames_written);
            let p = conv.process_interleaved(&[0.1], &mut big).unwrap();
            prop_assert_eq!(p.frames_read, 1);
        }
        prop_assert_eq!(most, bound);
    }
}

/// What went wrong before `max_output_frames`: a buffer sized from the first chunk's
/// `output_frames_for_input` is too small for later chunks, so a call leaves input unread.
#[test]
fn sizing_from_the_first_chunk_falls_behind() {
    let d = common::design(44_100, 48_000, 100.0);
    let mut conv = StreamConverter::<f32>::new(&d, 1).unwrap();
    let k = 256;
    let first = conv.output_frames_for_input(k as u64) as usize;
    assert!(first < conv.max_output_frames(k));
    let mut out = vec![0.0_f32; first];
    let input = vec![0.0_f32; k];
    let behind = (0..64).any(|_| {
        let p = conv.process_interleaved(&input, &mut out).unwrap();
        p.frames_read < k
    });
    assert!(behind, "a buffer sized from the first chunk kept up");
}
