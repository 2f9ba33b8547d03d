//! Fractional flow of water and a one-dimensional Buckley–Leverett
//! waterflood from the relative permeabilities of an imbibition.
//!
//! ## Fractional flow
//! With capillary pressure and gravity neglected, the fraction of the
//! flowing stream that is water is
//!
//! `f_w(S_w) = 1 / (1 + (k_rn μ_w) / (k_rw μ_n))`
//!
//! (Buckley & Leverett 1942, "Mechanism of fluid displacement in sands",
//! Trans. AIME 146:107–116), with `μ_w` and `μ_n` the viscosities of the
//! study (`[fluids] water_viscosity_pa_s`, `nonaqueous_viscosity_pa_s`).
//! These two numbers enter Ganglion's results only here: the quasi-static
//! displacement and the relative permeabilities do not depend on them.
//!
//! ## The waterflood
//! Water is injected at one end of a homogeneous, one-dimensional medium
//! that starts at the water saturation `S_wi` where the imbibition starts,
//! with the non-aqueous phase at `1 − S_wi`. The saturation of the solution
//! travels at the dimensionless speed `F'(S_w)`, where `F` is the upper
//! concave envelope of `f_w` over `[S_wi, S_w,max]` (the highest water
//! saturation of the imbibition, `1 − S_nr` when it ran to the end). Its
//! first segment, from `(S_wi, f_w(S_wi))`, is the tangent of the Welge
//! construction (Welge 1952, "A simplified method for computing oil
//! recovery by gas or water drive", Trans. AIME 195:91–98): it touches
//! `f_w` at the shock-front saturation `S_wf`, and water breaks through
//! after `t_bt = (S_wf − S_wi)/(f_w(S_wf) − f_w(S_wi))` pore volumes
//! injected. After `t` pore volumes the average water saturation is
//! Welge's `S̄_w = S_w2 + (1 − F(S_w2)) t`, `S_w2` the outlet saturation
//! where `F'(S_w2) = 1/t`; equivalently `S̄_w = min_S [S + (1 − F(S)) t]`
//! over the envelope, which is how it is computed (it also holds before
//! breakthrough, where the minimum is at `S_wi`). Recovery is
//! `(S̄_w − S_wi)/(1 − S_wi)`, a fraction of the non-aqueous phase
//! initially in place.
//!
//! ## From simulated points to a curve
//! The recorded points of the imbibition where the flow was solved are
//! sorted by `S_w`, equal saturations merged (mean), made monotone by
//! weighted isotonic regression (`k_rw` rising, `k_rn` falling; Ayer et al.
//! 1955, Ann. Math. Stat. 26:641–647), given the end points the saturation
//! tables use (`k_rw = 0` at `S_wi`, `k_rn = 0` at `S_w,max`, so a
//! simulator reading the table solves the same problem) and interpolated by
//! monotone piecewise-cubic Hermite interpolation (Fritsch & Carlson 1980,
//! "Monotone piecewise cubic interpolation", SIAM J. Numer. Anal.
//! 17:238–246; derivatives by the weighted harmonic mean of Fritsch &
//! Butland 1984, SIAM J. Sci. Stat. Comput. 5:300–304), which keeps the
//! interpolated `k_r` monotone between the samples. The envelope is built
//! on [`GRID`] intervals of `S_w`; the tangent point is then refined by a
//! golden-section search on the continuous curve.

use serde::{Deserialize, Serialize};

/// Intervals of the `S_w` grid on which the concave envelope is built.
pub const GRID: usize = 4000;

/// Pore volumes injected at which recovery is reported besides
/// breakthrough.
pub const REPORT_PV: [f64; 3] = [1.0, 2.0, 3.0];

