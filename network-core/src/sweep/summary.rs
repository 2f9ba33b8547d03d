//! What a sweep's cases give, and their statistics: one [`CaseResult`]
//! per finished case, grouped by parameter combination into a
//! [`SweepSummary`] (spreads over realisations per initial saturation, the
//! trapping curve and its least-squares Land coefficient). Statistics are
//! never pooled over different initial saturations: a residual saturation,
//! `k_rw` at `S_nr` or Amott index is given per point of the trapping
//! curve.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::Case;
use crate::fit::{LandLsqOptions, fit_land_least_squares, land_residual};
use crate::run::RunResults;

/// A recorded curve of one process, kept per case for bands.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CaseCurve {
    /// Process kind.
    pub kind: crate::params::ProcessKind,
    /// Capillary pressure, Pa.
    pub pc_pa: Vec<f64>,
    /// Water saturation.
    pub sw: Vec<f64>,
    /// `k_rw` where computed.
    pub krw: Vec<Option<f64>>,
    /// `k_rn` where computed.
    pub krn: Vec<Option<f64>>,
    /// Resistivity index where computed (finite values only).
    pub ri: Vec<Option<f64>>,
}

/// What one case produced (written per case, merged by `collect`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CaseResult {
    /// The case.
    pub case: Case,
    /// Initial non-aqueous saturation.
    pub sni: Option<f64>,
    /// Residual (trapped) non-aqueous saturation.
    pub snr: Option<f64>,
    /// Water saturation at the end of primary drainage.
    pub swi: Option<f64>,
    /// `k_rw` at the end of the first imbibition.
    pub krw_at_snr: Option<f64>,
    /// `k_rn` at the end of primary drainage.
    pub krn_at_swi: Option<f64>,
    /// Amott water index.
    pub amott_water: Option<f64>,
    /// Trapped ganglia.
    pub ganglia: Option<usize>,
    /// Ganglion size histogram (see
    /// [`crate::run::GanglionStats::pores_histogram`]).
    pub ganglion_histogram: Vec<usize>,
    /// The network of the case.
    pub network: crate::run::NetworkSummary,
    /// Absolute permeability, mD.
    pub permeability_md: Option<f64>,
    /// Formation factor.
    pub formation_factor: Option<f64>,
    /// Amott–Harvey index.
    pub amott_harvey: Option<f64>,
    /// USBM index.
    pub usbm: Option<f64>,
    /// Curves of every process.
    pub curves: Vec<CaseCurve>,
    /// Warnings of the run.
    pub warnings: Vec<String>,
}

impl CaseResult {
    /// Condenses a run.
    pub fn from_run(case: Case, r: &RunResults) -> CaseResult {
        let fin = |x: f64| x.is_finite().then_some(x);
        CaseResult {
            sni: r.sni,
            snr: r.snr,
            swi: r.end_points.swi,
            krw_at_snr: r.end_points.krw_at_snr,
            krn_at_swi: r.end_points.krn_at_swi,
            amott_water: r.wettability_indices.and_then(|w| fin(w.amott_water)),
            ganglia: r.ganglion_stats.as_ref().map(|g| g.count),
            ganglion_histogram: r
                .ganglion_stats
                .as_ref()
                .map(|g| g.pores_histogram.clone())
                .unwrap_or_default(),
            network: r.network.clone(),
            permeability_md: r.single_phase.as_ref().map(|p| p.permeability_md),
            formation_factor: r.single_phase.as_ref().map(|p| p.formation_factor),
            amott_harvey: r.wettability_indices.and_then(|w| fin(w.amott_harvey)),
            usbm: r.wettability_indices.and_then(|w| fin(w.usbm)),
            curves: r
                .outcomes
                .iter()
                .map(|o| CaseCurve {
                    kind: o.kind,
                    pc_pa: o.points.iter().map(|p| p.pc_pa).collect(),
                    sw: o.points.iter().map(|p| p.saturation.sw).collect(),
                    krw: o.points.iter().map(|p| p.flow.map(|f| f.krw)).collect(),
                    krn: o.points.iter().map(|p| p.flow.map(|f| f.krn)).collect(),
                    ri: o
                        .points
                        .iter()
                        .map(|p| p.flow.and_then(|f| f.ri.is_finite().then_some(f.ri)))
                        .collect(),
                })
                .collect(),
            warnings: r.warnings.clone(),
            case,
        }
    }
}

