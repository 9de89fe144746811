//! Print the stages `FilterSpec::plan` designs for a rate pair, as one JSON object: per
//! stage the rates, the reduced factors, the delay and the prototype taps (full precision),
//! and which stage is the half-band one. Used by `fixtures/make_stages.py` to check every
//! stage against `scipy.signal.resample_poly`.
//!
//! `cargo run --release -p resample-core --example export_stages -- 192000 44100 120 [two|auto|single]`

use resample_core::{FilterSpec, StageChoice};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    if args.len() < 3 {
        return Err("usage: export_stages IN_RATE OUT_RATE STOPBAND_DB [two|auto|single]".into());
    }
    let (a, b, db): (u32, u32, f64) = (args[0].parse()?, args[1].parse()?, args[2].parse()?);
    let choice = match args.get(3).map(String::as_str) {
        None | Some("two") => StageChoice::Two,
        Some("auto") => StageChoice::Auto,
        Some("single") => StageChoice::Single,
        Some(other) => return Err(format!("unknown stage choice {other}").into()),
    };
    let plan = FilterSpec::new(a, b)
        .stopband_db(db)
        .stage_choice(choice)
        .plan()?;
    let stages: Vec<serde_json::Value> = plan
        .stages()
        .iter()
        .enumerate()
        .map(|(i, d)| {
            let r = d.report();
            serde_json::json!({
                "in_rate": d.pair().in_rate(),
                "out_rate": d.pair().out_rate(),
                "up": d.pair().up(),
                "down": d.pair().down(),
                "delay": d.delay(),
                "half_band": plan.half_band_stage() == Some(i),
                "measured_stopband_db": r.measured_stopband_db,
                "taps": d.taps(),
            })
        })
        .collect();
    let out = serde_json::json!({
        "in_rate": a,
        "out_rate": b,
        "requested_stopband_db": db,
        "stages": stages,
    });
    println!("{out}");
    Ok(())
}
