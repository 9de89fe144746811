//! Numbers for people: one home for how dB figures and measured values are printed, in
//! text (JSON records carry the full numbers: `report::json`).

/// `v` with `decimals` decimals, never "-0.00": a value that rounds to zero prints as zero.
pub fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => s,
    }
}

/// A dB figure: two decimals (never "-0.00"), or "inf" / "-inf" for an unbounded value.
pub fn fmt_db(db: f64) -> String {
    if db.is_finite() {
        fixed(db, 2)
    } else if db < 0.0 {
        "-inf".into()
    } else {
        "inf".into()
    }
}

/// A passband ripple of a design, dB: scientific below 1e-4, else four decimals.
pub fn fmt_ripple(db: f64) -> String {
    if db < 1e-4 {
        format!("{db:.2e}")
    } else {
        format!("{db:.4}")
    }
}

/// A small measured number in dB: scientific below 0.001, "inf" when unbounded.
pub fn small_db(v: f64) -> String {
    if !v.is_finite() {
        "inf".into()
    } else if v != 0.0 && v.abs() < 1e-3 {
        format!("{v:.2e}")
    } else {
        format!("{v:.4}")
    }
}

/// Hz with no decimals, or "not reached in the swept band".
pub fn hz(v: Option<f64>) -> String {
    v.map_or_else(
        || "not reached in the swept band".into(),
        |f| format!("{f:.0} Hz"),
    )
}

/// A number as people write it, for axes and labels: whole numbers without decimals
/// ("-10", "48000"), magnitudes under 0.001 in scientific notation with three significant
/// digits ("2.67e-6"), anything else with up to three significant decimals and no trailing
/// zeros ("0.5", "22.05"), never "-0".
pub fn plain(v: f64) -> String {
    if !v.is_finite() {
        return if v.is_nan() {
            "nan".into()
        } else if v < 0.0 {
            "-inf".into()
        } else {
            "inf".into()
        };
    }
    let a = v.abs();
    if a != 0.0 && a < 1e-3 {
        // "2.67e-6", "2e-6", "1.5e-6": the mantissa without trailing zeros.
        let s = format!("{v:.2e}");
        return match s.split_once('e') {
            Some((mant, exp)) => {
                let mant = mant.trim_end_matches('0').trim_end_matches('.');
                format!("{mant}e{exp}")
            }
            None => s,
        };
    }
    if (v - v.round()).abs() <= 1e-9 * a.max(1.0) {
        return fixed(v.round(), 0);
    }
    // Three significant digits below 1, up to three decimals above.
    let decimals = if a < 1.0 {
        (2.0 - a.log10().floor()).clamp(0.0, 6.0) as usize
    } else {
        3
    };
    let s = fixed(v, decimals);
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// A frequency for an axis: hertz below 1 kHz ("20", "500"), kilohertz with a "k" above
/// ("1k", "22.05k").
pub fn hz_short(v: f64) -> String {
    if v.abs() >= 1000.0 {
        format!("{}k", plain(v / 1000.0))
    } else {
        plain(v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_negative_zero() {
        assert_eq!(fixed(-0.0001, 3), "0.000");
        assert_eq!(fixed(-0.0, 2), "0.00");
        assert_eq!(fixed(-0.0006, 3), "-0.001");
        assert_eq!(fixed(-2.5e-9, 0), "0");
        assert_eq!(fmt_db(-0.001), "0.00");
        assert_eq!(fmt_db(-3.0), "-3.00");
        assert_eq!(small_db(-0.00001), "-1.00e-5");
        assert_eq!(fmt_ripple(0.0), "0.00e0");
    }

    #[test]
    fn plain_numbers() {
        assert_eq!(plain(-10.0), "-10");
        assert_eq!(plain(48_000.0), "48000");
        assert_eq!(plain(2.6666e-6), "2.67e-6");
        assert_eq!(plain(0.5), "0.5");
        assert_eq!(plain(22.05), "22.05");
        assert_eq!(plain(0.0123456), "0.0123");
        assert_eq!(plain(-0.0), "0");
        assert_eq!(plain(-1e-12), "-1e-12");
        assert_eq!(plain(1.5e-6), "1.5e-6");
        assert_eq!(plain(140.25), "140.25");
        assert_eq!(plain(f64::NEG_INFINITY), "-inf");
        assert_eq!(hz_short(22_050.0), "22.05k");
        assert_eq!(hz_short(1_000.0), "1k");
        assert_eq!(hz_short(200.0), "200");
    }
}
