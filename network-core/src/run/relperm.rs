//! Relative permeability and resistivity index at a displacement state.
//!
//! At a recorded point every element gets a conductance per phase:
//! - the phase filling the centre: `g = k A_p² G/μ` with the element's
//!   shape factor `G`, Poiseuille factor `k` (Patzek & Silin 2001, J.
//!   Colloid Interface Sci. 236:295–304) and the area `A_p` the phase holds
//!   there (common practice, e.g. Valvatne & Blunt 2004);
//! - water in the corners of an oil-filled element: the no-slip corner-film
//!   conductance of Patzek & Kristensen (2001, J. Colloid Interface Sci.
//!   236:305–317) per corner ([`capillary::corner_conductance_b`]);
//! - oil in layers: the same corner-film form applied to the layer's area
//!   and outer contact (an approximation: no published layer conductance is
//!   implemented; it overstates the layer's conductance);
//! - a trapped phase conducts nothing.
//!
//! Element values combine per conduit by the series rule
//! ([`flow::conduit_conductances`]) and one Kirchhoff solve per phase gives
//! its flow between the faces, taken from the dissipation of the solution
//! ([`FlowSolution::dissipation`], accurate to the square of the solver's
//! error); only the phase's clusters that join inlet and outlet carry it.
//! `k_r = Q_p / Q_single-phase` at the same pressure drop and viscosity.
//! The resistivity index `RI = R_t/R_o = I_o/I_t` comes from the same
//! solve on the water's electrical conductance `σ_w (A_w + A_clay/τ)`
//! (Archie 1942 defines `RI = R_t/R_o`).

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::capillary;
use crate::engine::Engine;
use crate::flow::solver::{
    FlowSolution, KeptHierarchy, PressureSystem, SolveError, SolveInput, SolveOptions,
};
use crate::flow::{self, FlowError, conduit_conductances, element_clay_areas};
use crate::geometry::Shape;
use crate::network::{Axis, Network};

/// Flow results at one recorded point.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct FlowPoint {
    /// Water relative permeability.
    pub krw: f64,
    /// Non-aqueous relative permeability.
    pub krn: f64,
    /// Resistivity index `R_t/R_o` (infinite when the water does not span).
    pub ri: f64,
    /// Conjugate-gradient iterations of the three solves.
    pub iterations: usize,
}

/// Per-element conductances of each phase at one state.
#[derive(Clone, Debug, PartialEq)]
pub struct PhaseConductances {
    /// Water, hydraulic (unit viscosity), m⁴/(Pa·s)·Pa·s = m⁴.
    pub water: Vec<f64>,
    /// Non-aqueous phase, hydraulic (unit viscosity).
    pub oil: Vec<f64>,
    /// Water, electrical (unit brine conductivity, clay included), m².
    pub electrical: Vec<f64>,
}

