//! The displacement engine: one event queue, one state array and one
//! trapping search serve every process (drainage, imbibition, secondary
//! drainage) over the shared element index space (pores first, then
//! throats).
//!
//! - [`queue`]: thresholds ordered by capillary pressure, lazy deletion.
//! - [`state`]: occupancy columns.
//! - [`trapping`]: bounded interleaved split searches.
//! - [`drainage`] and [`imbibition`]: event thresholds and their effects,
//!   calling the single-element physics of [`crate::capillary`].
//! - [`saturation`]: phase volumes at a recorded point (parallel).
//! - [`events`]: the event loop (next threshold, apply, repeat).
//!
//! The event loop is sequential and deterministic; only the per-element
//! kernels (thresholds, saturations) run in parallel, with fixed grouping.

pub mod accounting;
pub mod drainage;
pub mod events;
pub mod imbibition;
pub mod queue;
pub mod saturation;
pub mod state;
pub mod trapping;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::capillary::Section;
use crate::geometry::Geometry;
use crate::network::{Boundary, Element, Elements, Network};
use crate::params::{DrainageFaces, ImbibitionFaces, MechanismOptions, OutletRule, Study};
use crate::wettability::ContactAngles;

use queue::{Order, ThresholdQueue};
use state::State;
use trapping::SplitSearch;

pub use events::{advance_limited, advance_to};

/// Fixed inputs of the engine.
#[derive(Clone, Debug)]
pub struct Setup<'a> {
    /// The network.
    pub network: &'a Network,
    /// Its derived geometry.
    pub geometry: &'a Geometry,
    /// Interfacial tension, N/m.
    pub sigma: f64,
    /// What the outlet lets through in drainage.
    pub outlet: OutletRule,
    /// Faces open to the displaced phase in imbibition.
    pub imbibition_faces: ImbibitionFaces,
    /// Mechanism switches and cooperative-filling weights.
    pub mechanisms: MechanismOptions,
    /// Seed of the per-element random draws of the mechanisms.
    pub seed: u64,
}

/// Which process the engine is running.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum Mode {
    /// No process yet.
    Idle,
    /// Drainage: the non-aqueous phase invades from the inlet.
    Drainage,
    /// Imbibition: water invades.
    Imbibition,
}

/// Counts of events by mechanism.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct EventCounts {
    /// Pores invaded by the non-aqueous phase (drainage).
    pub drainage_pores: u64,
    /// Throats invaded by the non-aqueous phase (drainage).
    pub drainage_throats: u64,
    /// Piston-like water filling of pores (`I_1`, or any `I_n` in oil-wet
    /// pores).
    pub piston_pores: u64,
    /// Piston-like water filling of throats.
    pub piston_throats: u64,
    /// Snap-off in pores.
    pub snap_off_pores: u64,
    /// Snap-off in throats.
    pub snap_off_throats: u64,
    /// Cooperative pore filling by `n`, index `n` (n ≥ 2 oil-filled
    /// throats left).
    pub cooperative: Vec<u64>,
    /// Oil layers formed.
    pub layers_formed: u64,
    /// Oil-layer collapses.
    pub layer_collapses: u64,
    /// Clusters of the non-aqueous phase that became trapped.
    pub trapped_oil_clusters: u64,
    /// Water clusters that became trapped.
    pub trapped_water_clusters: u64,
    /// Trapped clusters reconnected by the invading phase.
    pub reconnections: u64,
}

/// LiveState part of the engine (what a snapshot saves).
#[derive(Clone, Debug)]
pub struct LiveState {
    /// Occupancy.
    pub state: State,
    queue: ThresholdQueue,
    /// Oil-conducting elements connected to the inlet supply (drainage).
    connected: Vec<bool>,
    /// Drainage: element is in the queue already.
    queued: Vec<bool>,
    /// Event counts of the current process.
    pub counts: EventCounts,
    /// Events applied in the current process.
    pub events: u64,
    /// Resolved volume of oil-filled centres (incremental), m³.
    pub bulk_oil_volume: f64,
    /// Capillary pressure of breakthrough in the current process.
    pub breakthrough_pc: Option<f64>,
    next_ganglion: u32,
    /// Incremental saturation records.
    books: accounting::Books,
    /// Packed per-element flags for the searches ([`FLAG_FREE_OIL`],
    /// [`FLAG_WATER`]), kept in step with the state by `reaccount`.
    flags: Vec<u8>,
}

/// The element conducts oil (centre or layers) that is not trapped.
pub(crate) const FLAG_FREE_OIL: u8 = 1;
/// The element conducts water (bulk or films) that is not trapped.
pub(crate) const FLAG_WATER: u8 = 2;

