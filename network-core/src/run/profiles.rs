//! End effects made visible: saturation profiles along the flow axis at
//! every recorded point, and saturations over an interior window of the
//! sample.
//!
//! The sample is cut into `n` slabs of equal length between the lowest and
//! the highest pore centre along the flow axis (for a generated lattice,
//! the centres of the inlet and outlet layers: the sample's `length_m`). A
//! pore belongs to the slab of its centre, a throat to the slab of the
//! midpoint between its two pores; each element's whole pore volume, clay
//! included, goes in that slab. The water of each element comes from
//! [`Engine::region_volumes`], the engine's one home for saturation, so the
//! pore-volume-weighted mean of a profile is the whole-sample saturation
//! (to round-off).
//!
//! Near the faces a displacement leaves saturations that the rest of the
//! sample does not have: in drainage the inlet face is the source of the
//! non-aqueous phase, in imbibition the phase leaves through the faces
//! before it can be trapped. Core analysis meets the same capillary end
//! effect (Hassler & Brunner 1945, Trans. AIME 160:114–123) and measures
//! saturations away from the faces, or images them along the core. The
//! interior window is that measurement: the elements whose position lies in
//! `[start, end]` (fractions of the sample length along the flow axis).

use serde::{Deserialize, Serialize};

use super::process::{Point, ProcessOutcome};
use crate::engine::Engine;
use crate::engine::saturation::RegionVolumes;
use crate::network::{Axis, Element, Network};
use crate::params::{DrainageFaces, OutputSpec};

/// The slabs of the profiles and the interior window on one network.
#[derive(Clone, Debug, PartialEq)]
pub struct ProfileLayout {
    /// Axis of the slabs (the flow axis of the run).
    pub axis: Axis,
    /// Lowest and highest pore-centre coordinate along the axis, m.
    pub span_m: [f64; 2],
    /// Slab edges along the axis, m (`n + 1` values from `span_m[0]` to
    /// `span_m[1]`).
    pub slab_edges_m: Vec<f64>,
    /// Pore volume (clay included) of each slab, m³.
    pub slab_pore_volume_m3: Vec<f64>,
    /// The interior window as fractions of the span, when asked for.
    pub window: Option<[f64; 2]>,
    /// Pore volume (clay included) in the window, m³.
    pub window_pore_volume_m3: f64,
    /// Region of every element: its slab, plus `n` when it lies in the
    /// window.
    region: Vec<u32>,
}

/// Saturations over the interior window at one state.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct WindowSaturation {
    /// Water saturation of the window (water volume / pore volume).
    pub sw: f64,
    /// Non-aqueous saturation of the window.
    pub sn: f64,
    /// Trapped non-aqueous saturation of the window.
    pub sn_trapped: f64,
}

/// The saturation profile at one recorded point.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointProfile {
    /// Water saturation of each slab (NaN for a slab without pore volume).
    pub slab_sw: Vec<f64>,
    /// Trapped non-aqueous saturation of each slab (fraction of the slab's
    /// pore volume).
    pub slab_sn_trapped: Vec<f64>,
    /// Saturations over the interior window, when one is set and holds
    /// pore volume.
    pub interior: Option<WindowSaturation>,
}

/// The interior window a run used.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct InteriorWindow {
    /// `[start, end]` as fractions of the sample length along the flow
    /// axis.
    pub fraction: [f64; 2],
    /// The same along the axis, m.
    pub range_m: [f64; 2],
    /// Fraction of the pore volume that lies in the window.
    pub pore_volume_fraction: f64,
}

/// End points of a run over one region of the sample.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct RegionEndPoints {
    /// Water saturation at the end of primary drainage.
    pub swi: Option<f64>,
    /// Non-aqueous saturation at the end of primary drainage.
    pub sni: Option<f64>,
    /// Trapped non-aqueous saturation at the end of the first imbibition.
    pub snr: Option<f64>,
    /// Non-aqueous saturation left at the end of the first imbibition.
    pub sn_end_imbibition: Option<f64>,
}

