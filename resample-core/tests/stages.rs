//! Two-stage conversions (a half-band stage and the polyphase stage): the streaming chain
//! gives the offline result bit for bit whatever the chunking, exactly `ceil(n L / M)`
//! frames, exact frame queries; and its output agrees with the single stage's.

use resample_core::{
    offline, ChainConverter, Error, FilterSpec, Kernel, Sample, StageChoice, StagePlan,
};

const PAIRS: [(u32, u32); 4] = [
    (192_000, 44_100),
    (48_000, 16_000),
    (48_000, 8_000),
    (8_000, 48_000),
];

fn two(a: u32, b: u32, db: f64) -> StagePlan {
    let p = FilterSpec::new(a, b)
        .stopband_db(db)
        .stage_choice(StageChoice::Two)
        .plan()
        .unwrap();
    assert!(p.is_two_stage(), "{a} -> {b}");
    p
}

/// A busy deterministic signal (demo data: tones and a little noise).
fn signal<T: Sample>(n: usize, ch: usize, seed: u64) -> Vec<Vec<T>> {
    let mut s = seed;
    (0..ch)
        .map(|c| {
            (0..n)
                .map(|i| {
                    s = s
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    let noise = (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
                    let v = 0.4 * (i as f64 * (0.013 + 0.007 * c as f64)).sin()
                        + 0.3 * (i as f64 * 0.9).sin()
                        + 0.2 * noise;
                    T::from_f64_lossy(v)
                })
                .collect()
        })
        .collect()
}

/// Planar stream in chunks (cycled sizes) with output rooms (cycled), then flush.
fn stream_planar<T: Sample>(
    conv: &mut ChainConverter<T>,
    x: &[Vec<T>],
    chunks: &[usize],
    rooms: &[usize],
) -> Vec<Vec<T>> {
    let ch = x.len();
    let n = x[0].len();
    let mut y = vec![Vec::new(); ch];
    let mut out = vec![vec![T::zero(); 20_000]; ch];
    let (mut pos, mut k) = (0, 0);
    while pos < n {
        let end = (pos + chunks[k % chunks.len()]).min(n);
        let room = rooms[k % rooms.len()];
        k += 1;
        let mut at = pos;
        let mut idle = 0;
        while at < end {
            let ins: Vec<&[T]> = x.iter().map(|c| &c[at..end]).collect();
            let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[..room]).collect();
            let p = conv.process_planar(&ins, &mut outs).unwrap();
            for (yc, oc) in y.iter_mut().zip(&out) {
                yc.extend_from_slice(&oc[..p.frames_written]);
            }
            at += p.frames_read;
            if p.frames_read == 0 && p.frames_written == 0 {
                idle += 1;
                assert!(idle < 2, "no progress with room {room}");
            }
        }
        pos = end;
    }
    loop {
        let mut outs: Vec<&mut [T]> = out.iter_mut().map(|c| &mut c[..5]).collect();
        let w = conv.flush_planar(&mut outs).unwrap();
        if w == 0 {
            break;
        }
        for (yc, oc) in y.iter_mut().zip(&out) {
            yc.extend_from_slice(&oc[..w]);
        }
    }
    assert!(conv.is_finished());
    y
}

/// Interleaved stream with the largest room (`max_output_frames`): every call reads all.
fn stream_interleaved<T: Sample>(
    conv: &mut ChainConverter<T>,
    x: &[Vec<T>],
    chunks: &[usize],
) -> Vec<Vec<T>> {
    let ch = x.len();
    let n = x[0].len();
    let inter: Vec<T> = (0..n * ch).map(|i| x[i % ch][i / ch]).collect();
    let mut y = Vec::new();
    let (mut pos, mut k) = (0, 0);
    while pos < n {
        let len = chunks[k % chunks.len()].min(n - pos);
        k += 1;
        let mut out = vec![T::zero(); conv.max_output_frames(len) * ch];
        let expect = conv.output_frames_for_input(len as u64);
        let p = conv
            .process_interleaved(&inter[pos * ch..(pos + len) * ch], &mut out)
            .unwrap();
        assert_eq!(
            p.frames_read, len,
            "room of max_output_frames reads everything"
        );
        assert_eq!(
            p.frames_written as u64,
            expect,
            "output_frames_for_input is exact: {:?} chunk {len} at {pos}",
            conv.pair()
        );
        y.extend_from_slice(&out[..p.frames_written * ch]);
        pos += len;
    }
    let mut out = vec![T::zero(); 3 * ch];
    loop {
        let w = conv.flush_interleaved(&mut out).unwrap();
        if w == 0 {
            break;
        }
        y.extend_from_slice(&out[..w * ch]);
    }
    (0..ch)
        .map(|c| y.iter().skip(c).step_by(ch).copied().collect())
        .collect()
}

