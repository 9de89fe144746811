//! External check of two-stage conversions against scipy, stage by stage: each stage of our
//! plan, run alone by the engine our conversion uses for it, equals
//! `scipy.signal.resample_poly(x, up, down, window=taps)` with that stage's exported taps
//! fed with the previous stage's scipy output; and the whole conversion equals the scipy
//! chain cut to ceil(n L / M) frames. Vectors in `fixtures/stages/`, made by
//! `fixtures/make_stages.py` (numpy/scipy versions in its manifest).

use std::path::PathBuf;

use resample_core::{offline, FilterSpec, StageChoice};
use serde_json::Value;

fn fixtures() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../fixtures/stages")
}

fn read_f64(name: &str) -> Vec<f64> {
    let bytes = std::fs::read(fixtures().join(name)).expect("fixture file");
    bytes
        .chunks_exact(8)
        .map(|b| f64::from_le_bytes(b.try_into().expect("8 bytes")))
        .collect()
}

/// Sum of `h[n] (n + 1)` (the script's fingerprint), compensated.
fn fingerprint(h: &[f64]) -> f64 {
    let (mut fp, mut comp) = (0.0_f64, 0.0_f64);
    for (n, h) in h.iter().enumerate() {
        let v = h * (n + 1) as f64;
        let t = fp + v;
        comp += if fp.abs() >= v.abs() {
            (fp - t) + v
        } else {
            (v - t) + fp
        };
        fp = t;
    }
    fp + comp
}

fn worst(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max)
}

/// Source: scipy.signal.resample_poly (source read: y[m] = L sum_k x[k] h[m M - k L + half]
/// for odd symmetric taps, zero delay) applied per stage; the polyphase identity of
/// Crochiere & Rabiner, Proc. IEEE 69(3), 1981. Tolerance 1e-12 at full scale 1.0.
#[test]
fn every_stage_matches_scipy_resample_poly() {
    let text = std::fs::read_to_string(fixtures().join("manifest.json"))
        .expect("fixtures/stages/manifest.json (run fixtures/make_stages.py)");
    let m: Value = serde_json::from_str(&text).expect("manifest is JSON");
    let db = m["stopband_db"].as_f64().expect("stopband_db");
    let mut cases = 0;
    for pair in m["pairs"].as_array().expect("pairs") {
        let a = pair["in_rate"].as_u64().expect("in_rate") as u32;
        let b = pair["out_rate"].as_u64().expect("out_rate") as u32;
        let plan = FilterSpec::new(a, b)
            .stopband_db(db)
            .stage_choice(StageChoice::Two)
            .plan()
            .unwrap();
        let stages = pair["stages"].as_array().expect("stages");
        assert_eq!(plan.stages().len(), stages.len(), "{a} -> {b}");
        for (i, (d, s)) in plan.stages().iter().zip(stages).enumerate() {
            // The same taps the script was given (the design has not changed).
            assert_eq!(d.taps().len() as u64, s["taps_len"].as_u64().unwrap());
            let fp = s["taps_fingerprint"].as_f64().unwrap();
            assert!(
                (fingerprint(d.taps()) - fp).abs() <= 1e-9 * fp.abs().max(1.0),
                "{a} -> {b} stage {i}: taps changed; regenerate fixtures/stages"
            );
            assert_eq!(
                s["half_band"].as_bool(),
                Some(plan.half_band_stage() == Some(i))
            );
        }
        for case in pair["cases"].as_array().expect("cases") {
            let name = case["name"].as_str().expect("name");
            let x = read_f64(&format!("{name}.in.f64"));
            let mut prev = x.clone();
            for i in 0..plan.stages().len() {
                let want = read_f64(&format!("{name}.stage{i}.f64"));
                let got = offline::convert_stage_planar(&plan, i, &[prev.as_slice()])
                    .expect("stage")
                    .expect("converted")
                    .remove(0);
                let w = worst(&got, &want);
                assert!(w < 1e-12, "{name} stage {i}: {w:e}");
                prev = want;
            }
            let want = read_f64(&format!("{name}.out.f64"));
            let got = offline::convert_plan(&plan, &x);
            let w = worst(&got, &want);
            assert!(w < 1e-12, "{name}: {w:e}");
            cases += 1;
        }
    }
    assert!(cases >= 12, "{cases} cases");
}
