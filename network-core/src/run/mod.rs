//! A whole study run: geometry, wettability, every process in order, and the
//! results as plain data (serde). No file access: the CLI reads the inputs
//! and [`crate::io`] writes the outputs.

use std::collections::BTreeSet;

use serde::{Deserialize, Serialize};

pub mod angle_fit;
pub mod calibrate;
pub mod end_points;
pub mod fractional_flow;
pub mod indices;
pub mod input_checks;
pub mod micp;
pub mod model_limits;
pub mod process;
pub mod profiles;
pub mod relperm;

use crate::engine::Engine;
use crate::engine::state::NO_GANGLION;

/// Event counts by mechanism, as the engine keeps them (part of every
/// process outcome).
pub use crate::engine::EventCounts;
use crate::flow::solver::SolveOptions;
use crate::flow::{PermOptions, PermeabilityReport, permeability_with_fields};
use crate::geometry::Geometry;
use crate::network::{Element, Network};
use crate::params::{DrainageFaces, ProcessKind, Study};
use crate::progress::Progress;
use crate::wettability::ContactAngles;
use end_points::{ArchieSummary, EndPoints, Fitted, ProcessFits};
use fractional_flow::Waterflood;
use indices::WettabilityIndices;
use process::{Point, ProcessOutcome, run_process_observed};
use profiles::{EndEffects, PointProfile, ProfileLayout, ProfileRecorder};
use relperm::{FlowPoint, RelpermSolver};

/// The program that made a result.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProgramInfo {
    /// Program name.
    pub name: String,
    /// Library version.
    pub version: String,
}

impl Default for ProgramInfo {
    fn default() -> Self {
        ProgramInfo {
            name: "ganglion".into(),
            version: env!("CARGO_PKG_VERSION").into(),
        }
    }
}

/// Network facts echoed in results.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NetworkSummary {
    /// Name from `network.toml`.
    pub name: String,
    /// Content hash (filled in by the caller that read the file).
    pub hash: String,
    /// Number of pores.
    pub pores: usize,
    /// Number of throats.
    pub throats: usize,
    /// Total pore volume, clay included, m³.
    pub pore_volume_m3: f64,
    /// Porosity.
    pub porosity: f64,
}

/// One trapped ganglion at the end of a process.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Ganglion {
    /// Id, numbered by lowest element index.
    pub id: usize,
    /// Volume of the non-aqueous phase, m³.
    pub volume_m3: f64,
    /// Pores holding it.
    pub pores: usize,
    /// Throats holding it.
    pub throats: usize,
    /// Bounding box of the centres of its pores (and throat midpoints):
    /// `[x_min, y_min, z_min, x_max, y_max, z_max]`, m.
    pub bbox_m: [f64; 6],
}

/// Size statistics of the trapped ganglia.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct GanglionStats {
    /// Number of ganglia.
    pub count: usize,
    /// Total trapped volume, m³.
    pub total_volume_m3: f64,
    /// Mean volume, m³.
    pub mean_volume_m3: f64,
    /// Largest volume, m³.
    pub max_volume_m3: f64,
    /// Histogram of the number of pores per ganglion: `counts[k]` ganglia
    /// have between `2^k` and `2^(k+1) − 1` pores (`k = 0` includes ganglia
    /// held in throats only).
    pub pores_histogram: Vec<usize>,
}

/// Summary of one process.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProcessSummary {
    /// Process kind.
    pub kind: ProcessKind,
    /// Capillary pressure at the end, Pa.
    pub final_pc_pa: f64,
    /// Water saturation at the end.
    pub final_sw: f64,
    /// Trapped non-aqueous saturation at the end.
    pub final_sn_trapped: f64,
    /// Breakthrough capillary pressure, Pa.
    pub breakthrough_pc_pa: Option<f64>,
    /// Event counts by mechanism.
    pub events: crate::engine::EventCounts,
    /// The saturation target could not be reached.
    pub target_unreached: bool,
    /// Number of recorded points.
    pub points: usize,
}

/// Occupancy at the end of a process (for 3-D export and later analysis).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EndState {
    /// Centre holds the non-aqueous phase.
    pub oil: Vec<bool>,
    /// Oil-layer corner masks.
    pub layers: Vec<u8>,
    /// Trapped-ganglion id per element (`u32::MAX`: none).
    pub ganglion: Vec<u32>,
    /// Water trapped here.
    pub water_trapped: Vec<bool>,
    /// Water saturation of each element (its water, clay included, over its
    /// pore volume), single precision.
    pub water_saturation: Vec<f32>,
    /// Water pressure per pore at the end of the process, for a unit
    /// pressure drop between the faces (from the last flow solve; NaN where
    /// the water does not flow); `None` without relative permeability.
    pub water_pressure: Option<Vec<f64>>,
}