/// Why a waterflood could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum WaterfloodError {
    /// Fewer than two samples at distinct water saturations.
    #[error("{found} relative-permeability point(s) at distinct Sw; at least 2 are needed")]
    TooFewPoints {
        /// Distinct saturations found.
        found: usize,
    },
    /// Columns of different lengths.
    #[error("column {column} has {found} values, expected {expected}")]
    LengthMismatch {
        /// The column.
        column: &'static str,
        /// Length of `sw`.
        expected: usize,
        /// Its length.
        found: usize,
    },
    /// A value that is not finite, or a saturation outside `[0, 1]`.
    #[error("column {column}, point {index}: {value} is not a finite value in its range")]
    BadValue {
        /// The column.
        column: &'static str,
        /// Index of the point.
        index: usize,
        /// The value.
        value: f64,
    },
    /// A viscosity that is not positive and finite.
    #[error("{key} = {value} Pa·s: a viscosity must be positive and finite")]
    BadViscosity {
        /// The study key.
        key: &'static str,
        /// The value.
        value: f64,
    },
    /// Water does not flow at any saturation of the curve.
    #[error("krw is 0 over the whole imbibition: water never flows")]
    WaterImmobile,
}

/// The water saturation, water cut and recovery after some pore volumes
/// of water injected.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct FloodState {
    /// Pore volumes of water injected.
    pub pv_injected: f64,
    /// Average water saturation of the medium (Welge).
    pub average_sw: f64,
    /// Water saturation at the outlet.
    pub outlet_sw: f64,
    /// Water cut at the outlet, `f_w(outlet_sw)` (on the envelope).
    pub water_cut: f64,
    /// Recovery: non-aqueous phase produced as a fraction of what was in
    /// place at the start, `(average_sw − initial_sw)/(1 − initial_sw)`.
    pub recovery: f64,
}

/// A Buckley–Leverett waterflood (see the [module docs](self)).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Waterflood {
    /// Process (1-based) whose relative permeabilities were used.
    pub process: usize,
    /// Water viscosity μ_w used, Pa·s.
    pub water_viscosity_pa_s: f64,
    /// Non-aqueous viscosity μ_n used, Pa·s.
    pub nonaqueous_viscosity_pa_s: f64,
    /// End-point mobility ratio `(k_rw(S_w,max)/μ_w) / (k_rn(S_wi)/μ_n)`.
    pub endpoint_mobility_ratio: f64,
    /// Initial water saturation: the start of the imbibition.
    pub initial_sw: f64,
    /// Highest water saturation of the curve (`1 − S_nr` when the
    /// imbibition ran to its end); the flood approaches it as injection
    /// goes on.
    pub max_sw: f64,
    /// Shock-front water saturation `S_wf`: where the Welge tangent
    /// touches `f_w`.
    pub shock_front_sw: f64,
    /// Fractional flow of water at the shock front, `f_w(S_wf)`.
    pub shock_front_fw: f64,
    /// Pore volumes injected at water breakthrough, `t_bt`.
    pub breakthrough_pv: f64,
    /// The state at breakthrough.
    pub at_breakthrough: FloodState,
    /// The states after 1, 2 and 3 pore volumes injected.
    pub at_pv: Vec<FloodState>,
    /// Recovery after infinitely many pore volumes,
    /// `(max_sw − initial_sw)/(1 − initial_sw)`.
    pub ultimate_recovery: f64,
    /// `(S_w, f_w)` at 201 saturations from `initial_sw` to `max_sw` on
    /// the interpolated curve (for figures; not in `summary.json`).
    #[serde(skip)]
    pub fw_curve: Vec<[f64; 2]>,
}

/// `f_w` from relative permeabilities and viscosities; `None` when neither
/// phase flows.
pub fn fractional_flow(krw: f64, krn: f64, mu_w: f64, mu_n: f64) -> Option<f64> {
    let lw = krw.max(0.0) / mu_w;
    let ln = krn.max(0.0) / mu_n;
    (lw + ln > 0.0).then(|| lw / (lw + ln))
}

/// Monotone relative permeabilities of one imbibition as smooth functions
/// of `S_w` (see the [module docs](self)).
#[derive(Clone, Debug)]
pub struct KrCurve {
    krw: Pchip,
    krn: Pchip,
}

