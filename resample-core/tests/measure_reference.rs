//! The measurement itself, checked against answers from outside the project: converters
//! whose image levels and responses are published formulas, and converters built from
//! scipy's Kaiser designs (fixtures/make_kaiser_converters.py).

use resample_core::measure::{measure_converter, Measurement, Settings, Sweep};
use resample_core::{offline, FilterSpec};

fn keep() -> Settings {
    Settings {
        keep_spectrogram: true,
        ..Settings::default()
    }
}

/// Power (linear) of the spectrogram of frame `i` between `lo` and `hi` Hz.
fn band_power(m: &Measurement, i: usize, lo: f64, hi: f64) -> f64 {
    let s = m.spectrogram.as_ref().unwrap();
    let a = (lo / s.bin_hz).floor().max(0.0) as usize;
    let b = ((hi / s.bin_hz).ceil() as usize).min(s.levels_dbfs[i].len() - 1);
    s.levels_dbfs[i][a..=b]
        .iter()
        .map(|&d| 10f64.powf(f64::from(d) / 10.0))
        .sum()
}

/// The frame whose wanted tone is centred closest to `f` Hz.
fn frame_at(m: &Measurement, f: f64) -> (usize, f64, f64) {
    let mut best = (0, 0.0, 0.0, f64::INFINITY);
    for (i, fr) in m.frames.iter().enumerate() {
        if let Some((a, b)) = fr.wanted_hz {
            let d = (0.5 * (a + b) - f).abs();
            if d < best.3 {
                best = (i, a, b, d);
            }
        }
    }
    (best.0, best.1, best.2)
}

/// Image level relative to the tone for sample repetition (hold) upsampling:
/// 20 log10(|sin(pi f0 / fs_out)| / |sin(pi f_img / fs_out)|) (Crochiere & Rabiner,
/// Multirate Digital Signal Processing, 1983, from memory; exact discrete form in
/// ../shared/CHECKS.md).
fn hold_image_db(f0: f64, f_img: f64, fs_out: f64) -> f64 {
    let s = |f: f64| (core::f64::consts::PI * f / fs_out).sin().abs();
    20.0 * (s(f0) / s(f_img)).log10()
}

fn check_images(m: &Measurement, double: bool) {
    let lobe = 400.0; // the analyser's main lobe and a margin, Hz
    let (i, a, b) = frame_at(m, 1000.0);
    let f0 = 0.5 * (a + b);
    let wanted = band_power(m, i, a - lobe, b + lobe);
    for (k, sign) in [(1.0, -1.0), (1.0, 1.0), (2.0, -1.0)] {
        // Images at k fs_in +- f0 (11, 13, 23 kHz for a 1 kHz tone); they sweep the other
        // way (or the same way) as fast as the tone, over the same span.
        let centre = k * 12_000.0 + sign * f0;
        let half = 0.5 * (b - a);
        let img = band_power(m, i, centre - half - lobe, centre + half + lobe);
        let measured = 10.0 * (img / wanted).log10();
        let mut expect = hold_image_db(f0, centre, 48_000.0);
        if double {
            // Linear interpolation (a triangle of length 2L - 1) doubles every dB value
            // (same source).
            expect *= 2.0;
        }
        assert!(
            (measured - expect).abs() < 0.5,
            "image at {centre:.0} Hz: measured {measured:.3} dB, formula {expect:.3} dB"
        );
    }
}

#[test]
fn published_hold_values_are_what_the_formula_gives() {
    // ../shared/CHECKS.md: 12 kHz -> 48 kHz, 1 kHz tone: -20.0703 / -21.2105 / -23.6694 dB.
    for (f, v) in [
        (11_000.0, -20.0703),
        (13_000.0, -21.2105),
        (23_000.0, -23.6694),
    ] {
        assert!((hold_image_db(1000.0, f, 48_000.0) - v).abs() < 1e-4);
    }
}

