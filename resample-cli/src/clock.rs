//! Clock correction of files (`--clock-ppm P`): the input's true rate is its header rate
//! times `1 + P x 1e-6` (a recorder whose clock ran P parts per million fast; negative when
//! slow). The correction is held exactly, as an integer count of 10^-6 ppm, so that output
//! lengths and rescaled positions are exact rational arithmetic (u128), never float
//! rounding luck.

use resample_core::limits::{CLOCK_PPM_DECIMALS, MAX_CLOCK_PPM};

/// Units of the exact correction per unit of the true rate: the true rate is
/// `header x (SCALE + units) / SCALE`, `units` = ppm x 10^6.
const SCALE: u128 = 1_000_000_000_000;

/// A clock correction, exact.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub struct ClockPpm {
    /// The correction in 10^-6 ppm (parts per 10^12).
    units: i64,
}

/// Parse `--clock-ppm`: a decimal number (optional sign, at most
/// [`CLOCK_PPM_DECIMALS`] decimals) whose magnitude is at most [`MAX_CLOCK_PPM`]. NaN,
/// infinities, exponents and anything else are refused (a usage error, exit status 2).
pub fn parse_clock_ppm(text: &str) -> Result<ClockPpm, String> {
    let t = text.trim();
    let bad = || {
        format!(
            "'{text}' is not a clock correction in ppm (a decimal number such as 120, -35.5 \
             or +0.25, from -{MAX_CLOCK_PPM} to {MAX_CLOCK_PPM})"
        )
    };
    let (neg, body) = match t.as_bytes().first() {
        Some(b'-') => (true, &t[1..]),
        Some(b'+') => (false, &t[1..]),
        _ => (false, t),
    };
    let (whole, frac) = match body.split_once('.') {
        Some((w, f)) => (w, f),
        None => (body, ""),
    };
    let digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    if (whole.is_empty() && frac.is_empty()) || !digits(whole) || !digits(frac) {
        return Err(bad());
    }
    if frac.len() > CLOCK_PPM_DECIMALS as usize {
        return Err(format!(
            "'{text}': at most {CLOCK_PPM_DECIMALS} decimals for a clock correction in ppm"
        ));
    }
    let whole = whole.trim_start_matches('0');
    let max_whole = MAX_CLOCK_PPM as u64;
    let too_big =
        || format!("--clock-ppm {text} is out of range (-{max_whole} to {max_whole} ppm)");
    if whole.len() > 6 {
        return Err(too_big());
    }
    let w: u64 = if whole.is_empty() {
        0
    } else {
        whole.parse().map_err(|_| bad())?
    };
    let mut f: u64 = 0;
    for i in 0..CLOCK_PPM_DECIMALS as usize {
        f = f * 10 + frac.as_bytes().get(i).map_or(0, |b| u64::from(b - b'0'));
    }
    let units = w * 1_000_000 + f;
    if units > max_whole * 1_000_000 {
        return Err(too_big());
    }
    let units = units as i64;
    Ok(ClockPpm {
        units: if neg { -units } else { units },
    })
}

impl ClockPpm {
    /// No correction.
    pub const ZERO: Self = Self { units: 0 };

    /// Whether there is no correction (the fixed engine runs, bit-identical to no option).
    pub fn is_zero(self) -> bool {
        self.units == 0
    }

    /// The correction in ppm.
    pub fn ppm(self) -> f64 {
        self.units as f64 * 1e-6
    }

    /// `(numerator, denominator)` of `true rate / header rate`.
    fn factor(self) -> (u128, u128) {
        ((SCALE as i128 + i128::from(self.units)) as u128, SCALE)
    }

    /// The input's true rate for a header rate, Hz (for reports and the engine's ratio).
    pub fn true_rate(self, header_rate: u32) -> f64 {
        f64::from(header_rate) * (1.0 + self.units as f64 * 1e-12)
    }

    /// The ratio the any-ratio engine runs at: output rate / true input rate.
    pub fn ratio(self, header_rate: u32, out_rate: u32) -> f64 {
        let (num, den) = self.factor();
        // out x den / (header x num), rounded once from exact integers where they fit f64.
        (f64::from(out_rate) * den as f64) / (f64::from(header_rate) * num as f64)
    }

    /// `(numerator, denominator)` of output positions per input position:
    /// `out_rate x 10^12 / (header_rate x (10^12 + units))`.
    fn scale(self, header_rate: u32, out_rate: u32) -> (u128, u128) {
        let (num, den) = self.factor();
        (u128::from(out_rate) * den, u128::from(header_rate) * num)
    }