/// Mean, standard deviation and the 5th–95th percentile band of a sample.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Spread {
    /// Sample size.
    pub n: usize,
    /// Mean.
    pub mean: f64,
    /// Standard deviation (n − 1 in the denominator; 0 for one value).
    pub std: f64,
    /// 5th percentile (linear interpolation between order statistics).
    pub p05: f64,
    /// 95th percentile.
    pub p95: f64,
}

impl Spread {
    /// The spread of the finite values of `v` (`None` when there are none).
    pub fn of(v: &[f64]) -> Option<Spread> {
        let mut x: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
        if x.is_empty() {
            return None;
        }
        x.sort_by(f64::total_cmp);
        let n = x.len();
        let mean = x.iter().sum::<f64>() / n as f64;
        let var = if n > 1 {
            x.iter().map(|a| (a - mean).powi(2)).sum::<f64>() / (n - 1) as f64
        } else {
            0.0
        };
        let q = |p: f64| {
            let h = p * (n - 1) as f64;
            let lo = h.floor() as usize;
            let hi = h.ceil() as usize;
            x[lo] + (h - lo as f64) * (x[hi] - x[lo])
        };
        Some(Spread {
            n,
            mean,
            std: var.sqrt(),
            p05: q(0.05),
            p95: q(0.95),
        })
    }
}

/// One point of an initial–residual curve: the cases of one group and one
/// initial saturation (its realisations).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TrappingPoint {
    /// Target initial water saturation.
    pub initial_water_saturation: Option<f64>,
    /// Initial non-aqueous saturation over realisations.
    pub sni: Option<Spread>,
    /// Residual non-aqueous saturation over realisations.
    pub snr: Option<Spread>,
    /// `k_rw` at the end of the first imbibition over realisations.
    pub krw_at_snr: Option<Spread>,
    /// Amott water index over realisations.
    pub amott_water: Option<Spread>,
    /// The group's fitted Land curve at the mean `S_ni` of this point.
    pub land_snr: Option<f64>,
    /// Whether this point's cases entered the Land fit (inside
    /// `land_fit_sni_range`).
    pub in_land_fit: bool,
}

/// Statistics of one parameter combination.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GroupSummary {
    /// Group index.
    pub group: usize,
    /// Parameter values of the group.
    pub parameters: Vec<(String, String)>,
    /// Number of finished cases.
    pub cases: usize,
    /// The initial–residual curve, one point per initial saturation.
    pub trapping_curve: Vec<TrappingPoint>,
    /// Land coefficient `C` by least squares in `S_nr` of
    /// `S_nr = S_ni/(1 + C S_ni)` over every case of the group inside the
    /// fit's `S_ni` range (Land 1968, SPE J 8:149; saturations as fractions
    /// of the pore volume; see [`crate::fit::fit_land_least_squares`]).
    pub land_coefficient: Option<f64>,
    /// Linearised standard error of `land_coefficient`.
    pub land_coefficient_se: Option<f64>,
    /// RMS of the Land fit in `S_nr`.
    pub land_rmse_snr: Option<f64>,
    /// Cases (points) in the Land fit.
    pub land_points: usize,
    /// Smallest and largest `S_ni` of the fitted points.
    pub land_sni_range: Option<[f64; 2]>,
    /// Why the data may not follow Land's form over this range, or why
    /// there is no fit (`None`: no sign of trouble).
    pub land_warning: Option<String>,
}

/// Everything a sweep produced.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SweepSummary {
    /// Number of cases in the sweep.
    pub cases_total: usize,
    /// Cases with results.
    pub cases_done: usize,
    /// Land coefficient of the first group (the headline number).
    pub land_coefficient: Option<f64>,
    /// Its standard error.
    pub land_coefficient_se: Option<f64>,
    /// The `land_fit_sni_range` of the sweep (`None`: every point fitted).
    pub land_fit_sni_range: Option<[f64; 2]>,
    /// Per parameter combination.
    pub groups: Vec<GroupSummary>,
}

/// Statistics of finished cases (any order; sorted by case index first),
/// with the Land fit range of the first case (see [`summarise_with`]).
pub fn summarise(total: usize, results: &[CaseResult]) -> SweepSummary {
    let range = results
        .iter()
        .min_by_key(|r| r.case.index)
        .and_then(|r| r.case.land_fit_sni_range);
    summarise_with(total, results, range)
}

/// How far (in saturation) a case's `S_ni` may lie outside
/// `land_fit_sni_range` and still count as inside: drainage stops at the
/// element that crosses the target saturation, so `S_ni` overshoots the
/// target `1 − S_w` slightly (by under 1e-4 on the 8000-pore demo network).
pub const LAND_RANGE_SLACK: f64 = 1e-3;