#[test]
fn sample_repetition_images_match_the_hold_formula() {
    let sweep = Sweep::new(12_000).seconds(2.0);
    let m = measure_converter(&sweep, 48_000, &keep(), |x| {
        x.iter().flat_map(|&v| [v; 4]).collect()
    })
    .unwrap();
    check_images(&m, false);
    // A hold of L samples delays by (L - 1) / 2 output samples (common practice, no source).
    assert!(
        (m.latency_samples - 1.5).abs() < 0.01,
        "{}",
        m.latency_samples
    );
    // Next to the input's Nyquist frequency the first image is as loud as the tone.
    assert!(m.rejection_db < 3.0, "{}", m.rejection_db);
}

#[test]
fn linear_interpolation_images_are_twice_the_hold_values_in_db() {
    let sweep = Sweep::new(12_000).seconds(2.0);
    let m = measure_converter(&sweep, 48_000, &keep(), |x| {
        let mut y = Vec::with_capacity(4 * x.len());
        for n in 0..x.len() {
            let next = x.get(n + 1).copied().unwrap_or(0.0);
            for r in 0..4 {
                let t = r as f64 / 4.0;
                y.push(x[n] * (1.0 - t) + next * t);
            }
        }
        y
    })
    .unwrap();
    check_images(&m, true);
    assert!(m.latency_samples.abs() < 0.01, "{}", m.latency_samples);
}

#[test]
fn moving_average_has_its_published_nulls_and_level() {
    // |H(f)| = |sin(pi f N / fs) / (N sin(pi f / fs))|, nulls at k fs / N: N = 8, 48 kHz ->
    // 6, 12, 18 kHz; -0.3944 dB at 1 kHz (Harris 1978, Dirichlet kernel; ../shared/CHECKS.md).
    let sweep = Sweep::new(48_000).seconds(2.0);
    let m = measure_converter(&sweep, 48_000, &Settings::default(), |x| {
        (0..x.len())
            .map(|n| x[n.saturating_sub(7)..=n].iter().sum::<f64>() / 8.0)
            .collect()
    })
    .unwrap();
    let t = &m.transfer;
    assert!((t.mean_db(1000.0, 0.5).unwrap() + 0.3944).abs() < 0.002);
    for k in 1..=3 {
        let null = 6000.0 * k as f64;
        // The deepest point within 300 Hz of the published null.
        let mut best = (0.0, f64::INFINITY);
        let mut f = null - 300.0;
        while f < null + 300.0 {
            let v = t.magnitude_db_at(f).unwrap();
            if v < best.1 {
                best = (f, v);
            }
            f += t.bin_hz();
        }
        assert!(
            (best.0 - null).abs() <= t.bin_hz(),
            "null near {null}: {best:?}"
        );
        assert!(best.1 < -80.0, "null at {null} only {} dB", best.1);
    }
    // A moving average of N samples delays by (N - 1) / 2 (common practice, no source).
    assert!(
        (m.latency_samples - 3.5).abs() < 0.01,
        "{}",
        m.latency_samples
    );
    // A linear, time-invariant system adds nothing: the analyser's own floor shows.
    assert!(m.rejection_db > 170.0, "{}", m.rejection_db);
}

/// One of the scipy Kaiser converters of fixtures/make_kaiser_converters.py.
struct Fixture {
    taps: Vec<f64>,
    stopband_db: f64,
    requested: f64,
}

fn fixture(db: u32) -> Fixture {
    let path = format!(
        "{}/../fixtures/kaiser_up2_{db:03}db.txt",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).unwrap();
    let mut taps = Vec::new();
    let (mut stop, mut req) = (f64::NAN, f64::NAN);
    for line in text.lines() {
        if let Some(h) = line.strip_prefix("# ") {
            if let Some((k, v)) = h.split_once(" = ") {
                match k {
                    "measured_stopband_db" => stop = v.parse().unwrap(),
                    "requested_db" => req = v.parse().unwrap(),
                    _ => {}
                }
            }
        } else {
            taps.push(line.parse::<f64>().unwrap());
        }
    }
    Fixture {
        taps,
        stopband_db: stop,
        requested: req,
    }
}

/// y[m] = L sum_k x[k] h[m M - k L + half], L = 2, M = 1: the zero-delay polyphase form
/// (Crochiere & Rabiner, Proc. IEEE 69(3), 1981; equals scipy.signal.resample_poly with the
/// same taps, ../shared/CHECKS.md).
fn upsample2(h: &[f64], x: &[f64]) -> Vec<f64> {
    let half = (h.len() / 2) as i64;
    (0..2 * x.len() as i64)
        .map(|m| {
            let mut acc = 0.0;
            for (k, &v) in x.iter().enumerate() {
                let j = m - 2 * k as i64 + half;
                if j < 0 {
                    break;
                }
                if (j as usize) < h.len() {
                    acc += v * h[j as usize];
                }
            }
            2.0 * acc
        })
        .collect()
}