impl KrCurve {
    /// Builds the curve from samples (any order).
    pub fn new(sw: &[f64], krw: &[f64], krn: &[f64]) -> Result<KrCurve, WaterfloodError> {
        let n = sw.len();
        for (column, c) in [("krw", krw), ("krn", krn)] {
            if c.len() != n {
                return Err(WaterfloodError::LengthMismatch {
                    column,
                    expected: n,
                    found: c.len(),
                });
            }
        }
        for (column, c) in [("sw", sw), ("krw", krw), ("krn", krn)] {
            let range = if column == "sw" {
                0.0..=1.0
            } else {
                0.0..=f64::MAX
            };
            if let Some((index, &value)) = c
                .iter()
                .enumerate()
                .find(|(_, v)| !v.is_finite() || !range.contains(*v))
            {
                // Small negative kr from solver round-off are clamped
                // below; anything else is refused.
                if !(column != "sw" && value.is_finite() && value > -1e-9) {
                    return Err(WaterfloodError::BadValue {
                        column,
                        index,
                        value,
                    });
                }
            }
        }
        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by(|&a, &b| sw[a].total_cmp(&sw[b]));
        let mut xs: Vec<f64> = Vec::new();
        let mut weights: Vec<f64> = Vec::new();
        let mut sums: Vec<[f64; 2]> = Vec::new();
        for &i in &order {
            if xs.last() != Some(&sw[i]) {
                xs.push(sw[i]);
                weights.push(0.0);
                sums.push([0.0; 2]);
            }
            let k = xs.len() - 1;
            weights[k] += 1.0;
            sums[k][0] += krw[i].max(0.0);
            sums[k][1] += krn[i].max(0.0);
        }
        let m = xs.len();
        if m < 2 {
            return Err(WaterfloodError::TooFewPoints { found: m });
        }
        let mean = |c: usize| -> Vec<f64> { (0..m).map(|k| sums[k][c] / weights[k]).collect() };
        let mut w = isotonic_rising(&mean(0), &weights);
        let neg: Vec<f64> = mean(1).iter().map(|v| -v).collect();
        let mut nw: Vec<f64> = isotonic_rising(&neg, &weights).iter().map(|v| -v).collect();
        w[0] = 0.0;
        nw[m - 1] = 0.0;
        if w.iter().all(|&v| v == 0.0) {
            return Err(WaterfloodError::WaterImmobile);
        }
        Ok(KrCurve {
            krw: Pchip::new(xs.clone(), w),
            krn: Pchip::new(xs, nw),
        })
    }

    /// Lowest and highest `S_w` of the curve.
    pub fn range(&self) -> (f64, f64) {
        (self.krw.x[0], self.krw.x[self.krw.x.len() - 1])
    }

    /// `(k_rw, k_rn)` at `sw` (clamped to the range).
    pub fn kr(&self, sw: f64) -> (f64, f64) {
        (self.krw.eval(sw), self.krn.eval(sw))
    }
}