/// The displacement engine.
#[derive(Clone, Debug)]
pub struct Engine<'a> {
    setup: Setup<'a>,
    /// The element index space (pores first, then throats).
    elements: Elements,
    /// Resolved volume per element, m³.
    volume: Vec<f64>,
    /// Clay volume per element, m³.
    clay: Vec<f64>,
    /// Bit `i`: corner `i` keeps water once the centre is drained (intrinsic
    /// angle below π/2 − βᵢ; Concus & Finn 1969).
    wet: Vec<u8>,
    /// Contact angles (altered between drainage and imbibition).
    pub angles: ContactAngles,
    /// LiveState state.
    pub live: LiveState,
    mode: Mode,
    search: SplitSearch,
    /// Drainage entry thresholds of the current drainage, Pa.
    entry: Vec<f64>,
    /// Piston-like imbibition thresholds of the current imbibition, Pa.
    piston: Vec<f64>,
    /// Snap-off thresholds of the current imbibition, Pa (NaN if none).
    snap: Vec<f64>,
    /// Cooperative filling scale `1/r̄_t`, 1/m.
    coop_scale: f64,
    pore_volume: f64,
    /// Corner-water coefficient of each element for the current process
    /// (see [`accounting`]).
    corner_coef: Vec<f64>,
    /// `sin β` of the (up to three distinct) corners of each element;
    /// squares use the first for all four (`cos β` follows, β < π/2).
    corner_sin: Vec<[f64; 3]>,
    /// `[cos θr, cos θa]` of the pinned receding and the advancing angle of
    /// each element, for the current process (`sin θ ≥ 0` follows, θ ≤ π).
    angle_cos: Vec<[f64; 2]>,
    /// Σ clay volume, m³.
    clay_total: f64,
    /// Σ resolved volume, m³.
    resolved_total: f64,
    /// Pores at any external face, which enter the non-aqueous phase and
    /// let water out in drainage ([`DrainageFaces::All`]); empty: the inlet
    /// face enters, the outlet face lets water out.
    all_faces: Vec<bool>,
    /// False when the defending phase of a drainage can never be trapped
    /// (an evacuated sample under mercury injection).
    water_trapping: bool,
}

impl<'a> Setup<'a> {
    /// The engine inputs a study asks for on `network` with its `geometry`.
    pub fn of_study(network: &'a Network, geometry: &'a Geometry, study: &Study) -> Setup<'a> {
        Setup {
            network,
            geometry,
            sigma: study.fluids.interfacial_tension_n_per_m,
            outlet: study.outlet,
            imbibition_faces: study.imbibition_faces,
            mechanisms: study.mechanisms.clone(),
            seed: study.seed,
        }
    }
}

