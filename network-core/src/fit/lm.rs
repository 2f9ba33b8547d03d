//! A small dense Levenberg–Marquardt least-squares solver for the model
//! fits of [`crate::fit`] (a handful of parameters, tens to thousands of
//! residuals).
//!
//! Minimises `½ Σ r_i(p)²` with the Levenberg (1944, Q. Appl. Math.
//! 2:164–168) – Marquardt (1963, J. SIAM 11:431–441) damped Gauss–Newton
//! step `(JᵀJ + μ diag(JᵀJ)) δ = −Jᵀr`, the damping update of Nielsen
//! (1999, IMM-REP-1999-05, Technical University of Denmark), and a
//! central-difference Jacobian. Hand-written because the problems are tiny
//! (≤ 5 parameters) and a general optimisation crate would bring a linear
//! algebra stack for a 5 × 5 solve.

/// Options of [`minimise`].
#[derive(Clone, Copy, Debug)]
pub(crate) struct LmOptions {
    /// Maximum number of Jacobian evaluations (outer iterations).
    pub max_iterations: usize,
    /// Stop when an accepted step changes every parameter by less than
    /// `x_tol · (|p| + 1)` (the parameters here are logarithms or of order
    /// one, so the scale is absolute near zero and relative far from it).
    pub x_tol: f64,
    /// Stop when an accepted step reduces the cost by a relative amount below
    /// `f_tol` (both actual and predicted reduction).
    pub f_tol: f64,
    /// Stop when the cosine between the residual vector and every Jacobian
    /// column is below `g_tol` (the gradient test of MINPACK, Moré 1978).
    pub g_tol: f64,
}

impl Default for LmOptions {
    fn default() -> Self {
        LmOptions {
            max_iterations: 400,
            x_tol: 1e-12,
            f_tol: 1e-15,
            g_tol: 1e-12,
        }
    }
}

/// Outcome of [`minimise`].
#[derive(Clone, Debug)]
pub(crate) struct LmOutcome {
    /// Parameters at the best point found.
    pub params: Vec<f64>,
    /// `Σ r_i²` at `params`.
    pub sum_sq: f64,
    /// Outer iterations used.
    pub iterations: usize,
    /// Whether a convergence test was met (rather than the iteration cap).
    pub converged: bool,
    /// `(JᵀJ)⁻¹` at `params`, row-major, when `JᵀJ` is invertible.
    pub jtj_inverse: Option<Vec<f64>>,
}

/// Residual function: writes `r(p)` into the slice, returns `false` if the
/// residuals cannot be evaluated at `p` (the step is then rejected).
pub(crate) trait Residuals {
    /// Number of residuals.
    fn len(&self) -> usize;
    /// Evaluate `r(p)` into `out` (length [`Residuals::len`]).
    fn eval(&self, p: &[f64], out: &mut [f64]) -> bool;
}

impl<F> Residuals for (usize, F)
where
    F: Fn(&[f64], &mut [f64]) -> bool,
{
    fn len(&self) -> usize {
        self.0
    }
    fn eval(&self, p: &[f64], out: &mut [f64]) -> bool {
        (self.1)(p, out) && out.iter().all(|v| v.is_finite())
    }
}