/// The Buckley–Leverett waterflood of the curve `(sw, krw, krn)` with
/// viscosities `mu_w`, `mu_n` (Pa·s); `process` is only recorded.
pub fn waterflood(
    process: usize,
    sw: &[f64],
    krw: &[f64],
    krn: &[f64],
    mu_w: f64,
    mu_n: f64,
) -> Result<Waterflood, WaterfloodError> {
    for (key, value) in [
        ("water_viscosity_pa_s", mu_w),
        ("nonaqueous_viscosity_pa_s", mu_n),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(WaterfloodError::BadViscosity { key, value });
        }
    }
    let curve = KrCurve::new(sw, krw, krn)?;
    let (s0, s1) = curve.range();
    let fw = |s: f64| {
        let (w, n) = curve.kr(s);
        fractional_flow(w, n, mu_w, mu_n).unwrap_or(1.0)
    };
    let grid: Vec<f64> = (0..=GRID)
        .map(|j| match j {
            0 => s0,
            GRID => s1,
            _ => s0 + (s1 - s0) * j as f64 / GRID as f64,
        })
        .collect();
    let f: Vec<f64> = grid.iter().map(|&s| fw(s)).collect();
    let mut hull = upper_hull(&grid, &f);
    // Refine the tangent point between its grid neighbours.
    let f0 = f[0];
    let j = hull[1];
    let (mut sf, mut ff) = (grid[j], f[j]);
    if j < GRID {
        let slope = |s: f64| (fw(s) - f0) / (s - s0);
        let (a, b) = (grid[j - 1].max(s0 + 1e-12 * (s1 - s0)), grid[j + 1]);
        let s = golden_max(slope, a, b);
        if slope(s) > slope(sf) {
            sf = s;
            ff = fw(s);
        }
    }
    hull[1] = usize::MAX; // stands for the refined tangent point
    let vertex = |k: usize| -> (f64, f64) {
        if k == usize::MAX {
            (sf, ff)
        } else {
            (grid[k], f[k])
        }
    };
    let breakthrough_pv = (sf - s0) / (ff - f0);
    let state = |t: f64| -> FloodState {
        let mut best = (f64::INFINITY, s0, f0);
        for &k in &hull {
            let (s, fv) = vertex(k);
            let v = s + (1.0 - fv) * t;
            if v < best.0 {
                best = (v, s, fv);
            }
        }
        let avg = best.0.min(s1);
        FloodState {
            pv_injected: t,
            average_sw: avg,
            outlet_sw: best.1,
            water_cut: best.2,
            recovery: (avg - s0) / (1.0 - s0),
        }
    };
    let mut at_breakthrough = state(breakthrough_pv);
    // At breakthrough the front reaches the outlet: report its saturation.
    at_breakthrough.outlet_sw = sf;
    at_breakthrough.water_cut = ff;
    let (krw_max, _) = curve.kr(s1);
    let (_, krn_max) = curve.kr(s0);
    Ok(Waterflood {
        process,
        water_viscosity_pa_s: mu_w,
        nonaqueous_viscosity_pa_s: mu_n,
        endpoint_mobility_ratio: (krw_max / mu_w) / (krn_max / mu_n),
        initial_sw: s0,
        max_sw: s1,
        shock_front_sw: sf,
        shock_front_fw: ff,
        breakthrough_pv,
        at_breakthrough,
        at_pv: REPORT_PV.iter().map(|&t| state(t)).collect(),
        ultimate_recovery: (s1 - s0) / (1.0 - s0),
        fw_curve: (0..=200)
            .map(|i| {
                let s = if i == 200 {
                    s1
                } else {
                    s0 + (s1 - s0) * i as f64 / 200.0
                };
                [s, fw(s)]
            })
            .collect(),
    })
}

/// Indices of the upper concave envelope of the points `(x, y)` (x
/// increasing), first and last included; points on a segment of the
/// envelope (within round-off) are left out.
fn upper_hull(x: &[f64], y: &[f64]) -> Vec<usize> {
    let mut h: Vec<usize> = Vec::with_capacity(x.len());
    let scale = (x[x.len() - 1] - x[0]).abs().max(1e-300);
    for i in 0..x.len() {
        while h.len() >= 2 {
            let (a, b) = (h[h.len() - 2], h[h.len() - 1]);
            // Cross product of (b − a) × (i − a): ≥ 0 means b lies on or
            // below the line from a to i.
            let cross = (x[b] - x[a]) * (y[i] - y[a]) - (y[b] - y[a]) * (x[i] - x[a]);
            if cross >= -1e-12 * scale {
                h.pop();
            } else {
                break;
            }
        }
        h.push(i);
    }
    h
}

/// The maximiser of a unimodal `g` on `[a, b]` by golden-section search.
fn golden_max(g: impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    let r = 0.5 * (5f64.sqrt() - 1.0);
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    let (mut gc, mut gd) = (g(c), g(d));
    for _ in 0..80 {
        if gc >= gd {
            b = d;
            d = c;
            gd = gc;
            c = b - r * (b - a);
            gc = g(c);
        } else {
            a = c;
            c = d;
            gc = gd;
            d = a + r * (b - a);
            gd = g(d);
        }
    }
    0.5 * (a + b)
}

/// Weighted least-squares non-decreasing fit (pool adjacent violators).
fn isotonic_rising(y: &[f64], w: &[f64]) -> Vec<f64> {
    let mut blocks: Vec<(f64, f64, usize)> = Vec::new(); // (mean, weight, count)
    for (&v, &wt) in y.iter().zip(w) {
        blocks.push((v, wt, 1));
        while blocks.len() >= 2 && blocks[blocks.len() - 2].0 > blocks[blocks.len() - 1].0 {
            let (m2, w2, c2) = blocks.pop().expect("two blocks");
            let (m1, w1, c1) = blocks.pop().expect("two blocks");
            blocks.push(((m1 * w1 + m2 * w2) / (w1 + w2), w1 + w2, c1 + c2));
        }
    }
    blocks
        .iter()
        .flat_map(|&(m, _, c)| std::iter::repeat_n(m, c))
        .collect()
}

