//! Parsing sample rates as users write them: `48000`, `48k`, `44.1k`, `44.1kHz`, `96 kHz`.

/// Parse a sample rate in Hz. Accepts an integer or decimal number, optionally followed by
/// `k`/`kHz` (thousands) or `Hz`, case-insensitive; the result must be a whole number of Hz.
pub fn parse_rate(text: &str) -> Result<u32, String> {
    let t = text.trim().to_ascii_lowercase().replace(' ', "");
    let (num, scale) = if let Some(n) = t.strip_suffix("khz") {
        (n, 1000.0)
    } else if let Some(n) = t.strip_suffix('k') {
        (n, 1000.0)
    } else if let Some(n) = t.strip_suffix("hz") {
        (n, 1.0)
    } else {
        (t.as_str(), 1.0)
    };
    let bad = || format!("'{text}' is not a sample rate (examples: 48000, 48k, 44.1k, 44.1kHz)");
    if num.is_empty() || !num.chars().all(|c| c.is_ascii_digit() || c == '.') {
        return Err(bad());
    }
    let value: f64 = num.parse().map_err(|_| bad())?;
    let hz = value * scale;
    if !hz.is_finite() || hz < 1.0 || hz > f64::from(resample_core::MAX_RATE) {
        return Err(format!(
            "'{text}' is out of range (1 Hz to {} Hz)",
            resample_core::MAX_RATE
        ));
    }
    let rounded = hz.round();
    if (hz - rounded).abs() > 1e-6 {
        // "44.1" for 44.1 kHz: a rate in kHz written without its unit.
        let khz = hz * 1000.0;
        if scale == 1.0
            && (khz - khz.round()).abs() < 1e-6
            && khz <= f64::from(resample_core::MAX_RATE)
        {
            return Err(format!(
                "'{text}' is not a whole number of Hz; for {} Hz write {}k",
                khz.round(),
                num
            ));
        }
        return Err(format!("'{text}' is not a whole number of Hz"));
    }
    Ok(rounded as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn accepts_the_usual_spellings() {
        assert_eq!(parse_rate("48000"), Ok(48_000));
        assert_eq!(parse_rate("48k"), Ok(48_000));
        assert_eq!(parse_rate("44.1k"), Ok(44_100));
        assert_eq!(parse_rate("44.1kHz"), Ok(44_100));
        assert_eq!(parse_rate("44.1 KHZ"), Ok(44_100));
        assert_eq!(parse_rate("22.05k"), Ok(22_050));
        assert_eq!(parse_rate("8000Hz"), Ok(8_000));
    }

    #[test]
    fn kilohertz_without_the_unit_gets_a_suggestion() {
        let e = parse_rate("44.1").unwrap_err();
        assert!(e.contains("for 44100 Hz write 44.1k"), "{e}");
        let e = parse_rate("22.05").unwrap_err();
        assert!(e.contains("write 22.05k"), "{e}");
        let e = parse_rate("44.1001k").unwrap_err();
        assert!(!e.contains("write"), "{e}");
    }

    #[test]
    fn refuses_nonsense() {
        for t in [
            "",
            "k",
            "fast",
            "-48k",
            "0",
            "44.1001k",
            "1e5",
            "nan",
            "99999999999",
        ] {
            assert!(parse_rate(t).is_err(), "{t}");
        }
    }
}
