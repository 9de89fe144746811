//! Why a conversion measures below its request (`tradeoff`'s note column, `verify`'s note
//! line), in words that say what to try next.

use resample_core::measure;

/// Why a measurement reads below its request, with a hint (`None` when it meets it):
/// the design itself falls short, the probes found the conversion's arithmetic, or the
/// sweep read the strongest component (a slower sweep resolves it more finely).
pub fn shortfall(m: &measure::Measurement, designed: f64, requested: f64) -> Option<String> {
    if m.rejection_db >= requested {
        return None;
    }
    let from_probes = m
        .edge
        .as_ref()
        .is_some_and(|e| (e.time_s - m.worst.time_s).abs() < 1e-9);
    Some(if designed < requested {
        format!(
            "the design itself reaches {designed:.1} dB (arithmetic precision of the design); ask for more"
        )
    } else if from_probes {
        format!(
            "arithmetic precision: the edge probes read {:.1} dB at {:.0} Hz where the design's response has {designed:.1} dB; the conversion's arithmetic adds it",
            m.rejection_db, m.worst.unwanted_hz
        )
    } else {
        format!(
            "sweep resolution: the sweep read its strongest component at {:.0} Hz; a longer --seconds sweeps more slowly and resolves it more finely",
            m.worst.unwanted_hz
        )
    })
}