/// Monotone piecewise-cubic Hermite interpolant (Fritsch & Carlson 1980;
/// Fritsch & Butland 1984 derivatives).
#[derive(Clone, Debug)]
struct Pchip {
    x: Vec<f64>,
    y: Vec<f64>,
    d: Vec<f64>,
}

impl Pchip {
    fn new(x: Vec<f64>, y: Vec<f64>) -> Pchip {
        let n = x.len();
        let h: Vec<f64> = (0..n - 1).map(|k| x[k + 1] - x[k]).collect();
        let delta: Vec<f64> = (0..n - 1).map(|k| (y[k + 1] - y[k]) / h[k]).collect();
        let mut d = vec![0.0; n];
        d[0] = delta[0];
        d[n - 1] = delta[n - 2];
        for k in 1..n - 1 {
            if delta[k - 1] * delta[k] > 0.0 {
                let w1 = 2.0 * h[k] + h[k - 1];
                let w2 = h[k] + 2.0 * h[k - 1];
                d[k] = (w1 + w2) / (w1 / delta[k - 1] + w2 / delta[k]);
            }
        }
        Pchip { x, y, d }
    }

    fn eval(&self, t: f64) -> f64 {
        let n = self.x.len();
        if t <= self.x[0] {
            return self.y[0];
        }
        if t >= self.x[n - 1] {
            return self.y[n - 1];
        }
        let k = self.x.partition_point(|&v| v <= t) - 1;
        let h = self.x[k + 1] - self.x[k];
        let s = (t - self.x[k]) / h;
        let (s2, s3) = (s * s, s * s * s);
        let h00 = 2.0 * s3 - 3.0 * s2 + 1.0;
        let h10 = s3 - 2.0 * s2 + s;
        let h01 = -2.0 * s3 + 3.0 * s2;
        let h11 = s3 - s2;
        h00 * self.y[k] + h10 * h * self.d[k] + h01 * self.y[k + 1] + h11 * h * self.d[k + 1]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Corey curves on the normalised saturation
    /// `S = (S_w − S_wi)/(1 − S_wi − S_or)`: `k_rw = S^nw`,
    /// `k_rn = (1 − S)^nn`.
    struct Corey {
        swi: f64,
        sor: f64,
        nw: f64,
        nn: f64,
        mu_w: f64,
        mu_n: f64,
    }

    impl Corey {
        fn norm(&self, sw: f64) -> f64 {
            (sw - self.swi) / (1.0 - self.swi - self.sor)
        }
        fn fw(&self, sw: f64) -> f64 {
            let s = self.norm(sw);
            let lw = s.powf(self.nw) / self.mu_w;
            let ln = (1.0 - s).powf(self.nn) / self.mu_n;
            lw / (lw + ln)
        }
        /// Analytic derivative: with `a = k_rw/μ_w`, `b = k_rn/μ_n`,
        /// `f = a/(a+b)`, `f' = (a' b − a b')/(a+b)²`,
        /// `a' = nw S^(nw−1)/μ_w /L`, `b' = −nn (1−S)^(nn−1)/μ_n /L`,
        /// `L = 1 − S_wi − S_or`.
        fn dfw(&self, sw: f64) -> f64 {
            let l = 1.0 - self.swi - self.sor;
            let s = self.norm(sw);
            let a = s.powf(self.nw) / self.mu_w;
            let b = (1.0 - s).powf(self.nn) / self.mu_n;
            let da = self.nw * s.powf(self.nw - 1.0) / self.mu_w / l;
            let db = -self.nn * (1.0 - s).powf(self.nn - 1.0) / self.mu_n / l;
            (da * b - a * db) / ((a + b) * (a + b))
        }
        fn samples(&self, n: usize) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
            let l = 1.0 - self.swi - self.sor;
            let sw: Vec<f64> = (0..n)
                .map(|i| self.swi + l * i as f64 / (n - 1) as f64)
                .collect();
            let krw = sw.iter().map(|&s| self.norm(s).powf(self.nw)).collect();
            let krn = sw
                .iter()
                .map(|&s| (1.0 - self.norm(s)).max(0.0).powf(self.nn))
                .collect();
            (sw, krw, krn)
        }
    }