/// Everything a run produces.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RunResults {
    /// The program.
    pub program: ProgramInfo,
    /// The network.
    pub network: NetworkSummary,
    /// The study, echoed.
    pub study: Study,
    /// Total pore volume, m³.
    pub pore_volume_m3: f64,
    /// Initial non-aqueous saturation: at the end of primary drainage.
    pub sni: Option<f64>,
    /// Residual (trapped) non-aqueous saturation at the end of the first
    /// imbibition.
    pub snr: Option<f64>,
    /// Non-aqueous saturation left at the end of the first imbibition,
    /// trapped or still connected.
    pub sn_end_imbibition: Option<f64>,
    /// Per-process summaries.
    pub processes: Vec<ProcessSummary>,
    /// Ganglion statistics at the end of the first imbibition.
    pub ganglion_stats: Option<GanglionStats>,
    /// Wettability indices (when imbibition is followed by drainage).
    pub wettability_indices: Option<WettabilityIndices>,
    /// Single-phase permeability and formation factor along the flow axis.
    pub single_phase: Option<PermeabilityReport>,
    /// End points of the curves.
    pub end_points: EndPoints,
    /// Drainage faces, profile slabs, interior window and the end points
    /// over the whole sample and the window.
    pub end_effects: EndEffects,
    /// Fitted relative-permeability models per process.
    pub fits: Vec<ProcessFits>,
    /// Archie exponents.
    pub archie: Option<ArchieSummary>,
    /// Buckley–Leverett waterflood from the first imbibition with computed
    /// relative permeabilities and the study's viscosities (or why it could
    /// not be computed); `None` without such an imbibition.
    pub waterflood: Option<Fitted<Waterflood>>,
    /// Seconds spent in flow solves for relative permeability (wall time;
    /// not written to `summary.json`, which depends only on the inputs).
    #[serde(skip)]
    pub flow_solve_seconds: f64,
    /// Counters of those solves.
    pub flow_solve_stats: relperm::SolveStats,
    /// Warnings for the reader.
    pub warnings: Vec<String>,
    /// Recorded curves, per process.
    #[serde(skip)]
    pub outcomes: Vec<ProcessOutcome>,
    /// Saturation profile of every recorded point: `profiles[i][k]` belongs
    /// to point `k` of process `i`.
    #[serde(skip)]
    pub profiles: Vec<Vec<PointProfile>>,
    /// The slabs of the profiles and the interior window.
    #[serde(skip)]
    pub profile_layout: Option<ProfileLayout>,
    /// Trapped ganglia at the end of the first imbibition.
    #[serde(skip)]
    pub ganglia: Vec<Ganglion>,
    /// Occupancy at the end of each process.
    #[serde(skip)]
    pub end_states: Vec<EndState>,
    /// Contact angles after the run (receding, advancing; radians).
    #[serde(skip)]
    pub angles: Option<ContactAngles>,
}

