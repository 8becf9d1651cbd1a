//! A counter-based random stream: every draw is a pure function of
//! (seed, stream, index, draw number), so noise does not depend on the
//! order points are visited, the number of threads, the slab size or how
//! the domain is split.
//!
//! Owns: the hash and the uniform and Gaussian variates built on it. Does
//! not own what a draw is keyed on (see `kinds`).
//!
//! The hash is the SplitMix64 output function (Steele, Lea & Flood 2014,
//! "Fast splittable pseudorandom number generators", OOPSLA; constants of
//! its reference implementation) applied in rounds to the key, in the
//! counter-based style of Salmon, Moraes, Dror & Shaw 2011, "Parallel random
//! numbers: as easy as 1, 2, 3" (SC'11): no state is carried from draw to
//! draw.

/// The SplitMix64 finaliser of `x + γ` (γ the golden-ratio increment).
fn mix(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A random stream: a seed and a stream number (which perturbation and
/// which field), hashed once.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stream {
    key: u64,
}

impl Stream {
    /// The stream of `seed` and `stream`.
    pub fn new(seed: u64, stream: u64) -> Stream {
        Stream {
            key: mix(mix(seed) ^ stream.rotate_left(32)),
        }
    }

    /// 64 random bits for (`index`, `draw`).
    pub fn bits(self, index: u64, draw: u64) -> u64 {
        mix(mix(self.key ^ index) ^ draw.wrapping_mul(0xD6E8_FEB8_6659_FD93))
    }

    /// A uniform variate in [0, 1) with 53 random bits.
    pub fn unit(self, index: u64, draw: u64) -> f64 {
        (self.bits(index, draw) >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform variate in [−1, 1): mean 0, variance 1/3.
    pub fn uniform(self, index: u64, draw: u64) -> f64 {
        2.0 * self.unit(index, draw) - 1.0
    }

    /// A standard normal variate by the Box–Muller transform (Box & Muller
    /// 1958, Ann. Math. Statist. 29, 610) of draws 2·`draw` and 2·`draw`+1.
    pub fn normal(self, index: u64, draw: u64) -> f64 {
        // u1 in (0, 1] so that the logarithm is finite.
        let u1 = 1.0 - self.unit(index, 2 * draw);
        let u2 = self.unit(index, 2 * draw + 1);
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn draws_are_functions_of_their_key() {
        let s = Stream::new(42, 1);
        assert_eq!(s.bits(7, 0), Stream::new(42, 1).bits(7, 0));
        assert_ne!(s.bits(7, 0), s.bits(8, 0));
        assert_ne!(s.bits(7, 0), s.bits(7, 1));
        assert_ne!(s.bits(7, 0), Stream::new(43, 1).bits(7, 0));
        assert_ne!(s.bits(7, 0), Stream::new(42, 2).bits(7, 0));
    }

    #[test]
    fn uniform_bits_are_balanced() {
        // Each of the 64 output bits is set about half the time: over n
        // draws the count is Binomial(n, 1/2), σ = √n/2; 6σ bounds
        // (common practice, no source).
        let s = Stream::new(1, 0);
        let n = 20_000u64;
        let mut counts = [0u64; 64];
        for i in 0..n {
            let b = s.bits(i, 0);
            for (k, c) in counts.iter_mut().enumerate() {
                *c += (b >> k) & 1;
            }
        }
        let sigma = (n as f64).sqrt() / 2.0;
        for c in counts {
            assert!((c as f64 - n as f64 / 2.0).abs() < 6.0 * sigma, "{c}");
        }
    }
}