/// Minimise `Σ r_i(p)²` from `p0`. Returns `None` only if `r(p0)` cannot be
/// evaluated.
pub(crate) fn minimise<R: Residuals>(res: &R, p0: &[f64], opts: LmOptions) -> Option<LmOutcome> {
    let n = p0.len();
    let m = res.len();
    let mut p = p0.to_vec();
    let mut r = vec![0.0; m];
    if !res.eval(&p, &mut r) {
        return None;
    }
    let mut cost = sum_sq(&r);
    let mut jac = vec![0.0; m * n]; // column-major: column j at j*m..(j+1)*m
    let mut r_plus = vec![0.0; m];
    let mut r_minus = vec![0.0; m];
    let mut r_trial = vec![0.0; m];
    let mut mu = 1e-3;
    let mut nu = 2.0;
    let mut converged = false;
    let mut iterations = 0;
    let mut need_jacobian = true;
    let mut a = vec![0.0; n * n];
    let mut g = vec![0.0; n];

    while iterations < opts.max_iterations {
        if cost == 0.0 {
            converged = true;
            break;
        }
        if need_jacobian {
            iterations += 1;
            if !jacobian(res, &p, &mut jac, &mut r_plus, &mut r_minus) {
                break;
            }
            normal_equations(&jac, &r, m, n, &mut a, &mut g);
            // Gradient (cosine) test.
            let r_norm = cost.sqrt();
            let cos_max = (0..n)
                .map(|j| {
                    let col = a[j * n + j].sqrt();
                    if col > 0.0 {
                        g[j].abs() / (col * r_norm)
                    } else {
                        0.0
                    }
                })
                .fold(0.0, f64::max);
            if cos_max <= opts.g_tol {
                converged = true;
                break;
            }
            need_jacobian = false;
        }
        // Damped system (Marquardt scaling).
        let mut lhs = a.clone();
        let diag_max = (0..n).map(|j| a[j * n + j]).fold(0.0, f64::max);
        let floor = (diag_max * 1e-15).max(f64::MIN_POSITIVE);
        for j in 0..n {
            lhs[j * n + j] += mu * a[j * n + j].max(floor);
        }
        let rhs: Vec<f64> = g.iter().map(|v| -v).collect();
        let Some(delta) = solve(&lhs, &rhs, n) else {
            mu *= nu;
            nu *= 2.0;
            if !mu.is_finite() || mu > 1e300 {
                break;
            }
            continue;
        };
        let trial: Vec<f64> = p.iter().zip(&delta).map(|(x, d)| x + d).collect();
        let ok = res.eval(&trial, &mut r_trial);
        let trial_cost = if ok { sum_sq(&r_trial) } else { f64::INFINITY };
        // Predicted reduction of Σr²: δᵀ(μ D δ − g) (twice ½ δᵀ(μDδ − g)).
        let predicted: f64 = (0..n)
            .map(|j| delta[j] * (mu * a[j * n + j].max(floor) * delta[j] - g[j]))
            .sum();
        if ok && trial_cost < cost {
            let actual = cost - trial_cost;
            let rho = if predicted > 0.0 {
                actual / predicted
            } else {
                1.0
            };
            let small_step = delta
                .iter()
                .zip(&trial)
                .all(|(d, x)| d.abs() <= opts.x_tol * (x.abs() + 1.0));
            let small_reduction = actual <= opts.f_tol * cost && predicted <= opts.f_tol * cost;
            p = trial;
            std::mem::swap(&mut r, &mut r_trial);
            cost = trial_cost;
            mu *= (1.0 - (2.0 * rho - 1.0).powi(3)).max(1.0 / 3.0);
            nu = 2.0;
            need_jacobian = true;
            if small_step || small_reduction {
                converged = true;
                break;
            }
        } else {
            // A rejected step too small to matter means we are at the
            // floating-point minimum.
            if delta
                .iter()
                .zip(&p)
                .all(|(d, x)| d.abs() <= 4.0 * f64::EPSILON * (x.abs() + 1.0))
            {
                converged = true;
                break;
            }
            mu *= nu;
            nu *= 2.0;
            if !mu.is_finite() || mu > 1e300 {
                break;
            }
        }
    }

    // Covariance factor at the final point.
    let jtj_inverse = if jacobian(res, &p, &mut jac, &mut r_plus, &mut r_minus) {
        normal_equations(&jac, &r, m, n, &mut a, &mut g);
        invert(&a, n)
    } else {
        None
    };
    Some(LmOutcome {
        params: p,
        sum_sq: cost,
        iterations,
        converged,
        jtj_inverse,
    })
}

fn sum_sq(r: &[f64]) -> f64 {
    r.iter().map(|v| v * v).sum()
}

/// Central-difference Jacobian, column-major. Step `h_j = ε^{1/3} max(1, |p_j|)`.
fn jacobian<R: Residuals>(
    res: &R,
    p: &[f64],
    jac: &mut [f64],
    r_plus: &mut [f64],
    r_minus: &mut [f64],
) -> bool {
    let m = res.len();
    let mut q = p.to_vec();
    for j in 0..p.len() {
        let h = 6.0e-6 * p[j].abs().max(1.0);
        q[j] = p[j] + h;
        let up = res.eval(&q, r_plus);
        q[j] = p[j] - h;
        let down = res.eval(&q, r_minus);
        q[j] = p[j];
        let col = &mut jac[j * m..(j + 1) * m];
        match (up, down) {
            (true, true) => {
                for i in 0..m {
                    col[i] = (r_plus[i] - r_minus[i]) / (2.0 * h);
                }
            }
            (true, false) | (false, true) => {
                // One-sided difference at the edge of the domain.
                let mut r0 = vec![0.0; m];
                if !res.eval(p, &mut r0) {
                    return false;
                }
                let (other, sign) = if up {
                    (&*r_plus, 1.0)
                } else {
                    (&*r_minus, -1.0)
                };
                for i in 0..m {
                    col[i] = sign * (other[i] - r0[i]) / h;
                }
            }
            (false, false) => return false,
        }
    }
    true
}