fn chunk_invariance<T: Sample>() {
    for &(a, b) in &PAIRS {
        let plan = two(a, b, 100.0);
        for (n, ch) in [(9_001, 2), (1, 3), (0, 1), (40, 1)] {
            let x = signal::<T>(n, ch, u64::from(a) + n as u64);
            let want = offline::convert_plan_planar(&plan, &x).unwrap();
            assert_eq!(want[0].len() as u64, plan.pair().output_len(n as u64));
            let mut conv = ChainConverter::<T>::new(&plan, ch).unwrap();
            for (chunks, rooms) in [
                (&[1_usize, 7, 4096, 333][..], &[1_usize, 50, 9_000][..]),
                (&[10_000][..], &[20_000][..]),
                (&[5_000, 2][..], &[3][..]),
            ] {
                conv.reset();
                let got = stream_planar(&mut conv, &x, chunks, rooms);
                for (g, w) in got.iter().zip(&want) {
                    assert!(
                        g == w,
                        "{a} -> {b}, n {n}, chunks {chunks:?}, rooms {rooms:?}"
                    );
                }
            }
            conv.reset();
            let got = stream_interleaved(&mut conv, &x, &[1, 1000, 64, 4097]);
            assert!(got == want, "{a} -> {b}, n {n}, interleaved");
        }
    }
}

#[test]
fn chain_is_chunk_invariant_and_exact_f32() {
    chunk_invariance::<f32>();
}

#[test]
fn chain_is_chunk_invariant_and_exact_f64() {
    chunk_invariance::<f64>();
}

#[test]
fn input_frames_for_output_is_the_least() {
    for &(a, b) in &PAIRS {
        let plan = two(a, b, 100.0);
        let x = signal::<f64>(30_000, 1, 7).remove(0);
        let mut conv = ChainConverter::<f64>::new(&plan, 1).unwrap();
        let mut out = vec![0.0; 200_000];
        let mut pos = 0;
        for want in [1_u64, 5, 700, 1, 2000] {
            let need = conv.input_frames_for_output(want) as usize;
            // One frame less is not enough, this much is.
            if need > 0 {
                assert!(
                    conv.output_frames_for_input(need as u64 - 1) < want,
                    "{a} -> {b}"
                );
            }
            assert!(
                conv.output_frames_for_input(need as u64) >= want,
                "{a} -> {b}"
            );
            let p = conv
                .process_planar(&[&x[pos..pos + need]], &mut [&mut out[..]])
                .unwrap();
            assert_eq!(p.frames_read, need);
            assert!(p.frames_written as u64 >= want);
            pos += need;
        }
    }
}

#[test]
fn single_stage_plans_are_the_stream_converter() {
    let plan = FilterSpec::new(44_100, 48_000)
        .stopband_db(100.0)
        .plan()
        .unwrap();
    assert_eq!(plan.stages().len(), 1);
    let x = signal::<f32>(5_000, 2, 3);
    let want = offline::convert_planar(&plan.stages()[0], &x).unwrap();
    assert_eq!(offline::convert_plan_planar(&plan, &x).unwrap(), want);
    let mut conv = ChainConverter::<f32>::with_kernel(&plan, 2, Kernel::detect()).unwrap();
    assert_eq!(conv.stages(), 1);
    assert_eq!(stream_planar(&mut conv, &x, &[100, 3], &[40]), want);
}

#[test]
fn bad_shapes_are_errors() {
    let plan = two(48_000, 16_000, 80.0);
    assert!(matches!(
        ChainConverter::<f32>::new(&plan, 0),
        Err(Error::ChannelsOutOfRange { .. })
    ));
    let mut conv = ChainConverter::<f32>::new(&plan, 2).unwrap();
    let mut out = vec![0.0_f32; 10];
    assert!(matches!(
        conv.process_interleaved(&[0.0; 3], &mut out),
        Err(Error::BufferShape { .. })
    ));
    let a = [0.0_f32; 4];
    let b = [0.0_f32; 5];
    let (mut o1, mut o2) = ([0.0_f32; 8], [0.0_f32; 8]);
    assert!(matches!(
        conv.process_planar(&[&a[..], &b[..]], &mut [&mut o1[..], &mut o2[..]]),
        Err(Error::BufferShape { .. })
    ));
    conv.flush_interleaved(&mut out).unwrap();
    assert!(matches!(
        conv.process_interleaved(&[0.0; 2], &mut out),
        Err(Error::InputAfterFlush)
    ));
    assert!(matches!(
        offline::convert_plan_planar::<f32, _>(&plan, &[&a[..], &b[..]]),
        Err(Error::BufferShape { .. })
    ));
}