#[test]
fn scipy_kaiser_converters_are_graded_at_their_own_stopband() {
    // Designs by scipy.signal.kaiserord + firwin (scipy 1.17.1), stopband measured by
    // scipy.signal.freqz in the fixture script; the sweep measurement must land within 2 dB.
    for db in [60, 90, 120] {
        let f = fixture(db);
        assert_eq!(f.requested, f64::from(db));
        let sweep = Sweep::new(24_000).seconds(2.0);
        let m = measure_converter(&sweep, 48_000, &Settings::default(), |x| {
            // Skip the leading zeros of the convolution quickly: start the sum where it can
            // be non-zero.
            upsample2_fast(&f.taps, x)
        })
        .unwrap();
        assert!(
            (m.rejection_db - f.stopband_db).abs() <= 2.0,
            "{db} dB design: measured {:.2} dB, scipy freqz {:.2} dB",
            m.rejection_db,
            f.stopband_db
        );
    }
}

/// [`upsample2`] with the inner sum limited to the taps that overlap the input.
fn upsample2_fast(h: &[f64], x: &[f64]) -> Vec<f64> {
    let half = (h.len() / 2) as i64;
    let n = x.len() as i64;
    (0..2 * n)
        .map(|m| {
            // j = m - 2k + half in [0, len) <=> k in ((m + half - len) / 2, (m + half) / 2].
            let k_hi = ((m + half) / 2).min(n - 1);
            let k_lo = ((m + half - h.len() as i64 + 2) / 2).max(0);
            let mut acc = 0.0;
            let mut k = k_lo;
            while k <= k_hi {
                let j = m - 2 * k + half;
                if (0..h.len() as i64).contains(&j) {
                    acc += x[k as usize] * h[j as usize];
                }
                k += 1;
            }
            2.0 * acc
        })
        .collect()
}

#[test]
fn fast_and_plain_upsamplers_agree() {
    let h = fixture(60).taps;
    let x: Vec<f64> = (0..300)
        .map(|i| ((i * 7919) % 101) as f64 / 50.0 - 1.0)
        .collect();
    let (a, b) = (upsample2(&h, &x), upsample2_fast(&h, &x));
    assert_eq!(a.len(), b.len());
    for (p, q) in a.iter().zip(&b) {
        assert!((p - q).abs() < 1e-12);
    }
}

#[test]
fn our_converter_measures_at_least_what_was_requested() {
    // The design promises at least the requested attenuation; measured on the output it
    // must hold (and 2-second sweeps are enough to see it).
    for (a, b, db) in [
        (44_100, 48_000, 60.0),
        (44_100, 48_000, 160.0),
        (48_000, 44_100, 120.0),
        (96_000, 44_100, 100.0),
        (16_000, 48_000, 140.0),
    ] {
        let d = FilterSpec::new(a, b).stopband_db(db).design().unwrap();
        let sweep = Sweep::new(a).seconds(2.0);
        let m = measure_converter(&sweep, b, &Settings::default(), |x| offline::convert(&d, x))
            .unwrap();
        assert!(
            m.rejection_db >= db,
            "{a} -> {b} at {db} dB: measured {:.2}",
            m.rejection_db
        );
        // Kaiser designs deviate about equally in both bands (Kaiser 1974; O&S 3rd ed.
        // sec. 7.5, from memory): the ripple stays within twice the stopband deviation.
        let spec = resample_core::measure::ripple_limit_db(db);
        assert!(
            m.passband_ripple_db <= spec,
            "{} > {spec}",
            m.passband_ripple_db
        );
        assert!(m.latency_samples.abs() < 1e-3);
        let bw = m.bandwidth_0_1db_hz.unwrap();
        assert!(bw >= d.report().passband_edge_hz, "{bw}");
    }
}