/// What a run did about end effects (part of `summary.json`): the faces
/// the non-aqueous phase entered by, the profile slabs, the interior window
/// and the end points over the whole sample and over the window.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct EndEffects {
    /// Axis of the profiles and the window.
    pub flow_axis: Axis,
    /// Lowest and highest pore-centre coordinate along that axis, m.
    pub sample_span_m: [f64; 2],
    /// Faces through which the non-aqueous phase entered in drainage.
    pub drainage_faces: DrainageFaces,
    /// Number of profile slabs.
    pub profile_slabs: usize,
    /// The interior window (`None`: whole-sample saturations only).
    pub interior_window: Option<InteriorWindow>,
    /// End points over the whole sample.
    pub whole_sample: RegionEndPoints,
    /// End points over the interior window.
    pub interior: Option<RegionEndPoints>,
}

/// Position of element `e` along `axis`: a pore's centre, a throat's
/// midpoint between its pores.
fn position(network: &Network, axis: Axis, e: usize) -> f64 {
    let c = network.pores().coordinate(axis);
    match network.elements().kind(e) {
        Element::Pore(p) => c[p],
        Element::Throat(t) => {
            let [a, b] = network.throats().pores[t];
            0.5 * (c[a as usize] + c[b as usize])
        }
    }
}

impl ProfileLayout {
    /// The layout of `output` on `network` along `axis`.
    pub fn new(network: &Network, axis: Axis, output: &OutputSpec) -> ProfileLayout {
        let n = output.profile_slabs.max(1);
        let c = network.pores().coordinate(axis);
        let lo = c.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let (lo, hi) = if lo.is_finite() { (lo, hi) } else { (0.0, 0.0) };
        let len = hi - lo;
        let slab_edges_m: Vec<f64> = (0..=n)
            .map(|k| {
                if k == n {
                    hi
                } else {
                    lo + len * k as f64 / n as f64
                }
            })
            .collect();
        let window = output.interior_window;
        let n_e = network.n_elements();
        let pv = |e: usize| match network.elements().kind(e) {
            Element::Pore(p) => network.pores().volume[p] + network.pores().clay_volume[p],
            Element::Throat(t) => network.throats().volume[t] + network.throats().clay_volume[t],
        };
        let mut region = Vec::with_capacity(n_e);
        let mut slab_pore_volume_m3 = vec![0.0; n];
        let mut window_pore_volume_m3 = 0.0;
        for e in 0..n_e {
            let f = if len > 0.0 {
                (position(network, axis, e) - lo) / len
            } else {
                0.0
            };
            let slab = ((f * n as f64).floor().max(0.0) as usize).min(n - 1);
            slab_pore_volume_m3[slab] += pv(e);
            let inside = window.is_some_and(|[a, b]| f >= a && f <= b);
            if inside {
                window_pore_volume_m3 += pv(e);
            }
            region.push((slab + if inside { n } else { 0 }) as u32);
        }
        ProfileLayout {
            axis,
            span_m: [lo, hi],
            slab_edges_m,
            slab_pore_volume_m3,
            window,
            window_pore_volume_m3,
            region,
        }
    }

    /// Number of slabs.
    pub fn slabs(&self) -> usize {
        self.slab_pore_volume_m3.len()
    }

    /// The window along the axis, m.
    pub fn window_m(&self) -> Option<[f64; 2]> {
        let [lo, hi] = self.span_m;
        self.window
            .map(|[a, b]| [lo + (hi - lo) * a, lo + (hi - lo) * b])
    }

    /// Phase volumes of each slab at the engine's state.
    pub fn slab_volumes(&self, engine: &Engine<'_>) -> (Vec<RegionVolumes>, RegionVolumes) {
        let n = self.slabs();
        let r = engine.region_volumes(&self.region, 2 * n);
        let mut slabs = r[..n].to_vec();
        let mut window = RegionVolumes::default();
        for (s, &w) in slabs.iter_mut().zip(&r[n..]) {
            *s += w;
            window += w;
        }
        (slabs, window)
    }

