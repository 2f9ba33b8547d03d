//! What a sweep's cases give, and their statistics: one [`CaseResult`]
//! per finished case, grouped by parameter combination into a
//! [`SweepSummary`] (spreads over realisations, the trapping curve and its
//! Land coefficient).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::Case;
use crate::fit::{LandMethod, LandNormalisation, fit_land};
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

/// One point of an initial–residual curve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TrappingPoint {
    /// Target initial water saturation.
    pub initial_water_saturation: Option<f64>,
    /// Initial non-aqueous saturation over realisations.
    pub sni: Option<Spread>,
    /// Residual non-aqueous saturation over realisations.
    pub snr: Option<Spread>,
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
    /// Land coefficient by least squares of `1/S_nr − 1/S_ni` over every
    /// case of the group (Land 1968; saturations as fractions of the pore
    /// volume).
    pub land_coefficient: Option<f64>,
    /// RMS of the Land fit in `S_nr`.
    pub land_rmse_snr: Option<f64>,
    /// Residual saturation over all cases of the group.
    pub snr: Option<Spread>,
    /// `k_rw` at `S_nr` over all cases.
    pub krw_at_snr: Option<Spread>,
    /// Amott water index over all cases.
    pub amott_water: Option<Spread>,
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
    /// Per parameter combination.
    pub groups: Vec<GroupSummary>,
}

/// Statistics of finished cases (any order; sorted by case index first).
pub fn summarise(total: usize, results: &[CaseResult]) -> SweepSummary {
    let mut by_group: BTreeMap<usize, Vec<&CaseResult>> = BTreeMap::new();
    let mut sorted: Vec<&CaseResult> = results.iter().collect();
    sorted.sort_by_key(|r| r.case.index);
    for r in &sorted {
        by_group.entry(r.case.group).or_default().push(r);
    }
    let mut groups = Vec::new();
    for (g, rs) in by_group {
        let mut by_swi: BTreeMap<u64, Vec<&CaseResult>> = BTreeMap::new();
        for r in &rs {
            let k = r
                .case
                .initial_water_saturation
                .map_or(u64::MAX, |s| (s * 1e9).round() as u64);
            by_swi.entry(k).or_default().push(r);
        }
        let mut curve = Vec::new();
        for (_, cs) in by_swi.iter().rev() {
            let sni: Vec<f64> = cs.iter().filter_map(|r| r.sni).collect();
            let snr: Vec<f64> = cs.iter().filter_map(|r| r.snr).collect();
            curve.push(TrappingPoint {
                initial_water_saturation: cs[0].case.initial_water_saturation,
                sni: Spread::of(&sni),
                snr: Spread::of(&snr),
            });
        }
        let (sni, snr): (Vec<f64>, Vec<f64>) = rs
            .iter()
            .filter_map(|r| Some((r.sni?, r.snr?)))
            .filter(|(i, r)| *r > 0.0 && r <= i)
            .unzip();
        let land = if sni.len() >= 2 {
            fit_land(
                &sni,
                &snr,
                LandMethod::Unweighted,
                LandNormalisation::PoreVolume,
            )
            .ok()
        } else {
            None
        };
        let pick = |f: &dyn Fn(&CaseResult) -> Option<f64>| {
            Spread::of(&rs.iter().filter_map(|r| f(r)).collect::<Vec<_>>())
        };
        groups.push(GroupSummary {
            group: g,
            parameters: rs[0].case.parameters.clone(),
            cases: rs.len(),
            trapping_curve: curve,
            land_coefficient: land.map(|l| l.c),
            land_rmse_snr: land.map(|l| l.rmse_snr),
            snr: pick(&|r| r.snr),
            krw_at_snr: pick(&|r| r.krw_at_snr),
            amott_water: pick(&|r| r.amott_water),
        });
    }
    SweepSummary {
        cases_total: total,
        cases_done: results.len(),
        land_coefficient: groups.first().and_then(|g| g.land_coefficient),
        groups,
    }
}
