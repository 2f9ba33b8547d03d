//! Weighted isotonic regression by the pool-adjacent-violators algorithm,
//! the step of the builder that makes a column monotone.

/// Weighted isotonic regression (pool-adjacent-violators; Ayer et al.
/// 1955): the non-decreasing sequence `z` minimising `Σ w_i (z_i − y_i)²`.
///
/// `y` and `w` have equal lengths; weights must be positive (a shorter `w`
/// or a non-positive weight is treated as weight 1).
pub fn isotonic_non_decreasing(y: &[f64], w: &[f64]) -> Vec<f64> {
    // Blocks of pooled values: (weighted sum, total weight, count).
    let mut blocks: Vec<(f64, f64, usize)> = Vec::with_capacity(y.len());
    for (i, &v) in y.iter().enumerate() {
        let wi = w.get(i).copied().filter(|x| *x > 0.0).unwrap_or(1.0);
        blocks.push((wi * v, wi, 1));
        while blocks.len() >= 2 {
            let b = blocks[blocks.len() - 1];
            let a = blocks[blocks.len() - 2];
            if a.0 / a.1 > b.0 / b.1 {
                blocks.pop();
                let last = blocks.len() - 1;
                blocks[last] = (a.0 + b.0, a.1 + b.1, a.2 + b.2);
            } else {
                break;
            }
        }
    }
    let mut out = Vec::with_capacity(y.len());
    for (s, wt, c) in blocks {
        out.extend(std::iter::repeat_n(s / wt, c));
    }
    out
}

/// Weighted isotonic regression onto non-increasing sequences (the
/// non-decreasing regression of `−y`, negated).
pub fn isotonic_non_increasing(y: &[f64], w: &[f64]) -> Vec<f64> {
    let neg: Vec<f64> = y.iter().map(|v| -v).collect();
    isotonic_non_decreasing(&neg, w)
        .into_iter()
        .map(|v| -v)
        .collect()
}
