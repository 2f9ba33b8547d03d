//! Small numeric helpers shared by all modules: deterministic sums and
//! counter-based random numbers.
//!
//! Floating-point addition is not associative, so a parallel sum whose
//! grouping depends on the thread count would change the last bits of a
//! result. [`par_sum`] fixes the grouping (chunks of [`CHUNK`] elements,
//! partial sums added in chunk order), so 1 and N threads give identical
//! bits.

use rayon::prelude::*;

/// Chunk length of the fixed-grouping parallel reductions.
pub const CHUNK: usize = 4096;

/// Sum in index order (sequential; deterministic).
pub fn ordered_sum(values: &[f64]) -> f64 {
    values.iter().sum()
}

/// Sum of `f(i)` for `i in 0..n` with a grouping that does not depend on the
/// number of threads.
pub fn par_sum<F>(n: usize, f: F) -> f64
where
    F: Fn(usize) -> f64 + Sync,
{
    let n_chunks = n.div_ceil(CHUNK);
    let partial: Vec<f64> = (0..n_chunks)
        .into_par_iter()
        .map(|c| {
            let start = c * CHUNK;
            let end = (start + CHUNK).min(n);
            let mut s = 0.0;
            for i in start..end {
                s += f(i);
            }
            s
        })
        .collect();
    partial.iter().sum()
}

/// The SplitMix64 finaliser (Steele, Lea & Flood 2014, "Fast splittable
/// pseudorandom number generators", OOPSLA): a bijective 64-bit mixer.
#[inline]
pub fn splitmix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A counter-based uniform number in `[0, 1)` for `(seed, stream, index)`.
///
/// Used for per-element draws (corner angles, contact angles) so that each
/// element's value is independent of evaluation order and thread count.
#[inline]
pub fn unit_hash(seed: u64, stream: u64, index: u64) -> f64 {
    let h = splitmix64(
        splitmix64(seed ^ stream.wrapping_mul(0xD1B5_4A32_D192_ED03))
            ^ index.wrapping_mul(0xA24B_AED4_963E_E407),
    );
    // 53 random bits into [0, 1).
    (h >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Standard normal CDF, `Φ(x) = erfc(−x/√2)/2` (pure-Rust `libm`, so the
/// same bits on every machine).
pub fn normal_cdf(x: f64) -> f64 {
    0.5 * libm::erfc(-x * std::f64::consts::FRAC_1_SQRT_2)
}

/// A standard normal number from two uniforms (Box & Muller 1958, Ann.
/// Math. Stat. 29:610–611).
pub fn box_muller(u1: f64, u2: f64) -> f64 {
    libm::sqrt(-2.0 * libm::log1p(-u1)) * libm::cos(2.0 * std::f64::consts::PI * u2)
}

/// Inverse of the standard normal CDF by safeguarded Newton iteration on
/// [`normal_cdf`] (bracketed, so it always converges; pure-Rust `libm`,
/// so the same bits on every machine).
pub fn inverse_normal_cdf(u: f64) -> f64 {
    if u <= 0.0 {
        return f64::NEG_INFINITY;
    }
    if u >= 1.0 {
        return f64::INFINITY;
    }
    let (mut lo, mut hi) = (-40.0f64, 40.0f64);
    let mut z = 0.0f64;
    let inv_sqrt_2pi = 1.0 / (2.0 * std::f64::consts::PI).sqrt();
    for _ in 0..200 {
        let f = normal_cdf(z) - u;
        if f == 0.0 {
            return z;
        }
        if f < 0.0 {
            lo = z;
        } else {
            hi = z;
        }
        let pdf = inv_sqrt_2pi * libm::exp(-0.5 * z * z);
        let mut next = z - f / pdf;
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if (next - z).abs() <= 1e-15 * (1.0 + z.abs()) {
            return next;
        }
        z = next;
    }
    z
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn par_sum_matches_fixed_grouping_for_any_thread_count() {
        let values: Vec<f64> = (0..100_000).map(|i| 1.0 / (1.0 + i as f64)).collect();
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| par_sum(values.len(), |i| values[i]));
        let two = rayon::ThreadPoolBuilder::new()
            .num_threads(2)
            .build()
            .unwrap()
            .install(|| par_sum(values.len(), |i| values[i]));
        assert_eq!(one.to_bits(), two.to_bits());
        // Harmonic number H_n = ln n + γ + 1/(2n) − … (analytic).
        let h = (100_000f64).ln() + 0.577_215_664_901_532_9 + 1.0 / 200_000.0;
        assert!((one - h).abs() < 1e-9);
    }

    #[test]
    fn unit_hash_is_uniform_in_mean() {
        // Mean of U(0,1) is 1/2, standard error 1/sqrt(12 n) (analytic).
        let n = 200_000;
        let mean: f64 = (0..n).map(|i| unit_hash(7, 3, i)).sum::<f64>() / n as f64;
        assert!((mean - 0.5).abs() < 5.0 / (12.0 * n as f64).sqrt());
        assert!((0..1000).all(|i| (0.0..1.0).contains(&unit_hash(1, 2, i))));
    }
}