impl<'a> Engine<'a> {
    /// A fully water-saturated engine for `study`, with the study's
    /// intrinsic contact angles (seeded).
    pub fn for_study(network: &'a Network, geometry: &'a Geometry, study: &Study) -> Engine<'a> {
        let angles = ContactAngles::intrinsic(&study.wettability, network.n_elements(), study.seed);
        let mut engine = Engine::new(Setup::of_study(network, geometry, study), angles);
        engine.set_drainage_faces(study.drainage_faces);
        engine
    }

    /// Chooses the faces through which the non-aqueous phase enters (and
    /// water leaves) in drainage. [`DrainageFaces::All`] takes the pores at
    /// the six faces of the sample: the inlet and outlet pores along the
    /// flow axis and, along the other two axes, the pores of
    /// [`crate::connectivity::face_masks`] (centres within half the median
    /// throat length of the extreme centre coordinate).
    pub fn set_drainage_faces(&mut self, faces: DrainageFaces) {
        self.all_faces = match faces {
            DrainageFaces::Inlet => Vec::new(),
            DrainageFaces::All => {
                let net = self.setup.network;
                let mut mask = vec![false; net.n_pores()];
                for axis in [
                    crate::network::Axis::X,
                    crate::network::Axis::Y,
                    crate::network::Axis::Z,
                ] {
                    let (lo, hi) = crate::connectivity::face_masks(net, axis);
                    for (m, (a, b)) in mask.iter_mut().zip(lo.iter().zip(&hi)) {
                        *m |= *a || *b;
                    }
                }
                mask
            }
        };
    }

    /// Chooses whether drainage traps the defending (wetting) phase when
    /// it loses every path to an exit (the default, `true`). Mercury
    /// injection into an evacuated sample sets `false`: the defending
    /// phase is a vacuum, which never holds the invading phase back.
    pub fn set_water_trapping(&mut self, on: bool) {
        self.water_trapping = on;
    }

    /// The faces through which the non-aqueous phase enters in drainage.
    pub fn drainage_faces(&self) -> DrainageFaces {
        if self.all_faces.is_empty() {
            DrainageFaces::Inlet
        } else {
            DrainageFaces::All
        }
    }

    /// A fully water-saturated engine.
    pub fn new(setup: Setup<'a>, angles: ContactAngles) -> Engine<'a> {
        let net = setup.network;
        let n_e = net.n_elements();
        let mut volume = Vec::with_capacity(n_e);
        volume.extend_from_slice(&net.pores().volume);
        volume.extend_from_slice(&net.throats().volume);
        let mut clay = Vec::with_capacity(n_e);
        clay.extend_from_slice(&net.pores().clay_volume);
        clay.extend_from_slice(&net.throats().clay_volume);
        let g = setup.geometry;
        let wet: Vec<u8> = (0..n_e)
            .map(|e| {
                let mut m = 0u8;
                for (i, &b) in g.corners(e).as_slice().iter().enumerate() {
                    if angles.pinned_receding[e] < std::f64::consts::FRAC_PI_2 - b {
                        m |= 1 << i;
                    }
                }
                m
            })
            .collect();
        let rt = &net.throats().radius;
        let mean_rt = if rt.is_empty() {
            1.0
        } else {
            rt.iter().sum::<f64>() / rt.len() as f64
        };
        let pore_volume = net.pore_volume();
        let corner_sin: Vec<[f64; 3]> = (0..n_e)
            .into_par_iter()
            .map(|e| g.half_angles[e].map(f64::sin))
            .collect();
        let clay_total = clay.iter().sum();
        let resolved_total = volume.iter().sum();
        Engine {
            elements: net.elements(),
            volume,
            clay,
            wet,
            angles,
            live: LiveState {
                state: State::water_filled(n_e),
                queue: ThresholdQueue::new(n_e, Order::Ascending),
                connected: vec![false; n_e],
                queued: vec![false; n_e],
                counts: EventCounts::default(),
                events: 0,
                bulk_oil_volume: 0.0,
                breakthrough_pc: None,
                next_ganglion: 0,
                books: Default::default(),
                flags: vec![FLAG_WATER; n_e],
            },
            mode: Mode::Idle,
            search: SplitSearch::new(n_e),
            entry: Vec::new(),
            piston: Vec::new(),
            snap: Vec::new(),
            coop_scale: 1.0 / mean_rt,
            pore_volume,
            corner_coef: Vec::new(),
            corner_sin,
            angle_cos: Vec::new(),
            clay_total,
            resolved_total,
            all_faces: Vec::new(),
            water_trapping: true,
            setup,
        }
    }

    /// The fixed inputs.
    pub fn setup(&self) -> &Setup<'a> {
        &self.setup
    }

    /// The occupancy state.
    pub fn state(&self) -> &State {
        &self.live.state
    }

    /// The process being run.
    pub fn mode(&self) -> Mode {
        self.mode
    }

    /// Total pore volume (clay included), m³.
    pub fn pore_volume(&self) -> f64 {
        self.pore_volume
    }

    /// Resolved volume of each element, m³.
    pub fn volumes(&self) -> &[f64] {
        &self.volume
    }

    /// Clay volume of each element, m³.
    pub fn clay_volumes(&self) -> &[f64] {
        &self.clay
    }

    /// Wet-corner mask of each element.
    pub fn wet_corners(&self) -> &[u8] {
        &self.wet
    }

    /// The element index space.
    pub fn elements(&self) -> Elements {
        self.elements
    }

    /// Number of pores (the first element indices).
    pub fn n_pores(&self) -> usize {
        self.elements.n_pores()
    }

    /// Elements visited by trapping searches and searches run.
    pub fn trapping_cost(&self) -> (u64, u64) {
        (self.search.visited_total, self.search.searches)
    }

    /// Saves the dynamic state (for bisection on a stopping rule).
    pub fn snapshot(&self) -> LiveState {
        self.live.clone()
    }

    /// Restores a snapshot taken during the current process.
    pub fn restore(&mut self, d: LiveState) {
        self.live = d;
    }

    /// Cross-section of element `e`.
    #[inline]
    pub fn section(&self, e: usize) -> Section<'_> {
        let g = self.setup.geometry;
        let n = g.shape[e].n_corners();
        let corners: &[f64] = if n == 4 {
            &SQUARE_CORNERS
        } else {
            &g.half_angles[e][..n]
        };
        Section {
            radius: g.radius[e],
            shape_factor: g.shape_factor[e],
            corners,
        }
    }

    /// Calls `f` on every neighbour of element `e` (a pore's throats, a
    /// throat's two pores).
    #[inline]
    pub fn for_each_neighbour(&self, e: usize, mut f: impl FnMut(usize)) {
        match self.elements.kind(e) {
            Element::Pore(p) => {
                for &t in self.setup.network.adjacency().throats_of(p) {
                    f(self.elements.of_throat(t as usize));
                }
            }
            Element::Throat(t) => {
                let [a, b] = self.setup.network.throats().pores[t];
                f(a as usize);
                f(b as usize);
            }
        }
    }

    /// The neighbours of element `e` as a small inline list.
    #[inline]
    pub fn neighbours(&self, e: usize) -> Neighbours {
        let mut v = Neighbours::new();
        self.neighbours_into(e, &mut v);
        v
    }

    /// Appends the neighbours of element `e` to `out`.
    #[inline]
    pub fn neighbours_into(&self, e: usize, out: &mut Neighbours) {
        let elements = self.elements;
        match elements.kind(e) {
            Element::Pore(p) => out.extend(
                self.setup
                    .network
                    .adjacency()
                    .throats_of(p)
                    .iter()
                    .map(|&t| elements.of_throat(t as usize)),
            ),
            Element::Throat(t) => {
                let [a, b] = self.setup.network.throats().pores[t];
                out.push(a as usize);
                out.push(b as usize);
            }
        }
    }

    /// The pore's face tag (throats are interior).
    #[inline]
    pub fn boundary(&self, e: usize) -> Boundary {
        match self.elements.kind(e) {
            Element::Pore(p) => self.setup.network.pores().boundary[p],
            Element::Throat(_) => Boundary::Interior,
        }
    }

    /// Applies the wettability alteration after primary drainage (see
    /// [`ContactAngles::alter`]).
    pub fn alter_wettability(&mut self, spec: &crate::params::WettabilitySpec) {
        let g = self.setup.geometry;
        let net = self.setup.network;
        let preset = net.oil_wet_marks();
        self.angles.alter(
            spec,
            &self.live.state.contacted,
            self.elements.n_pores(),
            &net.throats().pores,
            &g.radius,
            preset.as_deref(),
            self.setup.seed,
        );
    }

    /// Breadth-first flood from `seeds` through the elements for which
    /// `through` holds: marks them in `seen` (seeds included, which must
    /// not be marked yet) and returns them in visiting order. The
    /// whole-network floods at the start of a process use it; the per-event
    /// searches are the bounded [`trapping::SplitSearch`].
    fn flood(
        &self,
        seeds: &[usize],
        seen: &mut [bool],
        through: impl Fn(&Self, usize) -> bool,
    ) -> Vec<u32> {
        let mut found: Vec<u32> = seeds.iter().map(|&e| e as u32).collect();
        for &e in seeds {
            seen[e] = true;
        }
        let mut k = 0;
        while k < found.len() {
            let x = found[k] as usize;
            k += 1;
            self.for_each_neighbour(x, |n| {
                if !seen[n] && through(self, n) {
                    seen[n] = true;
                    found.push(n as u32);
                }
            });
        }
        found
    }

    fn new_ganglion(&mut self) -> u32 {
        let g = self.live.next_ganglion;
        self.live.next_ganglion += 1;
        g
    }
}

