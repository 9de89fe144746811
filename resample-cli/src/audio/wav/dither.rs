//! TPDF dither: the sum of two independent uniform variables of one LSB each (triangular
//! density, 2 LSB peak to peak), from a fixed seed so the same input always gives the same
//! bytes.

/// Seed of every dither sequence rerate makes: conversions are reproducible byte for byte.
pub const DITHER_SEED: u64 = 0x7265_7261_7465_0001;

/// Whether requantization to integers adds dither.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Dither {
    /// Triangular-PDF dither of 2 LSB peak to peak (the default for integer output).
    #[default]
    Tpdf,
    /// Plain rounding to the nearest code.
    None,
}

/// A deterministic TPDF dither source (SplitMix64 generator; G. L. Steele, D. Lea,
/// C. H. Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
#[derive(Debug, Clone)]
pub struct Tpdf {
    state: u64,
}

impl Tpdf {
    /// A source starting from `seed`.
    pub fn new(seed: u64) -> Self {
        Self { state: seed }
    }

    fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A uniform value in `[0, 1)` with 53 random bits.
    fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// The next dither value in LSB: triangular on (-1, 1), mean 0, variance 1/6.
    pub fn next_lsb(&mut self) -> f64 {
        self.uniform() - self.uniform()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_sequence() {
        let mut a = Tpdf::new(DITHER_SEED);
        let mut b = Tpdf::new(DITHER_SEED);
        for _ in 0..1000 {
            assert_eq!(a.next_lsb().to_bits(), b.next_lsb().to_bits());
        }
    }

    #[test]
    fn triangular_moments() {
        // The difference of two independent U(0,1) variables is triangular on (-1, 1) with
        // mean 0 and variance 1/6 (standard result, any probability text).
        let mut d = Tpdf::new(1);
        let n = 400_000;
        let (mut s, mut s2, mut inside_half) = (0.0, 0.0, 0usize);
        for _ in 0..n {
            let v = d.next_lsb();
            assert!(v > -1.0 && v < 1.0);
            s += v;
            s2 += v * v;
            if v.abs() < 0.5 {
                inside_half += 1;
            }
        }
        let mean = s / n as f64;
        let var = s2 / n as f64 - mean * mean;
        assert!(mean.abs() < 0.005, "mean {mean}");
        assert!((var - 1.0 / 6.0).abs() < 0.003, "variance {var}");
        // P(|v| < 1/2) = 3/4 for the triangle.
        let p = inside_half as f64 / n as f64;
        assert!((p - 0.75).abs() < 0.005, "P(|v|<1/2) {p}");
    }
}