/// Runs every process of a study on a network.
pub fn run_study(network: &Network, study: &Study, progress: &dyn Progress) -> RunResults {
    let geometry = Geometry::new(network, study.seed);
    let mut engine = Engine::for_study(network, &geometry, study);
    let mut outcomes = Vec::new();
    let mut end_states = Vec::new();
    let mut warnings = Vec::new();
    let mut sni = None;
    let mut snr = None;
    let mut sn_end = None;
    let mut ganglia = None;
    let axis = study.flow.axis.unwrap_or(network.info().flow_axis);
    let (single_phase, mut relperm) = flow_references(network, study, axis, &mut warnings);
    let layout = ProfileLayout::new(network, axis, &study.output);
    if layout.window.is_some() && layout.window_pore_volume_m3 <= 0.0 {
        warnings
            .push("the interior window holds no pore volume: no interior saturations".to_string());
    }
    warnings.extend(input_checks::network(network));
    warnings.extend(input_checks::fluids(&study.fluids));
    let mut profiles = Vec::new();
    for (i, p) in study.processes.iter().enumerate() {
        if p.kind == ProcessKind::Imbibition && i == 1 {
            engine.alter_wettability(&study.wettability);
            warnings.extend(model_limits::isolated_oil_wet_regions(
                network,
                &engine.angles.oil_wet,
            ));
            warnings.extend(model_limits::low_initial_water(engine.saturation().sw));
            warnings.extend(model_limits::marks_replace_fraction(
                network,
                study.wettability.oil_wet_fraction,
            ));
        }
        let target_warning = input_checks::process_target(
            &engine,
            study,
            i,
            outcomes.last().map(|o: &ProcessOutcome| o.final_pc_pa),
        );
        let sw_before = engine.saturation().sw;
        let before = engine.snapshot();
        let mut recorder = ProfileRecorder::default();
        let mut out = run_process_observed(
            &mut engine,
            p.kind,
            p.stop,
            p.pc_steps,
            progress,
            &mut |pt, eng| {
                if relperm.is_none() {
                    recorder.observe(&layout, pt, eng);
                }
            },
        );
        if let Some(rp) = relperm.as_mut() {
            engine.restore(before);
            let (again, failures) =
                rerun_with_flow(&mut engine, p, &out.points, rp, progress, &mut |pt, eng| {
                    recorder.observe(&layout, pt, eng)
                });
            out = again;
            if let Some(f) = failures.first() {
                warnings.push(format!(
                    "process {}: {} flow solve(s) failed, first: {f}",
                    i + 1,
                    failures.len()
                ));
            }
        }
        if p.kind == ProcessKind::Drainage {
            warnings.extend(model_limits::microporosity_overrun(
                study.microporosity.entry_pressure_pa,
                out.final_pc_pa,
            ));
        }
        warnings.extend(target_warning.or_else(|| {
            input_checks::unchanged(i + 1, p.kind, sw_before, out.final_saturation.sw)
        }));
        if out.target_unreached {
            warnings.push(format!(
                "process {} ({}): the saturation target was not reached; it ended at Sw = {:.4}",
                i + 1,
                p.kind.as_str(),
                out.final_saturation.sw
            ));
        }
        if i == 0 {
            sni = Some(out.final_saturation.sn);
        }
        if i == 1 {
            snr = Some(out.final_saturation.sn_trapped);
            sn_end = Some(out.final_saturation.sn);
            ganglia = Some(collect_ganglia(&engine));
        }
        let s = engine.state();
        end_states.push(EndState {
            oil: s.oil.clone(),
            layers: s.layers.clone(),
            ganglion: s.ganglion.clone(),
            water_trapped: s.water_trapped.clone(),
            water_saturation: engine.element_water_saturations(),
            water_pressure: relperm
                .as_ref()
                .and_then(|r| r.water_pressure().map(<[f64]>::to_vec)),
        });
        let point_profiles = recorder.finish(&out.points);
        let whole_sw: Vec<f64> = out.points.iter().map(|pt| pt.saturation.sw).collect();
        let slab_sw: Vec<&[f64]> = point_profiles.iter().map(|pp| &pp.slab_sw[..]).collect();
        warnings.extend(model_limits::nonuniform_profile(
            i + 1,
            p.kind.as_str(),
            &whole_sw,
            &slab_sw,
            engine.drainage_faces() == DrainageFaces::Inlet && p.kind == ProcessKind::Drainage,
        ));
        profiles.push(point_profiles);
        outcomes.push(out);
    }
    let end_effects = layout.end_effects(engine.drainage_faces(), &outcomes, &profiles);
    let wettability_indices = indices::of_cycle(&outcomes);
    let processes = outcomes
        .iter()
        .map(|o| ProcessSummary {
            kind: o.kind,
            final_pc_pa: o.final_pc_pa,
            final_sw: o.final_saturation.sw,
            final_sn_trapped: o.final_saturation.sn_trapped,
            breakthrough_pc_pa: o.breakthrough_pc_pa,
            events: o.counts.clone(),
            target_unreached: o.target_unreached,
            points: o.points.len(),
        })
        .collect();
    let ganglia = ganglia.unwrap_or_default();
    let waterflood = first_imbibition_waterflood(&outcomes, study);
    if let Some(Fitted::Failed { error }) = &waterflood {
        warnings.push(format!("waterflood not computed: {error}"));
    }
    let ganglion_stats = snr.map(|_| ganglion_stats(&ganglia));
    RunResults {
        program: ProgramInfo::default(),
        network: NetworkSummary {
            name: network.info().name.clone(),
            hash: String::new(),
            pores: network.n_pores(),
            throats: network.n_throats(),
            pore_volume_m3: network.pore_volume(),
            porosity: network.porosity(),
        },
        study: study.clone(),
        pore_volume_m3: network.pore_volume(),
        sni,
        snr,
        sn_end_imbibition: sn_end,
        processes,
        ganglion_stats,
        wettability_indices,
        end_points: end_points::end_points(&outcomes),
        fits: end_points::process_fits(&outcomes),
        end_effects,
        archie: single_phase
            .as_ref()
            .map(|r| end_points::archie(r.porosity, r.formation_factor, &outcomes)),
        waterflood,
        flow_solve_seconds: relperm.as_ref().map_or(0.0, |r| r.solve_seconds),
        flow_solve_stats: relperm.as_ref().map_or(Default::default(), |r| r.stats),
        single_phase,
        warnings,
        outcomes,
        profiles,
        profile_layout: Some(layout),
        ganglia,
        end_states,
        angles: Some(engine.angles.clone()),
    }
}

