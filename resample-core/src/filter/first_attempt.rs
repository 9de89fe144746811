//! Where the design search starts: Kaiser's length and beta formulas, asked for more than the
//! request by the shortfall measured designs showed, so that the first attempt meets the
//! request most of the time (each attempt designs and measures a whole prototype).
//!
//! Kaiser's formulas (J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh
//! window function", Proc. IEEE ISCAS 1974) are fits that grow optimistic at high
//! attenuation: a windowed sinc made for `T` dB measures `T - s(T)`. The table below is the
//! upper envelope of `s` measured on this crate's own designs: 16 rate pairs (44.1k <-> 48k,
//! 44.1k -> 16k, 48k -> 16k/8k, 96k/192k -> 44.1k, 96k -> 48k, 8k -> 48k, 22.05k -> 44.1k,
//! 44.1k -> 88.2k, 32k -> 48k, 16k -> 44.1k, 88.2k -> 48k, 48k -> 96k, 11.025k -> 48k) at
//! passband edges 0.8, 0.91 and 0.95 and 60 to 200 dB requested, every attempt of the search
//! (targets 55 to 216 dB) of prototypes with 16 or more phases. The first attempt asks for
//! `T` with `T - s(T) = A + FIRST_MARGIN_DB`. Prototypes with few phases (a ratio like 2/1)
//! often fall short by less, so their first attempt can overshoot; the search then tries one
//! shorter prototype ([`TRIM_OVER_DB`]) and keeps the shorter one when it meets the request.
//! `benches/design.rs` prints how often the first attempt is enough.

/// `(target dB, measured shortfall dB)`: the upper envelope of the shortfall of prototypes
/// designed by Kaiser's formulas for `target` (maximum over targets within 5 dB of the node).
const SHORTFALL: [(f64, f64); 17] = [
    (60.0, 0.16),
    (70.0, 0.31),
    (80.0, 0.50),
    (90.0, 0.50),
    (100.0, 0.50),
    (110.0, 0.67),
    (120.0, 1.71),
    (130.0, 2.30),
    (140.0, 3.40),
    (150.0, 4.45),
    (160.0, 5.51),
    (170.0, 7.00),
    (180.0, 8.11),
    (190.0, 9.72),
    (200.0, 10.86),
    (210.0, 12.10),
    (220.0, 13.80),
];

/// Aimed above the request on the first attempt (covers the envelope's own error).
pub(super) const FIRST_MARGIN_DB: f64 = 0.2;

/// A design that meets the request by more than this on its first attempt is tried once more
/// with a shorter prototype (the shorter one is kept if it also meets the request).
pub(super) const TRIM_OVER_DB: f64 = 1.5;

/// The measured shortfall envelope at `target` dB (linear between nodes, constant beyond).
fn shortfall(target: f64) -> f64 {
    let (first, last) = (SHORTFALL[0], SHORTFALL[SHORTFALL.len() - 1]);
    if target <= first.0 {
        return first.1;
    }
    if target >= last.0 {
        return last.1;
    }
    SHORTFALL
        .windows(2)
        .find(|w| target <= w[1].0)
        .map_or(last.1, |w| {
            let f = (target - w[0].0) / (w[1].0 - w[0].0);
            w[0].1 + f * (w[1].1 - w[0].1)
        })
}

/// The attenuation to ask Kaiser's formulas for on the first attempt, for `needed` dB.
pub(super) fn first_target(needed: f64) -> f64 {
    // T = needed + margin + s(T): s grows by at most 0.17 dB per dB, so the iteration
    // contracts; a dozen steps settle it far below a hundredth of a dB.
    let aim = needed + FIRST_MARGIN_DB;
    let mut t = aim;
    for _ in 0..12 {
        t = aim + shortfall(t);
    }
    t
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn envelope_is_continuous_and_grows_slower_than_the_target() {
        for w in SHORTFALL.windows(2) {
            let slope = (w[1].1 - w[0].1) / (w[1].0 - w[0].0);
            assert!(slope.abs() < 0.2, "{w:?}");
        }
        assert_eq!(shortfall(0.0), 0.16);
        assert_eq!(shortfall(300.0), 13.8);
        assert!((shortfall(145.0) - 3.925).abs() < 1e-12);
    }

    #[test]
    fn first_target_solves_its_equation() {
        for a in [20.0, 60.0, 100.0, 140.0, 160.5, 200.0] {
            let t = first_target(a);
            assert!(
                (t - shortfall(t) - a - FIRST_MARGIN_DB).abs() < 1e-6,
                "{a}: {t}"
            );
            assert!(t > a);
        }
    }
}