/// Conductances of every element at the engine's current state (unit
/// viscosity and unit brine conductivity; `clay_tortuosity` as in
/// [`flow::element_electrical_conductances`]).
pub fn phase_conductances(engine: &Engine<'_>, clay_tortuosity: f64) -> PhaseConductances {
    let net = engine.setup().network;
    let geom = engine.setup().geometry;
    let clay = element_clay_areas(net);
    let s = engine.state();
    let n = net.n_elements();
    let per: Vec<(f64, f64, f64)> = (0..n)
        .into_par_iter()
        .map(|e| {
            let shape = geom.shape[e];
            let k = shape.conductance_factor();
            let g = geom.shape_factor[e];
            let area = geom.area(e);
            let electrical = |aw: f64| {
                if s.water_trapped[e] {
                    0.0
                } else {
                    aw + clay[e] / clay_tortuosity
                }
            };
            if s.oil[e] {
                // The corner menisci once: their areas give the water area
                // (as in `Engine::element_areas`) and the film conductances.
                let corners = engine.section(e).corners;
                let (mut aw, mut gw) = (0.0, 0.0);
                for (i, m) in engine.corner_menisci(e).iter().enumerate() {
                    if let Some(m) = m {
                        let beta = corners[i];
                        let a = m.area(beta);
                        aw += a;
                        if !s.water_trapped[e] {
                            gw += capillary::corner_conductance_b(a, m.b, m.theta_h, beta, 1.0);
                        }
                    }
                }
                let aw = aw.clamp(0.0, area);
                let elec = electrical(aw);
                let go = if s.oil_trapped[e] {
                    0.0
                } else {
                    capillary::bulk_conductance(k, area - aw, g, 1.0)
                };
                (gw, go, elec)
            } else {
                let (aw, ao_layer) = engine.element_areas(e);
                let elec = electrical(aw);
                let gw = if s.water_trapped[e] {
                    0.0
                } else {
                    capillary::bulk_conductance(k, aw, g, 1.0)
                };
                let mut go = 0.0;
                if ao_layer > 0.0 && !s.oil_trapped[e] && shape != Shape::Circle {
                    let corners = engine.section(e).corners;
                    let n_layers = s.layers[e].count_ones().max(1) as f64;
                    for (i, &beta) in corners.iter().enumerate() {
                        if s.layers[e] & (1 << i) != 0 {
                            // Layer area split evenly over the layered corners.
                            let a = ao_layer / n_layers;
                            let b = (a / capillary::corner_area_b(
                                1.0,
                                std::f64::consts::FRAC_PI_2 - beta,
                                beta,
                            ))
                            .sqrt();
                            go += capillary::corner_conductance_b(
                                a,
                                b,
                                std::f64::consts::FRAC_PI_2 - beta,
                                beta,
                                1.0,
                            );
                        }
                    }
                }
                (gw, go, elec)
            }
        })
        .collect();
    PhaseConductances {
        water: per.iter().map(|x| x.0).collect(),
        oil: per.iter().map(|x| x.1).collect(),
        electrical: per.iter().map(|x| x.2).collect(),
    }
}

/// Reusable solver state for relative permeability along one axis: one
/// pressure system shared by the three solves of a point, the conduit
/// conductances and last solution (warm start) of each, and the
/// single-phase references.
///
/// The flow of each phase is taken from the dissipation of its solve
/// ([`FlowSolution::dissipation`]), whose error is quadratic in the
/// pressure error, so a loose solver tolerance (10⁻⁶) still gives `k_r` and
/// RI to about 10⁻⁷ relative.
///
/// Multigrid hierarchies: each phase has its own sequence of solves, and a
/// phase may keep its hierarchy from one point to the next
/// ([`PressureSystem::take_hierarchy`]): the hierarchy built for the
/// previous point's matrix is then the preconditioner of the next one (any
/// fixed SPD V-cycle is a valid CG preconditioner; convergence is checked
/// on the true residual of the new system). It serves while the new set of
/// unknowns lies inside the one it was built for (see
/// [`crate::flow::solver`] for why the restricted cycle is valid) and
/// is rebuilt during a solve that runs past twice, and before the next
/// solve after one that needed more than 1.5 times, the iterations per
/// decade of residual reduction of the solve that built it.
///
/// Only the electrical solve keeps its hierarchy ([`REUSE_ELECTRIC`]): on
/// the kr benchmark (97 336 pores, 20 points per process) a kept
/// hierarchy cost the electrical solve 1–3 iterations more than a fresh
/// one, far less than a build (about 13 iterations' worth there), but the
/// water hydraulic solve 8–13 more (bulk water giving way to corner films
/// changes conductances by orders of magnitude) and the oil solve, whose
/// set of unknowns mostly grows, more still; see the README's performance
/// section for the totals. The other solves build their own hierarchy,
/// except when the warm start already meets the tolerance. At most two
/// hierarchies are alive at a time.
pub struct RelpermSolver {
    system: PressureSystem,
    water: Phase,
    oil: Phase,
    electric: Phase,
    inlet: Vec<bool>,
    outlet: Vec<bool>,
    active: Vec<bool>,
    q_single: f64,
    i_single: f64,
    opts: SolveOptions,
    clay_tortuosity: f64,
    /// Seconds spent in solves (for the cost report).
    pub solve_seconds: f64,
    /// Solves run, multigrid hierarchies built, conjugate-gradient
    /// iterations (for the cost report).
    pub stats: SolveStats,
}

/// Whether the water hydraulic solve keeps its hierarchy between points.
pub const REUSE_WATER: bool = false;
/// Whether the non-aqueous hydraulic solve keeps its hierarchy.
pub const REUSE_OIL: bool = false;
/// Whether the electrical solve keeps its hierarchy.
pub const REUSE_ELECTRIC: bool = true;