/// The Buckley–Leverett waterflood of the first imbibition with relative
/// permeabilities at two or more distinct water saturations.
fn first_imbibition_waterflood(
    outcomes: &[ProcessOutcome],
    study: &Study,
) -> Option<Fitted<Waterflood>> {
    let (index, o) = outcomes.iter().enumerate().find(|(_, o)| {
        o.kind == ProcessKind::Imbibition && {
            let mut sw = o
                .points
                .iter()
                .filter(|p| p.flow.is_some())
                .map(|p| p.saturation.sw);
            sw.next().is_some_and(|first| sw.any(|s| s != first))
        }
    })?;
    let mut cols: [Vec<f64>; 3] = Default::default();
    for p in &o.points {
        if let Some(f) = p.flow {
            cols[0].push(p.saturation.sw);
            cols[1].push(f.krw);
            cols[2].push(f.krn);
        }
    }
    Some(
        match fractional_flow::waterflood(
            index + 1,
            &cols[0],
            &cols[1],
            &cols[2],
            study.fluids.water_viscosity_pa_s,
            study.fluids.nonaqueous_viscosity_pa_s,
        ) {
            Ok(w) => Fitted::Ok(w),
            Err(e) => Fitted::Failed {
                error: e.to_string(),
            },
        },
    )
}

/// The single-phase permeability and formation factor of the network, and
/// the solver of relative permeability and resistivity index when the study
/// asks for them (each failure becomes a warning and skips what needs it).
fn flow_references(
    network: &Network,
    study: &Study,
    axis: crate::network::Axis,
    warnings: &mut Vec<String>,
) -> (Option<PermeabilityReport>, Option<RelpermSolver>) {
    let solve = SolveOptions {
        tolerance: study.flow.solver_tolerance,
        ..SolveOptions::default()
    };
    let (single_phase, refs) = match permeability_with_fields(
        network,
        axis,
        &PermOptions {
            solve: solve.clone(),
            brine_conductivity: study.fluids.water_conductivity_s_per_m,
            clay_tortuosity: study.flow.clay_tortuosity,
        },
    ) {
        Ok((r, refs)) => (Some(r), Some(refs)),
        Err(e) => {
            warnings.push(format!("single-phase flow: {e}"));
            (None, None)
        }
    };
    // The single-phase solves above are the references of relative
    // permeability and resistivity index (solved once per run).
    let relperm = match refs.filter(|_| study.flow.relative_permeability) {
        Some(refs) => match RelpermSolver::with_references(
            network,
            axis,
            solve,
            study.flow.clay_tortuosity,
            refs,
        ) {
            Ok(r) => Some(r),
            Err(e) => {
                warnings.push(format!("relative permeability skipped: {e}"));
                None
            }
        },
        None => None,
    };
    (single_phase, relperm)
}