    /// Bisection for a root of `g` on `[a, b]` (sign change assumed).
    fn bisect(g: impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
        let ga = g(a);
        for _ in 0..200 {
            let m = 0.5 * (a + b);
            if (g(m) > 0.0) == (ga > 0.0) {
                a = m;
            } else {
                b = m;
            }
        }
        0.5 * (a + b)
    }

    /// Analytic derivation (Welge 1952): the tangent from `(S_wi, 0)`
    /// touches `f_w` where `f_w'(S)(S − S_wi) = f_w(S)`, found by bisection
    /// on the closed-form derivative; `t_bt = 1/f_w'(S_wf)`; after `t` PV
    /// the outlet saturation solves `f_w'(S_2) = 1/t` on the falling branch
    /// behind the front and `S̄_w = S_2 + (1 − f_w(S_2)) t`.
    #[test]
    fn corey_waterflood_matches_the_analytic_welge_solution() {
        for c in [
            Corey {
                swi: 0.2,
                sor: 0.25,
                nw: 2.0,
                nn: 2.0,
                mu_w: 1.0e-3,
                mu_n: 2.0e-3,
            },
            Corey {
                swi: 0.15,
                sor: 0.3,
                nw: 3.0,
                nn: 1.5,
                mu_w: 0.5e-3,
                mu_n: 5.0e-3,
            },
            Corey {
                swi: 0.3,
                sor: 0.2,
                nw: 2.5,
                nn: 3.0,
                mu_w: 1.0e-3,
                mu_n: 0.5e-3,
            },
        ] {
            let smax = 1.0 - c.sor;
            let tangency = |s: f64| c.dfw(s) * (s - c.swi) - c.fw(s);
            // Below the tangent point the curve lies under the secant
            // (tangency < 0 changes sign once on the convex-then-concave
            // curve); bracket from just above S_wi to S_max.
            let sf = bisect(tangency, c.swi + 1e-6, smax - 1e-9);
            let tbt = 1.0 / c.dfw(sf);
            let (sw, krw, krn) = c.samples(41);
            let w = waterflood(2, &sw, &krw, &krn, c.mu_w, c.mu_n).unwrap();
            // Tolerance: the module sees 41 samples (every 0.014 in Sw)
            // through monotone cubics and a 4000-interval envelope; the
            // errors measured on these three cases are ≤ 1.1e-4 in S_wf,
            // ≤ 3e-6 relative in t_bt and ≤ 3.2e-5 in recovery, 8e-4 in
            // the outlet Sw; the bounds allow about ten times that.
            assert!(
                (w.shock_front_sw - sf).abs() < 1e-3,
                "{} vs {sf}",
                w.shock_front_sw
            );
            assert!(
                (w.breakthrough_pv - tbt).abs() < 1e-4 * tbt,
                "{} vs {tbt}",
                w.breakthrough_pv
            );
            let rec_bt = tbt / (1.0 - c.swi);
            assert!((w.at_breakthrough.recovery - rec_bt).abs() < 3e-4);
            for (state, &t) in w.at_pv.iter().zip(&REPORT_PV) {
                let (avg, s2) = if t <= tbt {
                    (c.swi + t, c.swi)
                } else {
                    let s2 = bisect(|s| c.dfw(s) - 1.0 / t, sf, smax - 1e-12);
                    (s2 + (1.0 - c.fw(s2)) * t, s2)
                };
                let rec = (avg - c.swi) / (1.0 - c.swi);
                assert!(
                    (state.recovery - rec).abs() < 3e-4,
                    "t = {t}: {} vs {rec}",
                    state.recovery
                );
                assert!((state.outlet_sw - s2).abs() < 5e-3);
            }
            assert!((w.ultimate_recovery - (smax - c.swi) / (1.0 - c.swi)).abs() < 1e-12);
        }
    }

