//! Flags of `rerate tradeoff`, and its list of attenuations.

use std::path::PathBuf;

use clap::Args;

use super::rate::parse_rate;
use super::PhaseArg;

/// A list of attenuations, dB.
#[derive(Debug, Clone, PartialEq)]
pub struct DbList(pub Vec<f64>);

/// `FROM:TO:STEP` (inclusive), a comma list, or one value.
pub fn parse_db_range(s: &str) -> Result<DbList, String> {
    let num = |t: &str| {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("'{t}' is not a number of dB"))
    };
    let parts: Vec<&str> = s.split(':').collect();
    let list = match parts.as_slice() {
        [from, to, step] => {
            let (a, b, d) = (num(from)?, num(to)?, num(step)?);
            if d <= 0.0 || b < a {
                return Err("FROM:TO:STEP needs FROM <= TO and STEP > 0".into());
            }
            let n = ((b - a) / d + 1e-9).floor() as usize + 1;
            if n > 64 {
                return Err(format!("{n} designs: at most 64 per table"));
            }
            (0..n).map(|i| a + d * i as f64).collect()
        }
        [one] => one.split(',').map(num).collect::<Result<Vec<_>, _>>()?,
        _ => return Err("use FROM:TO:STEP or a comma list".into()),
    };
    if list.is_empty() {
        return Err("no attenuation given".into());
    }
    Ok(DbList(list))
}

/// Options of `rerate tradeoff`.
#[derive(Debug, Args)]
pub struct TradeoffArgs {
    /// Input sample rate (48000, 48k, 44.1k, 44.1kHz).
    #[arg(long, value_parser = parse_rate)]
    pub in_rate: u32,
    /// Output sample rate.
    #[arg(long, value_parser = parse_rate)]
    pub out_rate: u32,
    /// Stopband attenuations to design for, dB: FROM:TO:STEP, or a comma list.
    #[arg(long, default_value = "60:180:20", value_parser = parse_db_range)]
    pub stopband_db: DbList,
    /// Passband edge as a fraction of the lower Nyquist frequency (0.5 to 0.995).
    #[arg(long, default_value_t = resample_core::limits::DEFAULT_PASSBAND)]
    pub passband: f64,
    /// Filter phase of the designs: linear (every frequency delayed alike) or minimum (a
    /// fraction of the delay, varying with frequency).
    #[arg(long, value_enum, default_value_t = PhaseArg::Linear, conflicts_with = "both_phases")]
    pub phase: PhaseArg,
    /// Design and measure every attenuation in both phases, side by side.
    #[arg(long)]
    pub both_phases: bool,
    /// Run one polyphase stage even where `convert` would run two stages (a half-band 2:1
    /// or 1:2 stage beside the polyphase stage): for A/B comparisons.
    #[arg(long)]
    pub one_stage: bool,
    /// The input's true clock ran PPM parts per million fast (negative: slow), -1000 to
    /// 1000, up to 6 decimals: its true rate is the header rate x (1 + PPM x 1e-6). Runs the
    /// any-ratio engine; 0 (the default) runs the fixed-ratio engine.
    #[arg(long, value_name = "PPM", value_parser = crate::clock::parse_clock_ppm, allow_negative_numbers = true, default_value = "0")]
    pub clock_ppm: crate::clock::ClockPpm,
    /// Sweep duration for the quality measurement, seconds.
    #[arg(long, default_value_t = 4.0)]
    pub seconds: f64,
    /// Seconds of audio converted to time each method.
    #[arg(long, default_value_t = 5.0)]
    pub speed_seconds: f64,
    /// Leave out the baseline methods.
    #[arg(long)]
    pub no_baselines: bool,
    /// Print the rows as JSON.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print the rows as CSV.
    #[arg(long)]
    pub csv: bool,
    /// Draw rejection, speed and latency against taps per phase to FILE (.png or .svg).
    #[arg(long, value_name = "FILE", value_parser = super::parse_plot_path)]
    pub plot: Option<PathBuf>,
    /// Overwrite FILE given to --plot if it exists.
    #[arg(long)]
    pub force: bool,
}

impl TradeoffArgs {
    /// The phases to design, in table order.
    pub fn phases(&self) -> Vec<PhaseArg> {
        if self.both_phases {
            vec![PhaseArg::Linear, PhaseArg::Minimum]
        } else {
            vec![self.phase]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_parse() {
        assert_eq!(
            parse_db_range("60:180:20").unwrap().0,
            vec![60.0, 80.0, 100.0, 120.0, 140.0, 160.0, 180.0]
        );
        assert_eq!(parse_db_range("90,120").unwrap().0, vec![90.0, 120.0]);
        assert_eq!(parse_db_range("100").unwrap().0, vec![100.0]);
        for bad in ["", "a", "60:40:10", "60:80:0", "1:2", "0:1000:1", "nan"] {
            assert!(parse_db_range(bad).is_err(), "{bad}");
        }
    }
}