/// The second, identical pass of a process from the same start, solving
/// for flow at the points of the first pass (`first`) spaced evenly in
/// saturation, calling `also` with every candidate point as the first pass
/// would. Returns the outcome with `flow` filled at those points, and the
/// messages of the solves that failed.
fn rerun_with_flow(
    engine: &mut Engine<'_>,
    p: &crate::params::Process,
    first: &[Point],
    rp: &mut RelpermSolver,
    progress: &dyn Progress,
    also: &mut dyn FnMut(&Point, &Engine<'_>),
) -> (ProcessOutcome, Vec<String>) {
    let chosen = kr_selection(first, p.kr_points);
    progress.start("flow solves", chosen.len() as u64);
    let mut failures = Vec::new();
    let mut flows: Vec<((u64, u64), FlowPoint)> = Vec::new();
    let mut out = run_process_observed(
        engine,
        p.kind,
        p.stop,
        p.pc_steps,
        &crate::progress::Silent,
        &mut |pt, eng| {
            also(pt, eng);
            if chosen.contains(&key(pt)) && !flows.iter().any(|(k, _)| *k == key(pt)) {
                match rp.point(eng) {
                    Ok(f) => flows.push((key(pt), f)),
                    Err(e) => failures.push(e.to_string()),
                }
                progress.advance(1);
            }
        },
    );
    progress.finish();
    debug_assert_eq!(out.points.len(), first.len());
    for pt in out.points.iter_mut() {
        pt.flow = flows.iter().find(|(k, _)| *k == key(pt)).map(|(_, f)| *f);
    }
    (out, failures)
}

fn key(p: &Point) -> (u64, u64) {
    (p.events, p.pc_pa.to_bits())
}

/// The points at which to solve for flow: `n` targets spaced evenly in
/// water saturation between the first and last point, each taken at the
/// nearest recorded point (duplicates merged; end points always included).
fn kr_selection(points: &[Point], n: usize) -> BTreeSet<(u64, u64)> {
    let mut out = BTreeSet::new();
    if points.is_empty() || n == 0 {
        return out;
    }
    let s0 = points[0].saturation.sw;
    let s1 = points[points.len() - 1].saturation.sw;
    out.insert(key(&points[0]));
    out.insert(key(&points[points.len() - 1]));
    for k in 0..n {
        let t = if n == 1 {
            s1
        } else {
            s0 + (s1 - s0) * k as f64 / (n - 1) as f64
        };
        let best = points
            .iter()
            .min_by(|a, b| {
                (a.saturation.sw - t)
                    .abs()
                    .total_cmp(&(b.saturation.sw - t).abs())
            })
            .expect("non-empty");
        out.insert(key(best));
    }
    out
}

/// The trapped ganglia of the engine's current state.
pub fn collect_ganglia(engine: &Engine<'_>) -> Vec<Ganglion> {
    let s = engine.state();
    let net = engine.setup().network;
    let elements = net.elements();
    let mut map: std::collections::HashMap<u32, usize> = std::collections::HashMap::new();
    let mut out: Vec<Ganglion> = Vec::new();
    let geometry = engine.setup().geometry;
    let vol = engine.volumes();
    for e in 0..s.len() {
        let g = s.ganglion[e];
        if g == NO_GANGLION || !s.oil_trapped[e] {
            continue;
        }
        let k = *map.entry(g).or_insert_with(|| {
            out.push(Ganglion {
                id: out.len(),
                volume_m3: 0.0,
                pores: 0,
                throats: 0,
                bbox_m: [
                    f64::INFINITY,
                    f64::INFINITY,
                    f64::INFINITY,
                    f64::NEG_INFINITY,
                    f64::NEG_INFINITY,
                    f64::NEG_INFINITY,
                ],
            });
            out.len() - 1
        });
        let (aw, _) = engine.element_areas(e);
        let oil = vol[e] * (1.0 - aw / geometry.area(e));
        let c = match elements.kind(e) {
            Element::Pore(p) => net.pores().centre(p),
            Element::Throat(t) => {
                let [a, b] = net.throats().pores[t];
                let (pa, pb) = (
                    net.pores().centre(a as usize),
                    net.pores().centre(b as usize),
                );
                [
                    0.5 * (pa[0] + pb[0]),
                    0.5 * (pa[1] + pb[1]),
                    0.5 * (pa[2] + pb[2]),
                ]
            }
        };
        let gl = &mut out[k];
        gl.volume_m3 += oil;
        if elements.is_pore(e) {
            gl.pores += 1;
        } else {
            gl.throats += 1;
        }
        for d in 0..3 {
            gl.bbox_m[d] = gl.bbox_m[d].min(c[d]);
            gl.bbox_m[d + 3] = gl.bbox_m[d + 3].max(c[d]);
        }
    }
    out
}

/// Size statistics of a list of ganglia.
pub fn ganglion_stats(ganglia: &[Ganglion]) -> GanglionStats {
    let count = ganglia.len();
    let total: f64 = ganglia.iter().map(|g| g.volume_m3).sum();
    let max = ganglia.iter().map(|g| g.volume_m3).fold(0.0, f64::max);
    let mut hist = Vec::new();
    for g in ganglia {
        let k = if g.pores <= 1 {
            0
        } else {
            (usize::BITS - 1 - g.pores.leading_zeros()) as usize
        };
        if hist.len() <= k {
            hist.resize(k + 1, 0);
        }
        hist[k] += 1;
    }
    GanglionStats {
        count,
        total_volume_m3: total,
        mean_volume_m3: if count > 0 { total / count as f64 } else { 0.0 },
        max_volume_m3: max,
        pores_histogram: hist,
    }
}