/// `A = JᵀJ` (row-major n × n) and `g = Jᵀr`.
fn normal_equations(jac: &[f64], r: &[f64], m: usize, n: usize, a: &mut [f64], g: &mut [f64]) {
    for j in 0..n {
        let cj = &jac[j * m..(j + 1) * m];
        g[j] = cj.iter().zip(r).map(|(x, y)| x * y).sum();
        for k in 0..=j {
            let ck = &jac[k * m..(k + 1) * m];
            let v: f64 = cj.iter().zip(ck).map(|(x, y)| x * y).sum();
            a[j * n + k] = v;
            a[k * n + j] = v;
        }
    }
}

/// Solve the dense n × n system `A x = b` (row-major) by Gaussian elimination
/// with partial pivoting; `None` if singular.
pub(crate) fn solve(a: &[f64], b: &[f64], n: usize) -> Option<Vec<f64>> {
    let mut m = a.to_vec();
    let mut x = b.to_vec();
    let scale = a.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    if scale == 0.0 || !scale.is_finite() {
        return None;
    }
    for col in 0..n {
        let (piv, piv_val) =
            (col..n)
                .map(|i| (i, m[i * n + col].abs()))
                .fold(
                    (col, -1.0),
                    |best, cur| if cur.1 > best.1 { cur } else { best },
                );
        if piv_val <= scale * 1e-300 {
            return None;
        }
        if piv != col {
            for k in 0..n {
                m.swap(col * n + k, piv * n + k);
            }
            x.swap(col, piv);
        }
        for i in col + 1..n {
            let f = m[i * n + col] / m[col * n + col];
            if f != 0.0 {
                for k in col..n {
                    m[i * n + k] -= f * m[col * n + k];
                }
                x[i] -= f * x[col];
            }
        }
    }
    for col in (0..n).rev() {
        let s: f64 = (col + 1..n).map(|k| m[col * n + k] * x[k]).sum();
        x[col] = (x[col] - s) / m[col * n + col];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

/// Inverse of a dense n × n matrix (row-major), `None` if singular.
fn invert(a: &[f64], n: usize) -> Option<Vec<f64>> {
    let mut inv = vec![0.0; n * n];
    for c in 0..n {
        let mut e = vec![0.0; n];
        e[c] = 1.0;
        let col = solve(a, &e, n)?;
        for r in 0..n {
            inv[r * n + c] = col[r];
        }
    }
    Some(inv)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solve_recovers_known_solution() {
        // A x = b with x = (1, −2, 3) (direct computation of b).
        let a = [4.0, 1.0, 2.0, 1.0, 5.0, -1.0, 2.0, -1.0, 6.0];
        let b = [8.0, -12.0, 22.0];
        let x = solve(&a, &b, 3).unwrap();
        for (xi, ei) in x.iter().zip([1.0, -2.0, 3.0]) {
            assert!((xi - ei).abs() < 1e-14);
        }
        assert!(solve(&[1.0, 2.0, 2.0, 4.0], &[1.0, 1.0], 2).is_none());
    }

    #[test]
    fn minimises_rosenbrock_residuals() {
        // Rosenbrock (1960) as residuals (10(y − x²), 1 − x): minimum at
        // (1, 1) with zero cost (analytic).
        let res = (2usize, |p: &[f64], out: &mut [f64]| {
            out[0] = 10.0 * (p[1] - p[0] * p[0]);
            out[1] = 1.0 - p[0];
            true
        });
        let o = minimise(&res, &[-1.2, 1.0], LmOptions::default()).unwrap();
        assert!(o.converged);
        assert!((o.params[0] - 1.0).abs() < 1e-9, "{:?}", o.params);
        assert!((o.params[1] - 1.0).abs() < 1e-9, "{:?}", o.params);
    }
}