    /// Output length for `frames` input frames: `ceil(frames x out_rate / true rate)`,
    /// exactly (every output whose time `m / out_rate` falls before the end of the input,
    /// `frames / true rate`). `u64::MAX` if it does not fit (it cannot for a WAV input).
    pub fn output_len(self, frames: u64, header_rate: u32, out_rate: u32) -> u64 {
        let (n, d) = self.scale(header_rate, out_rate);
        if d == 0 {
            return 0;
        }
        // frames < 2^64, out_rate < 2^24, n / out_rate <= 10^12 < 2^40: no overflow.
        let p = u128::from(frames) * n;
        u64::try_from(p.div_ceil(d)).unwrap_or(u64::MAX)
    }

    /// A sample position of the input moved to the output: the nearest integer to
    /// `pos x out_rate / true rate`, halves up, exactly.
    pub fn rescale(self, pos: u64, header_rate: u32, out_rate: u32) -> u128 {
        let (n, d) = self.scale(header_rate, out_rate);
        if d == 0 {
            return 0;
        }
        let p = u128::from(pos) * n;
        let (q, r) = (p / d, p % d);
        q + u128::from(r >= d - r)
    }
}

/// Whole rates searched on each side of the true input rate by [`ClockPpm::analysis_pair`].
pub const ANALYSIS_SEARCH: u32 = 4000;

impl ClockPpm {
    /// A pair of whole rates `(A, B)` for measuring the any-ratio engine under this
    /// correction with the sweep analyser (whose rates are whole hertz), and the relative
    /// difference of `B / A` from the exact ratio `out_rate / true rate`.
    ///
    /// The sweep is made at `A`, near the input's true rate, and the engine runs at the ratio
    /// `B / A` exactly, so the analysis is exact; `B / A` is the closest ratio among
    /// `A` within [`ANALYSIS_SEARCH`] Hz of the true rate and `B` the nearest whole rate for
    /// each. Without a correction it is the pair itself (difference 0).
    pub fn analysis_pair(self, in_rate: u32, out_rate: u32) -> (u32, u32, f64) {
        if self.is_zero() {
            return (in_rate, out_rate, 0.0);
        }
        // Exact ratio n / d = out x 10^12 / (in x (10^12 + units)).
        let (n, d) = self.scale(in_rate, out_rate);
        let centre = (u128::from(in_rate) * self.factor().0).div_ceil(SCALE) as i64;
        let mut best = (in_rate, out_rate, f64::INFINITY);
        for k in 0..=2 * i64::from(ANALYSIS_SEARCH) {
            // centre, centre + 1, centre - 1, centre + 2, ...
            let off = if k % 2 == 1 { (k + 1) / 2 } else { -(k / 2) };
            let a = centre + off;
            if a < 1 || a > i64::from(resample_core::MAX_RATE) {
                continue;
            }
            let a = a as u128;
            let p = a * n;
            let b = (p + d / 2) / d;
            if b < 1 || b > u128::from(resample_core::MAX_RATE) {
                continue;
            }
            // |b d - a n| / (a n), in f64 from exact integers.
            let diff = (b * d).abs_diff(p);
            let rel = diff as f64 / p as f64;
            if rel < best.2 {
                best = (a as u32, b as u32, rel);
            }
        }
        let (a, b, _) = best;
        let signed = (f64::from(b) * d as f64) / (f64::from(a) * n as f64) - 1.0;
        (a, b, signed)
    }
}