/// Counters of the flow solves of a run.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct SolveStats {
    /// Pressure solves.
    pub solves: usize,
    /// Multigrid hierarchies built.
    pub hierarchies_built: usize,
    /// Solves that started with a hierarchy kept from an earlier solve of
    /// the same phase (those that found it poor rebuilt it during the
    /// solve and count in `hierarchies_built` too).
    #[serde(default)]
    pub hierarchies_reused: usize,
    /// Conjugate-gradient iterations over all solves.
    pub iterations: usize,
}

/// One phase's conduit conductances, warm start and kept multigrid
/// hierarchy.
struct Phase {
    conduit: Vec<f64>,
    warm: Option<Vec<f64>>,
    /// Whether the phase keeps its hierarchy between points.
    reuse: bool,
    amg: Option<KeptHierarchy>,
}

impl Phase {
    fn new(network: &Network, reuse: bool) -> Phase {
        Phase {
            conduit: vec![0.0; network.n_throats()],
            warm: None,
            reuse,
            amg: None,
        }
    }
}

impl RelpermSolver {
    /// Water pressure of every pore from the last water solve, for a unit
    /// pressure drop (inlet 1, outlet 0; NaN outside the water's flowing
    /// clusters); `None` before any or when the water did not span.
    pub fn water_pressure(&self) -> Option<&[f64]> {
        self.water.warm.as_deref()
    }

    /// Sets up the solves along `axis` and computes the single-phase
    /// references (one hydraulic and one electrical solve).
    pub fn new(
        network: &Network,
        axis: Axis,
        opts: SolveOptions,
        clay_tortuosity: f64,
    ) -> Result<RelpermSolver, FlowError> {
        let mut s = RelpermSolver::unset(network, axis, opts, clay_tortuosity);
        let g = flow::element_hydraulic_conductances(network, 1.0);
        conduit_conductances(network, &g, &mut s.water.conduit)?;
        drop(g);
        let (q, _) = s
            .solve(network, Which::Water)
            .map_err(FlowError::Hydraulic)?;
        let ge = flow::element_electrical_conductances(network, 1.0, clay_tortuosity);
        conduit_conductances(network, &ge, &mut s.electric.conduit)?;
        drop(ge);
        let (i, _) = s
            .solve(network, Which::Electric)
            .map_err(FlowError::Electrical)?;
        s.finish_references(network, axis, q, i)?;
        Ok(s)
    }

    /// [`RelpermSolver::new`] with the single-phase references taken from
    /// the solves of [`flow::permeability`] (rescaled to unit values) instead
    /// of solving again; their fields are the warm starts of the first
    /// water and electrical solves. `clay_tortuosity` must be the one of
    /// those solves.
    pub(crate) fn with_references(
        network: &Network,
        axis: Axis,
        opts: SolveOptions,
        clay_tortuosity: f64,
        refs: flow::UnitReferences,
    ) -> Result<RelpermSolver, FlowError> {
        let mut s = RelpermSolver::unset(network, axis, opts, clay_tortuosity);
        // The check of `PressureSystem::solve` (every pore is active here).
        if let Some(pore) = (0..network.n_pores()).find(|&i| s.inlet[i] && s.outlet[i]) {
            return Err(FlowError::Hydraulic(SolveError::FaceOverlap { pore }));
        }
        s.finish_references(network, axis, refs.q, refs.i)?;
        s.water.warm = Some(refs.pressure);
        s.electric.warm = Some(refs.potential);
        Ok(s)
    }

    fn unset(
        network: &Network,
        axis: Axis,
        opts: SolveOptions,
        clay_tortuosity: f64,
    ) -> RelpermSolver {
        let (inlet, outlet) = crate::connectivity::face_masks(network, axis);
        RelpermSolver {
            system: PressureSystem::new(network),
            water: Phase::new(network, REUSE_WATER),
            oil: Phase::new(network, REUSE_OIL),
            electric: Phase::new(network, REUSE_ELECTRIC),
            inlet,
            outlet,
            active: vec![true; network.n_pores()],
            q_single: 0.0,
            i_single: 0.0,
            opts,
            clay_tortuosity,
            solve_seconds: 0.0,
            stats: SolveStats::default(),
        }
    }