const SQUARE_CORNERS: [f64; 4] = [std::f64::consts::FRAC_PI_4; 4];

impl Engine<'_> {
    /// `(sin β, cos β)` of corner `i` of element `e`.
    #[inline]
    fn corner_sin_cos(&self, e: usize, i: usize) -> (f64, f64) {
        let s = self.corner_sin[e][i.min(2)];
        (s, cos_from_sin(s))
    }

    /// `[sin θr, cos θr, sin θa, cos θa]` of the pinned receding and the
    /// advancing angle of element `e` for the current process.
    #[inline]
    fn angle_trig(&self, e: usize) -> [f64; 4] {
        let [cr, ca] = self.angle_cos[e];
        [cos_from_sin(cr), cr, cos_from_sin(ca), ca]
    }
}

/// `√((1 − x)(1 + x))`: the cosine of an angle in `[0, π/2]` from its sine,
/// or the sine of an angle in `[0, π]` from its cosine (the factored form
/// keeps full precision near `|x| = 1`, where `1 − x` is exact).
#[inline]
fn cos_from_sin(x: f64) -> f64 {
    ((1.0 - x) * (1.0 + x)).max(0.0).sqrt()
}

/// Neighbours of one element, inline up to 16 (spills to the heap beyond).
pub type Neighbours = smallvec::SmallVec<[usize; 16]>;
