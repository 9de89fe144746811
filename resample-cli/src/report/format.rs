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
}