/// The two-stage output agrees with the single stage's within the stopband level.
/// Criterion (common practice, no source): both approximate the same ideal band-limited
/// conversion; on a signal with all its energy in the passband (below the passband edge)
/// and above the single stage's stopband edge, each deviates from the ideal by at most its
/// passband ripple and stopband leakage, so their difference, relative to the signal's peak,
/// stays under twice the stopband level (-A + 6 dB) plus the two ripple allowances.
#[test]
fn agrees_with_the_single_stage_within_the_stopband_level() {
    let db = 120.0;
    for &(a, b) in &PAIRS {
        let plan = two(a, b, db);
        let single = FilterSpec::new(a, b)
            .stopband_db(db)
            .stage_choice(StageChoice::Single)
            .plan()
            .unwrap();
        let (fa, nyq) = (f64::from(a), f64::from(a.min(b)) / 2.0);
        let tones = [
            (0.05 * nyq, 0.3),
            (0.37 * nyq, 0.2),
            (0.85 * nyq, 0.2),
            (1.3 * nyq, 0.1),
            (0.45 * fa, 0.1),
        ];
        let n = 60_000;
        let x: Vec<f64> = (0..n)
            .map(|i| {
                tones
                    .iter()
                    .filter(|(f, _)| *f < 0.5 * fa)
                    .map(|&(f, amp)| amp * (2.0 * std::f64::consts::PI * f * i as f64 / fa).sin())
                    .sum()
            })
            .collect();
        let y2 = offline::convert_plan(&plan, &x);
        let y1 = offline::convert_plan(&single, &x);
        assert_eq!(y1.len(), y2.len());
        // Everywhere, the ends included: the signal starts and stops abruptly, and the first
        // stage's ringing around the ends must reach the second (`StagePlan::edge_frames`);
        // without it the ends differ by -30 to -50 dB.
        let worst = y1
            .iter()
            .zip(&y2)
            .map(|(p, q)| (p - q).abs())
            .fold(0.0, f64::max);
        let peak = x.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        let limit = 2.0 * 10f64.powf(-db / 20.0)
            + 2.0 * (10f64.powf(plan.passband_ripple_db() / 20.0) - 1.0);
        assert!(
            worst / peak <= limit,
            "{a} -> {b}: difference {:.2} dB of peak, limit {:.2} dB",
            20.0 * (worst / peak).log10(),
            20.0 * limit.log10()
        );
    }
}

#[test]
fn every_kernel_is_chunk_invariant_and_agrees_with_the_scalar_reference() {
    // The half-band stage runs the chain's kernel (forceable to the scalar reference, as
    // the polyphase stage): each kernel chunk invariant, and within rounding of scalar.
    for &(a, b) in &PAIRS {
        let plan = two(a, b, 120.0);
        let x = signal::<f64>(20_011, 2, u64::from(b));
        let run = |k: Kernel, chunks: &[usize], rooms: &[usize]| {
            let mut conv = ChainConverter::<f64>::with_kernel(&plan, 2, k).unwrap();
            stream_planar(&mut conv, &x, chunks, rooms)
        };
        let scalar = run(Kernel::Scalar, &[20_011], &[20_000]);
        for k in Kernel::available() {
            let whole = run(k, &[20_011], &[20_000]);
            let bits = run(k, &[1, 7, 4096, 333], &[1, 50, 9_000]);
            assert!(
                whole == bits,
                "{a} -> {b}, {k:?}: chunking changed the output"
            );
            let worst = whole
                .iter()
                .zip(&scalar)
                .flat_map(|(g, s)| g.iter().zip(s).map(|(p, q)| (p - q).abs()))
                .fold(0.0_f64, f64::max);
            assert!(worst < 1e-12, "{a} -> {b}, {k:?}: {worst:e} from scalar");
        }
    }
}