    /// Keeps the single-phase flow and current (both must be positive).
    fn finish_references(
        &mut self,
        network: &Network,
        axis: Axis,
        q: f64,
        i: f64,
    ) -> Result<(), FlowError> {
        let s = self;
        if !(q > 0.0 && i > 0.0) {
            return Err(FlowError::NoSpanningCluster {
                axis,
                n_inlet: s.inlet.iter().filter(|&&x| x).count(),
                n_outlet: s.outlet.iter().filter(|&&x| x).count(),
                n_components: crate::connectivity::Components::of(network).len(),
            });
        }
        s.q_single = q;
        s.i_single = i;
        Ok(())
    }

    /// Which phases keep their multigrid hierarchy between points (default
    /// [`REUSE_WATER`], [`REUSE_OIL`], [`REUSE_ELECTRIC`]); for comparisons.
    /// Turning one off drops its kept hierarchy.
    pub fn set_hierarchy_reuse(&mut self, water: bool, oil: bool, electric: bool) {
        for (phase, reuse) in [
            (&mut self.water, water),
            (&mut self.oil, oil),
            (&mut self.electric, electric),
        ] {
            phase.reuse = reuse;
            if !reuse {
                phase.amg = None;
            }
        }
    }

    /// Relative permeabilities and resistivity index at the engine's state.
    pub fn point(&mut self, engine: &Engine<'_>) -> Result<FlowPoint, FlowError> {
        let t0 = std::time::Instant::now();
        let net = engine.setup().network;
        let pc = phase_conductances(engine, self.clay_tortuosity);
        conduit_conductances(net, &pc.water, &mut self.water.conduit)?;
        conduit_conductances(net, &pc.oil, &mut self.oil.conduit)?;
        conduit_conductances(net, &pc.electrical, &mut self.electric.conduit)?;
        drop(pc);
        let (qw, iw) = self
            .solve(net, Which::Water)
            .map_err(FlowError::Hydraulic)?;
        let (qo, io) = self.solve(net, Which::Oil).map_err(FlowError::Hydraulic)?;
        let (ie, ii) = self
            .solve(net, Which::Electric)
            .map_err(FlowError::Electrical)?;
        self.solve_seconds += t0.elapsed().as_secs_f64();
        Ok(FlowPoint {
            krw: qw / self.q_single,
            krn: qo / self.q_single,
            ri: if ie > 0.0 {
                self.i_single / ie
            } else {
                f64::INFINITY
            },
            iterations: iw + io + ii,
        })
    }

    /// Solves one phase with its conduit conductances (inlet at 1, outlet
    /// at 0) and returns the flow `D/Δp` (0 when the phase does not span)
    /// and the iterations.
    fn solve(&mut self, network: &Network, which: Which) -> Result<(f64, usize), SolveError> {
        let phase = match which {
            Which::Water => &mut self.water,
            Which::Oil => &mut self.oil,
            Which::Electric => &mut self.electric,
        };
        self.system.put_hierarchy(phase.amg.take());
        self.opts.reuse_hierarchy = phase.reuse;
        let result = self.system.solve(
            &SolveInput {
                conduit_g: &phase.conduit,
                active: &self.active,
                inlet: &self.inlet,
                outlet: &self.outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: phase.warm.as_deref(),
            },
            &self.opts,
        );
        phase.amg = self.system.take_hierarchy();
        match result {
            Ok(sol) => {
                self.stats.solves += 1;
                self.stats.hierarchies_built += sol.preconditioner_built as usize;
                self.stats.hierarchies_reused += sol.preconditioner_reused as usize;
                self.stats.iterations += sol.iterations;
                // Δp = 1.
                let q = sol.dissipation(network, &phase.conduit);
                let it = sol.iterations;
                let FlowSolution { pressure, .. } = sol;
                phase.warm = Some(pressure);
                Ok((q, it))
            }
            Err(SolveError::NoSpanningCluster { .. }) => {
                phase.warm = None;
                Ok((0.0, 0))
            }
            Err(e) => Err(e),
        }
    }
}

/// The three solves of a point.
#[derive(Clone, Copy)]
enum Which {
    Water,
    Oil,
    Electric,
}