/// Statistics of finished cases with the Land fit restricted to
/// `lo ≤ S_ni ≤ hi` (widened by [`LAND_RANGE_SLACK`] at both ends) when
/// `land_fit_sni_range` is given. Cases without an initial or residual
/// saturation, with `S_ni = 0` or with `S_nr > S_ni` are left out of the
/// fit.
pub fn summarise_with(
    total: usize,
    results: &[CaseResult],
    land_fit_sni_range: Option<[f64; 2]>,
) -> SweepSummary {
    let mut by_group: BTreeMap<usize, Vec<&CaseResult>> = BTreeMap::new();
    let mut sorted: Vec<&CaseResult> = results.iter().collect();
    sorted.sort_by_key(|r| r.case.index);
    for r in &sorted {
        by_group.entry(r.case.group).or_default().push(r);
    }
    let widened = land_fit_sni_range.map(|[lo, hi]| (lo - LAND_RANGE_SLACK, hi + LAND_RANGE_SLACK));
    let in_range = |s: f64| widened.is_none_or(|(lo, hi)| lo <= s && s <= hi);
    let mut groups = Vec::new();
    for (g, rs) in by_group {
        let mut by_swi: BTreeMap<u64, Vec<&CaseResult>> = BTreeMap::new();
        for r in &rs {
            by_swi.entry(swi_key(r)).or_default().push(r);
        }
        // Every usable case, labelled by its initial saturation.
        let (mut sni, mut snr, mut level) = (Vec::new(), Vec::new(), Vec::new());
        for r in &rs {
            if let Some((i, n)) = usable(r) {
                sni.push(i);
                snr.push(n);
                level.push(swi_key(r) as usize);
            }
        }
        let options = LandLsqOptions {
            sni_range: widened,
            levels: Some(&level),
            ..LandLsqOptions::default()
        };
        let land = if sni.is_empty() {
            Err("no case has an initial and a residual saturation".to_string())
        } else {
            fit_land_least_squares(&sni, &snr, &options).map_err(|e| e.to_string())
        };
        let pick = |cs: &[&CaseResult], f: &dyn Fn(&CaseResult) -> Option<f64>| {
            Spread::of(&cs.iter().filter_map(|r| f(r)).collect::<Vec<_>>())
        };
        let mut curve = Vec::new();
        for (_, cs) in by_swi.iter().rev() {
            let sni = pick(cs, &|r| r.sni);
            curve.push(TrappingPoint {
                initial_water_saturation: cs[0].case.initial_water_saturation,
                sni,
                snr: pick(cs, &|r| r.snr),
                krw_at_snr: pick(cs, &|r| r.krw_at_snr),
                amott_water: pick(cs, &|r| r.amott_water),
                land_snr: match (&land, sni) {
                    (Ok(l), Some(s)) => Some(land_residual(s.mean, l.c)),
                    _ => None,
                },
                in_land_fit: land.is_ok()
                    && cs
                        .iter()
                        .any(|r| usable(r).is_some_and(|(i, _)| in_range(i))),
            });
        }
        groups.push(GroupSummary {
            group: g,
            parameters: rs[0].case.parameters.clone(),
            cases: rs.len(),
            trapping_curve: curve,
            land_coefficient: land.as_ref().ok().map(|l| l.c),
            land_coefficient_se: land.as_ref().ok().map(|l| l.c_se),
            land_rmse_snr: land.as_ref().ok().map(|l| l.rmse_snr),
            land_points: land.as_ref().map_or(0, |l| l.n_points),
            land_sni_range: land.as_ref().ok().map(|l| [l.sni_range.0, l.sni_range.1]),
            land_warning: match &land {
                Ok(l) => l.warning(),
                Err(e) => Some(format!("no Land fit: {e}")),
            },
        });
    }
    SweepSummary {
        cases_total: total,
        cases_done: results.len(),
        land_coefficient: groups.first().and_then(|g| g.land_coefficient),
        land_coefficient_se: groups.first().and_then(|g| g.land_coefficient_se),
        land_fit_sni_range,
        groups,
    }
}

/// `(S_ni, S_nr)` of a case if the Land fit can use it.
fn usable(r: &CaseResult) -> Option<(f64, f64)> {
    let (i, n) = (r.sni?, r.snr?);
    (i > 0.0 && i <= 1.0 && n >= 0.0 && n <= i).then_some((i, n))
}

/// The initial water saturation of a case as an ordering key.
fn swi_key(r: &CaseResult) -> u64 {
    r.case
        .initial_water_saturation
        .map_or(u64::MAX, |s| (s * 1e9).round() as u64)
}