    /// Analytic derivation: with linear kr (`k_rw = S`, `k_rn = 1 − S`)
    /// and equal viscosities `f_w = S` is a straight line, the front is a
    /// piston (`S_wf = 1 − S_or`), breakthrough comes at `t = 1 − S_wi −
    /// S_or` PV and recovers `(1 − S_or − S_wi)/(1 − S_wi)`, which is also
    /// the recovery at every later time.
    #[test]
    fn linear_kr_and_unit_mobility_ratio_give_a_piston_front() {
        let c = Corey {
            swi: 0.2,
            sor: 0.3,
            nw: 1.0,
            nn: 1.0,
            mu_w: 1.0e-3,
            mu_n: 1.0e-3,
        };
        let (sw, krw, krn) = c.samples(11);
        let w = waterflood(2, &sw, &krw, &krn, c.mu_w, c.mu_n).unwrap();
        let expected = (1.0 - 0.3 - 0.2) / (1.0 - 0.2);
        assert!((w.shock_front_sw - 0.7).abs() < 1e-9);
        assert!((w.breakthrough_pv - 0.5).abs() < 1e-9);
        assert!((w.at_breakthrough.recovery - expected).abs() < 1e-9);
        for s in &w.at_pv {
            assert!((s.recovery - expected).abs() < 1e-9);
            assert!((s.water_cut - 1.0).abs() < 1e-12);
        }
        assert!((w.endpoint_mobility_ratio - 1.0).abs() < 1e-12);
    }

    #[test]
    fn fractional_flow_is_the_water_share_of_total_mobility() {
        // Analytic derivation: krw = krn and μ_n = 3 μ_w give
        // f_w = 1/(1 + 1/3) = 0.75.
        assert!((fractional_flow(0.2, 0.2, 1e-3, 3e-3).unwrap() - 0.75).abs() < 1e-15);
        assert_eq!(fractional_flow(0.0, 0.0, 1e-3, 1e-3), None);
        assert_eq!(fractional_flow(0.0, 0.5, 1e-3, 1e-3), Some(0.0));
    }

    #[test]
    fn bad_inputs_give_typed_errors() {
        let sw = [0.2, 0.5, 0.8];
        let kw = [0.0, 0.1, 0.3];
        let kn = [0.8, 0.2, 0.0];
        assert!(matches!(
            waterflood(2, &sw, &kw, &kn, 0.0, 1e-3),
            Err(WaterfloodError::BadViscosity {
                key: "water_viscosity_pa_s",
                ..
            })
        ));
        assert!(matches!(
            waterflood(2, &[0.3, 0.3], &[0.0, 0.1], &[0.5, 0.4], 1e-3, 1e-3),
            Err(WaterfloodError::TooFewPoints { found: 1 })
        ));
        assert!(matches!(
            waterflood(2, &sw, &[0.0, 0.1], &kn, 1e-3, 1e-3),
            Err(WaterfloodError::LengthMismatch { column: "krw", .. })
        ));
        assert!(matches!(
            waterflood(2, &[0.2, f64::NAN, 0.8], &kw, &kn, 1e-3, 1e-3),
            Err(WaterfloodError::BadValue {
                column: "sw",
                index: 1,
                ..
            })
        ));
        assert!(matches!(
            waterflood(2, &sw, &[0.0; 3], &kn, 1e-3, 1e-3),
            Err(WaterfloodError::WaterImmobile)
        ));
    }

    #[test]
    fn interpolation_keeps_noisy_kr_monotone() {
        // Common practice: tables fed to a simulator must be monotone.
        let sw = [0.2, 0.3, 0.35, 0.5, 0.6, 0.7];
        let kw = [0.0, 0.02, 0.015, 0.1, 0.2, 0.35];
        let kn = [0.9, 0.5, 0.55, 0.2, 0.05, 0.01];
        let c = KrCurve::new(&sw, &kw, &kn).unwrap();
        let mut last = c.kr(0.2);
        for i in 1..=500 {
            let now = c.kr(0.2 + 0.5 * i as f64 / 500.0);
            assert!(now.0 >= last.0 - 1e-15 && now.1 <= last.1 + 1e-15);
            last = now;
        }
        assert_eq!(c.kr(0.7).1, 0.0);
        assert_eq!(c.kr(0.2).0, 0.0);
    }
}
