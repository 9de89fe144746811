//! Numbers for people: one home for how dB figures and measured values are printed, in
//! text and in JSON.

use serde_json::{json, Value};

/// A dB figure: two decimals, or "inf" / "-inf" for an unbounded value.
pub fn fmt_db(db: f64) -> String {
    if db.is_finite() {
        format!("{db:.2}")
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

/// A number for JSON: finite values as numbers, anything else as null.
pub fn num(v: f64) -> Value {
    if v.is_finite() {
        json!(v)
    } else {
        Value::Null
    }
}