impl std::fmt::Display for ClockPpm {
    /// Signed, shortest exact decimal: "+500", "-12.25", "0".
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let sign = match self.units.signum() {
            1 => "+",
            -1 => "-",
            _ => "",
        };
        let a = self.units.unsigned_abs();
        let (w, fr) = (a / 1_000_000, a % 1_000_000);
        if fr == 0 {
            write!(f, "{sign}{w}")
        } else {
            let s = format!("{fr:06}");
            write!(f, "{sign}{w}.{}", s.trim_end_matches('0'))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_decimals_exactly_and_refuses_the_rest() {
        assert_eq!(parse_clock_ppm("500").unwrap().units, 500_000_000);
        assert_eq!(parse_clock_ppm("-35.5").unwrap().units, -35_500_000);
        assert_eq!(parse_clock_ppm("+0.000001").unwrap().units, 1);
        assert_eq!(parse_clock_ppm("1000").unwrap().units, 1_000_000_000);
        assert_eq!(
            parse_clock_ppm("-1000.000000").unwrap().units,
            -1_000_000_000
        );
        assert!(parse_clock_ppm("0").unwrap().is_zero());
        assert!(parse_clock_ppm("-0.0").unwrap().is_zero());
        assert_eq!(parse_clock_ppm(".5").unwrap().units, 500_000);
        for bad in [
            "",
            "+",
            "-",
            ".",
            "nan",
            "NaN",
            "inf",
            "-inf",
            "1e3",
            "1000.000001",
            "1001",
            "-1000.5",
            "12a",
            "0x10",
            "1.0000001",
            "99999999999999999999",
            "--5",
            "5 ppm",
        ] {
            assert!(parse_clock_ppm(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn prints_the_exact_value() {
        assert_eq!(parse_clock_ppm("500").unwrap().to_string(), "+500");
        assert_eq!(parse_clock_ppm("-12.250").unwrap().to_string(), "-12.25");
        assert_eq!(ClockPpm::ZERO.to_string(), "0");
    }

    #[test]
    fn output_length_is_the_exact_ceiling() {
        // +500 ppm at 48 kHz: true rate 48024 Hz exactly; 48024 frames last 1 s: 48000 out.
        let p = parse_clock_ppm("500").unwrap();
        assert_eq!(p.output_len(48_024, 48_000, 48_000), 48_000);
        assert_eq!(p.output_len(48_025, 48_000, 48_000), 48_001);
        assert_eq!(p.output_len(48_023, 48_000, 48_000), 48_000);
        assert_eq!(p.output_len(0, 48_000, 48_000), 0);
        // -1000 ppm at 44.1 kHz: true rate 44055.9 Hz; 440559 frames are 10 s exactly.
        let m = parse_clock_ppm("-1000").unwrap();
        assert_eq!(m.output_len(440_559, 44_100, 48_000), 480_000);
        // One input frame more or less moves the end by 48000 / 44055.9 = 1.09 frames.
        assert_eq!(m.output_len(440_560, 44_100, 48_000), 480_002);
        assert_eq!(m.output_len(440_558, 44_100, 48_000), 479_999);
        // No overflow at the largest frame count.
        assert!(p.output_len(u64::MAX, 10_000_000, 10_000_000) < u64::MAX);
        // Zero: the fixed engine's ceil(n L / M).
        assert_eq!(ClockPpm::ZERO.output_len(441, 44_100, 48_000), 480);
    }

    #[test]
    fn positions_rescale_to_the_nearest_halves_up() {
        let p = parse_clock_ppm("500").unwrap();
        // 48024 input frames at a true 48024 Hz are 1 s: 48000 output frames.
        assert_eq!(p.rescale(48_024, 48_000, 48_000), 48_000);
        // 1 input frame is 0.99950... output frames: 1.
        assert_eq!(p.rescale(1, 48_000, 48_000), 1);
        // Half way: 2 x 48024 / 2 ... position 24012 -> 24000 exactly; 1 more -> 24000.9995 -> 24001.
        assert_eq!(p.rescale(24_012, 48_000, 48_000), 24_000);
        assert_eq!(p.rescale(24_013, 48_000, 48_000), 24_001);
        assert_eq!(ClockPpm::ZERO.rescale(3, 2, 1), 2);
    }

    #[test]
    fn analysis_pair_is_close_to_the_exact_ratio() {
        assert_eq!(
            ClockPpm::ZERO.analysis_pair(44_100, 48_000),
            (44_100, 48_000, 0.0)
        );
        for ppm in ["500", "-250", "100", "-1000", "0.3", "1000"] {
            let p = parse_clock_ppm(ppm).unwrap();
            for (i, o) in [
                (44_100, 48_000),
                (48_000, 44_100),
                (48_000, 48_000),
                (8_000, 96_000),
            ] {
                let (a, b, e) = p.analysis_pair(i, o);
                let exact = p.ratio(i, o);
                let got = f64::from(b) / f64::from(a);
                assert!((got / exact - 1.0 - e).abs() < 1e-12, "{ppm} {i} {o}");
                // Far closer than a rounding of the output rate alone (0.5 / out), or, for a
                // correction too small for any pair near these rates (0.3 ppm between equal
                // rates: b = a), no further off than the header pair itself.
                let small = e.abs() <= p.ppm().abs() * 1e-6 * (1.0 + 1e-6);
                assert!(
                    e.abs() < 0.002 / f64::from(o) || small,
                    "{ppm} {i} {o}: {e}"
                );
                assert!((f64::from(a) - p.true_rate(i)).abs() <= 4001.0);
            }
        }
    }
}
