//! Per-element clay (microporosity) fractions: a spread around the mean
//! `clay_fraction`, optionally tied to element size.
//!
//! With `clay_fraction_spread = w > 0`, the clay volume fraction of each
//! element (pore or throat) is drawn uniformly from `[f − w, f + w]`
//! (`f = clay_fraction`), and the element receives `V_clay = f_e/(1 − f_e)
//! V`. With `clay_size_correlation = ρ ≠ 0` the draw is tied to the
//! element's inscribed radius through a Gaussian copula: the elements
//! (pores and throats together) are ranked by radius, smallest first, rank
//! `k` of `n` gets the normal score `z = Φ⁻¹(1 − (k + ½)/n)`, and
//!
//! `f_e = f − w + 2w Φ(ρ z + √(1 − ρ²) N_e)`
//!
//! with `N_e` standard normal (Box & Muller 1958, Ann. Math. Stat.
//! 29:610–611) from counter-based draws. `ρ z + √(1 − ρ²) N` is standard
//! normal, so the fractions keep the uniform law whatever `ρ`; `ρ > 0`
//! puts more clay in smaller elements. The rank correlation between `f_e`
//! and the radius is then `−(6/π) asin(ρ/2)` (the Spearman correlation of
//! a bivariate normal, Kruskal 1958, J. Am. Stat. Assoc. 53:814–861), up
//! to the discreteness of the scores. Ties of radius (regular mode) are
//! broken by a random draw, not by position.
//!
//! Everything is a pure function of the seed, the element index and the
//! radii (the ranking is a sort under a total order), so the result does
//! not depend on the thread count.

use rayon::prelude::*;

use super::LatticeSpec;
use crate::network::{Pores, Throats};
use crate::numeric::{box_muller, inverse_normal_cdf, normal_cdf, unit_hash};

/// Stream of the clay draws (two per element with a size correlation,
/// one without).
const STREAM_CLAY: u64 = 0x636c_6179_0001;
/// Stream of the tie-breaking draws of the size ranking.
const STREAM_CLAY_TIE: u64 = 0x636c_6179_0002;

/// Replaces the clay volumes of `pores` and `throats` by per-element
/// fractions (module documentation) when `spec.clay_fraction_spread > 0`;
/// leaves them untouched otherwise (the uniform fraction of the old
/// generator, bit for bit).
pub fn spread_clay(spec: &LatticeSpec, pores: &mut Pores, throats: &mut Throats) {
    let w = spec.clay_fraction_spread;
    if w <= 0.0 {
        return;
    }
    let lo = spec.clay_fraction - w;
    let rho = spec.clay_size_correlation;
    let seed = spec.seed;
    let np = pores.radius.len();
    let radius: Vec<f64> = pores
        .radius
        .iter()
        .chain(throats.radius.iter())
        .copied()
        .collect();
    let n = radius.len();
    let z: Vec<f64> = if rho != 0.0 {
        let tie = |e: u32| unit_hash(seed, STREAM_CLAY_TIE, e as u64);
        let mut order: Vec<u32> = (0..n as u32).collect();
        order.par_sort_unstable_by(|&a, &b| {
            radius[a as usize]
                .total_cmp(&radius[b as usize])
                .then(tie(a).total_cmp(&tie(b)))
                .then(a.cmp(&b))
        });
        let scores: Vec<f64> = (0..n)
            .into_par_iter()
            .map(|k| inverse_normal_cdf(1.0 - (k as f64 + 0.5) / n as f64))
            .collect();
        let mut z = vec![0.0; n];
        for (k, &e) in order.iter().enumerate() {
            z[e as usize] = scores[k];
        }
        z
    } else {
        Vec::new()
    };
    let c = (1.0 - rho * rho).max(0.0).sqrt();
    let fraction = |e: usize| {
        let u = if rho == 0.0 {
            unit_hash(seed, STREAM_CLAY, e as u64)
        } else {
            let g = box_muller(
                unit_hash(seed, STREAM_CLAY, 2 * e as u64),
                unit_hash(seed, STREAM_CLAY, 2 * e as u64 + 1),
            );
            normal_cdf(rho * z[e] + c * g)
        };
        lo + 2.0 * w * u
    };
    pores
        .clay_volume
        .par_iter_mut()
        .zip(pores.volume.par_iter())
        .enumerate()
        .for_each(|(e, (cl, v))| {
            let f = fraction(e);
            *cl = f / (1.0 - f) * v;
        });
    throats
        .clay_volume
        .par_iter_mut()
        .zip(throats.volume.par_iter())
        .enumerate()
        .for_each(|(t, (cl, v))| {
            let f = fraction(np + t);
            *cl = f / (1.0 - f) * v;
        });
}