    /// The profile (and window saturations) at the engine's state.
    pub fn measure(&self, engine: &Engine<'_>) -> PointProfile {
        let (slabs, window) = self.slab_volumes(engine);
        let ratio = |x: f64, pv: f64| if pv > 0.0 { x / pv } else { f64::NAN };
        PointProfile {
            slab_sw: slabs.iter().map(|s| ratio(s.water, s.pore)).collect(),
            slab_sn_trapped: slabs.iter().map(|s| ratio(s.oil_trapped, s.pore)).collect(),
            interior: (self.window.is_some() && window.pore > 0.0).then(|| WindowSaturation {
                sw: window.water / window.pore,
                sn: window.oil / window.pore,
                sn_trapped: window.oil_trapped / window.pore,
            }),
        }
    }

    /// What the run did about end effects, from its outcomes and their
    /// profiles (`profiles[i][k]` belongs to point `k` of process `i`).
    pub fn end_effects(
        &self,
        faces: DrainageFaces,
        outcomes: &[ProcessOutcome],
        profiles: &[Vec<PointProfile>],
    ) -> EndEffects {
        let total: f64 = self.slab_pore_volume_m3.iter().sum();
        let mut whole = RegionEndPoints::default();
        let mut interior = RegionEndPoints::default();
        let last = |i: usize| {
            profiles
                .get(i)
                .and_then(|p| p.last())
                .and_then(|p| p.interior)
        };
        if let Some(d) = outcomes.first() {
            whole.swi = Some(d.final_saturation.sw);
            whole.sni = Some(d.final_saturation.sn);
            interior.swi = last(0).map(|w| w.sw);
            interior.sni = last(0).map(|w| w.sn);
        }
        if let Some(i) = outcomes.get(1) {
            whole.snr = Some(i.final_saturation.sn_trapped);
            whole.sn_end_imbibition = Some(i.final_saturation.sn);
            interior.snr = last(1).map(|w| w.sn_trapped);
            interior.sn_end_imbibition = last(1).map(|w| w.sn);
        }
        let window = self.window.map(|fraction| InteriorWindow {
            fraction,
            range_m: self.window_m().unwrap_or(self.span_m),
            pore_volume_fraction: if total > 0.0 {
                self.window_pore_volume_m3 / total
            } else {
                0.0
            },
        });
        EndEffects {
            flow_axis: self.axis,
            sample_span_m: self.span_m,
            drainage_faces: faces,
            profile_slabs: self.slabs(),
            interior: window.as_ref().map(|_| interior),
            interior_window: window,
            whole_sample: whole,
        }
    }
}

/// Collects the profile of every candidate point of a process (an observer
/// of [`super::process::run_process_observed`]) and keeps those of the
/// recorded points.
#[derive(Debug, Default)]
pub struct ProfileRecorder {
    seen: Vec<((u64, u64), PointProfile)>,
}

impl ProfileRecorder {
    /// Records the profile of candidate point `p` in the engine's state.
    pub fn observe(&mut self, layout: &ProfileLayout, p: &Point, engine: &Engine<'_>) {
        let k = (p.events, p.pc_pa.to_bits());
        if !self.seen.iter().any(|(s, _)| *s == k) {
            self.seen.push((k, layout.measure(engine)));
        }
    }

    /// The profiles of the recorded `points`, in order (a point never
    /// observed gets an empty profile).
    pub fn finish(self, points: &[Point]) -> Vec<PointProfile> {
        points
            .iter()
            .map(|p| {
                let k = (p.events, p.pc_pa.to_bits());
                self.seen
                    .iter()
                    .find(|(s, _)| *s == k)
                    .map(|(_, v)| v.clone())
                    .unwrap_or(PointProfile {
                        slab_sw: Vec::new(),
                        slab_sn_trapped: Vec::new(),
                        interior: None,
                    })
            })
            .collect()
    }
}