#[test]
fn zero_stuffing_without_a_filter_fails() {
    // Zero-stuffing by 2 with no filter: the image at fs_in - f is as loud as the tone (a
    // little louder where it meets its own mirror next to 0 Hz or the output's Nyquist).
    let sweep = Sweep::new(24_000).seconds(1.0);
    let m = measure_converter(&sweep, 48_000, &Settings::default(), |x| {
        x.iter().flat_map(|&v| [2.0 * v, 0.0]).collect()
    })
    .unwrap();
    assert!(m.rejection_db < 1.0, "{}", m.rejection_db);
}

#[test]
fn unwanted_by_tone_follows_the_hold_formula_and_finds_the_worst() {
    // Sample repetition by 4 from 12 kHz to 48 kHz: the hold's response is
    // |sin(pi f L / fs) / (L sin(pi f / fs))| at fs = 48 kHz (Crochiere & Rabiner,
    // Multirate Digital Signal Processing, 1983, from memory; ../shared/CHECKS.md), and
    // the strongest unwanted component of a tone f0 is its first image at 12 kHz - f0.
    let sweep = Sweep::new(12_000).seconds(2.0);
    let m = measure_converter(&sweep, 48_000, &Settings::default(), |x| {
        x.iter().flat_map(|&v| [v; 4]).collect()
    })
    .unwrap();
    let hold_db = |f: f64| {
        let s = |v: f64| (core::f64::consts::PI * v / 48_000.0).sin().abs();
        20.0 * (s(4.0 * f) / (4.0 * s(f))).log10()
    };
    let pts = m.unwanted_by_tone();
    assert!(pts.windows(2).all(|w| w[0].tone_hz <= w[1].tone_hz));
    assert!(pts.iter().all(|p| !p.from_probe));
    for f0 in [1_000.0, 2_000.0, 4_000.0] {
        let p = pts
            .iter()
            .min_by(|a, b| (a.tone_hz - f0).abs().total_cmp(&(b.tone_hz - f0).abs()))
            .unwrap();
        let f = p.tone_hz;
        assert!((f - f0).abs() < 50.0, "no point near {f0} Hz (nearest {f})");
        let expect = hold_db(12_000.0 - f) - hold_db(m.reference_hz);
        assert!(
            (p.level_db - expect).abs() < 0.5,
            "tone {f:.0} Hz: measured {:.3} dB, formula {expect:.3} dB",
            p.level_db
        );
        assert!((p.filter_hz - (12_000.0 - f)).abs() < 1e-9);
    }
    // The worst point is the rejection (no probes here, so every point is a frame's).
    let worst = pts
        .iter()
        .map(|p| p.level_db)
        .fold(f64::NEG_INFINITY, f64::max);
    assert!(
        (worst + m.rejection_db).abs() < 1e-9,
        "{worst} vs {}",
        m.rejection_db
    );
}

#[test]
fn unwanted_by_tone_includes_the_edge_probes() {
    // With probes, the worst of the points is the rejection unless the edge's interpolated
    // level counted (then the points stay at or under it).
    let d = FilterSpec::new(48_000, 44_100)
        .stopband_db(90.0)
        .design()
        .unwrap();
    let sweep = Sweep::new(48_000).seconds(2.0).edge_probes(44_100);
    let m = measure_converter(&sweep, 44_100, &Settings::default(), |x| {
        offline::convert(&d, x)
    })
    .unwrap();
    let pts = m.unwanted_by_tone();
    let e = m.edge.as_ref().unwrap();
    let probes: Vec<_> = pts.iter().filter(|p| p.from_probe).collect();
    assert_eq!(probes.len(), e.stopband.len());
    // Downsampling: a probe above the edge is its own alias's cause and filter frequency.
    assert!(probes
        .iter()
        .all(|p| p.tone_hz > e.edge_hz && (p.filter_hz - p.tone_hz).abs() < 1e-9));
    let worst = pts
        .iter()
        .map(|p| p.level_db)
        .fold(f64::NEG_INFINITY, f64::max);
    assert!(
        worst <= -m.rejection_db + 1e-9,
        "{worst} vs {}",
        m.rejection_db
    );
    assert!(
        worst > -m.rejection_db - 3.0,
        "{worst} vs {}",
        m.rejection_db
    );
}
