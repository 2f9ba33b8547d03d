//! The pressure (or potential) solve of the pore graph.
//!
//! Kirchhoff's law at every unknown pore `i`,
//!
//! $$\sum_j g_{ij}\,(p_i - p_j) = 0,$$
//!
//! with conduit conductances `gᵢⱼ` (m³/(Pa·s) for flow, S for current) and
//! fixed (Dirichlet) pressures `p_in` on the active inlet pores and `p_out`
//! on the active outlet pores, is a symmetric positive definite system (a
//! weighted graph Laplacian with Dirichlet rows removed) on the pores of the
//! *flowing set*: the active pores whose cluster, joined by conduits of
//! positive conductance, holds both an inlet and an outlet pore. The other
//! active pores (dead clusters touching one face or none) and the inactive
//! pores are excluded and counted.
//!
//! It is solved by preconditioned conjugate gradients (Hestenes & Stiefel
//! 1952, J. Res. Natl. Bur. Stand. 49:409–436) to a relative residual
//! `‖b − A x‖₂/‖b‖₂` of [`SolveOptions::tolerance`], checked on the true
//! residual. Preconditioners: Jacobi (diagonal) or one algebraic-multigrid
//! V-cycle (see [`AmgOptions`]; classical Ruge–Stüben by default, smoothed
//! or plain aggregation on request).
//!
//! [`PressureSystem`] copies the network adjacency once; each
//! [`PressureSystem::solve`] only writes values and the mask of unknowns. The
//! multigrid hierarchy is kept between solves while the set of unknowns stays
//! inside the one it was built for (only the finest level takes the new
//! values), and rebuilt when new unknowns appear or when a solve shows the
//! kept hierarchy has become poor: during the solve, when CG needs more than
//! twice the iterations per decade of residual reduction of the solve that
//! built it (the hierarchy is rebuilt on the spot and CG restarts from its
//! current iterate), and for the next solve when a solve needed more than
//! 1.5 times as many.
//!
//! A kept hierarchy is a valid preconditioner of the new matrix `A`: with
//! the Jacobi smoother `S` taken from the current `A` (a convergent one,
//! `ω = 4/(3ρ)`), the V-cycle is `M⁻¹ = S̄ + (I − Sᵀ A) P B⁻¹ Pᵀ (I − A S)`
//! with `S̄ = S + Sᵀ − Sᵀ A S` symmetric positive definite and `B` the
//! (SPD) cycle of the kept coarse levels, so `M⁻¹` is SPD whatever the
//! coarse levels were built from. The pressures are numbered on the whole
//! network (pores outside the unknowns have empty rows), so a hierarchy
//! built for a larger set of unknowns applies as it is; its output is
//! restricted to the present unknowns (`Π M⁻¹ Π` with `Π` the mask, SPD on
//! them), since its prolongators may reach pores that have dropped out.

use rayon::prelude::*;
use thiserror::Error;

use super::amg::Amg;
pub use super::amg::{AmgOptions, Method, Smoother};
use super::sparse::{FineOperator, LinOp, dot};
use crate::Network;
use crate::numeric::{CHUNK, par_sum};

/// The preconditioner of conjugate gradients.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq)]
pub enum Preconditioner {
    /// Diagonal (Jacobi) scaling: cheapest per iteration, many iterations on
    /// large heterogeneous networks.
    Jacobi,
    /// One algebraic-multigrid V-cycle per iteration (the default).
    Amg(AmgOptions),
}

impl Default for Preconditioner {
    fn default() -> Self {
        Preconditioner::Amg(AmgOptions::default())
    }
}

/// Options of a pressure solve.
#[derive(Clone, Debug, PartialEq)]
pub struct SolveOptions {
    /// Target relative residual `‖b − A x‖₂/‖b‖₂` (default `1e-10`; must
    /// be positive).
    pub tolerance: f64,
    /// Iteration limit of conjugate gradients (default 20 000).
    pub max_iterations: usize,
    /// Preconditioner (default: classical algebraic multigrid with Jacobi
    /// smoothing, the fastest measured; see the solver benchmark).
    pub preconditioner: Preconditioner,
    /// Keep the multigrid hierarchy between solves whose unknowns lie
    /// inside those it was built for (default `true`). A kept hierarchy is
    /// still a valid SPD preconditioner (module documentation), only a less
    /// exact one. It is rebuilt in the middle of
    /// a solve that runs past twice the iterations per decade of residual
    /// reduction of the solve that built it (CG then continues from its
    /// current iterate), and before the next solve when a solve needed more
    /// than 1.5 times as many. With `false` the hierarchy is freed at the
    /// end of each solve.
    pub reuse_hierarchy: bool,
}

impl Default for SolveOptions {
    fn default() -> Self {
        SolveOptions {
            tolerance: 1e-10,
            max_iterations: 20_000,
            preconditioner: Preconditioner::default(),
            reuse_hierarchy: true,
        }
    }
}

/// The result of a pressure solve.
#[derive(Clone, Debug, PartialEq)]
pub struct FlowSolution {
    /// Pressure of every pore (Pa, or V for the electrical analogue);
    /// `NaN` for excluded pores, where it is undefined.
    pub pressure: Vec<f64>,
    /// Whether each pore belongs to the flowing set (unknowns and the fixed
    /// face pores of spanning clusters).
    pub flowing: Vec<bool>,
    /// Total flow out of the inlet pores into the rest, `Σ g (p_in − pⱼ)`
    /// (m³/s, or A).
    pub inflow: f64,
    /// Total flow into the outlet pores from the rest (m³/s, or A).
    pub outflow: f64,
    /// `|inflow − outflow| / max(|inflow|, |outflow|)` (0 when both are 0).
    pub imbalance: f64,
    /// Conjugate-gradient iterations.
    pub iterations: usize,
    /// Final true relative residual `‖b − A x‖₂/‖b‖₂`.
    pub relative_residual: f64,
    /// Number of unknown pores.
    pub n_unknowns: usize,
    /// Number of pores outside the flowing set (inactive or in clusters
    /// that do not connect inlet and outlet).
    pub n_excluded: usize,
    /// Whether this solve (re)built the multigrid hierarchy.
    pub preconditioner_built: bool,
    /// Whether this solve started with a kept multigrid hierarchy (built
    /// for an earlier matrix; when it proved poor during the solve,
    /// [`FlowSolution::preconditioner_built`] is set too).
    pub preconditioner_reused: bool,
    /// Levels of the multigrid hierarchy used (0 for Jacobi).
    pub amg_levels: usize,
    /// Stored entries of all multigrid levels over those of the finest
    /// (0 for Jacobi).
    pub operator_complexity: f64,
}

impl FlowSolution {
    /// Dissipation `D = Σ_t g_t (p_a − p_b)²` over the conducting throats
    /// inside the flowing set (m³/s·Pa = W, or A·V), with `conduit_g` the
    /// conductances of the solve.
    ///
    /// At the exact solution `D = Q_in (p_in − p_out)` (Tellegen 1952,
    /// "A general network theorem, with applications", Philips Res. Rep.
    /// 7:259–269): power dissipated equals power supplied. For an
    /// approximate solution `x = x* + e` of the unknowns, write
    /// `D(x) = xᵀA x − 2 xᵀb + c` (`A`, `b` the assembled system, `c` the
    /// part of the throats between fixed pores); since `A x* = b`,
    ///
    /// $$D(x^* + e) = D(x^*) + e^{\mathsf T} A\, e,$$
    ///
    /// so `D/(p_in − p_out)` overestimates the flow by `‖e‖²_A/(p_in − p_out)`
    /// only: an error quadratic in the pressure error (analytic; conjugate
    /// gradients minimise exactly this `‖e‖_A`), where the face flows
    /// [`FlowSolution::inflow`] and [`FlowSolution::outflow`] carry it
    /// linearly. A tolerance of 10⁻⁶ then gives flows to about 10⁻⁷
    /// relative (measured on the displacement benchmark).
    pub fn dissipation(&self, network: &Network, conduit_g: &[f64]) -> f64 {
        let ends = &network.throats().pores;
        par_sum(ends.len(), |t| {
            let [a, b] = ends[t];
            let (a, b) = (a as usize, b as usize);
            match conduit_g.get(t) {
                Some(&g) if self.flowing[a] && self.flowing[b] && g > 0.0 => {
                    let dp = self.pressure[a] - self.pressure[b];
                    g * dp * dp
                }
                _ => 0.0,
            }
        })
    }

    /// Flow through each throat from pore a to pore b, `g (p_a − p_b)`
    /// (m³/s, or A); 0 for throats not inside the flowing set.
    pub fn throat_flows(&self, network: &Network, conduit_g: &[f64]) -> Vec<f64> {
        let ends = &network.throats().pores;
        ends.par_iter()
            .enumerate()
            .map(|(t, &[a, b])| {
                let (a, b) = (a as usize, b as usize);
                match conduit_g.get(t) {
                    Some(&g) if self.flowing[a] && self.flowing[b] && g > 0.0 => {
                        g * (self.pressure[a] - self.pressure[b])
                    }
                    _ => 0.0,
                }
            })
            .collect()
    }
}

/// Why a pressure solve failed.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum SolveError {
    /// No cluster of active pores joined by conducting conduits holds both
    /// an inlet and an outlet pore.
    #[error(
        "no conducting cluster of active pores connects inlet and outlet \
         ({n_active} active pores, {n_inlet} of them inlet, {n_outlet} outlet)"
    )]
    NoSpanningCluster {
        /// Active pores.
        n_active: usize,
        /// Active inlet pores.
        n_inlet: usize,
        /// Active outlet pores.
        n_outlet: usize,
    },
    /// Conjugate gradients stopped before reaching the tolerance.
    #[error(
        "conjugate gradients did not converge: relative residual {residual:e} \
         after {iterations} iterations"
    )]
    NoConvergence {
        /// Iterations done.
        iterations: usize,
        /// Relative residual reached.
        residual: f64,
    },
    /// An input or an intermediate value is NaN or infinite.
    #[error("non-finite {what} at index {index}: {value}")]
    NonFinite {
        /// What was not finite (`conductance`, `inlet pressure`, `residual`, …).
        what: &'static str,
        /// Throat, pore or iteration index.
        index: usize,
        /// The value.
        value: f64,
    },
    /// A conduit conductance is negative.
    #[error("negative conductance {value:e} of throat {throat}")]
    NegativeConductance {
        /// Throat index.
        throat: usize,
        /// The value.
        value: f64,
    },
    /// An input slice has the wrong length.
    #[error("{what} has {found} entries, expected {expected}")]
    LengthMismatch {
        /// Which input.
        what: &'static str,
        /// Expected length.
        expected: usize,
        /// Length given.
        found: usize,
    },
    /// An active pore is both an inlet and an outlet pore.
    #[error("active pore {pore} is in both the inlet and the outlet mask")]
    FaceOverlap {
        /// Pore index.
        pore: usize,
    },
}

/// Reusable pressure system of one network: the adjacency pattern, the
/// matrix values, work vectors and the multigrid hierarchy (kept between
/// solves as the module documentation describes; several sequences of
/// solves can each keep their own with [`PressureSystem::take_hierarchy`]
/// and [`PressureSystem::put_hierarchy`]).
#[derive(Debug)]
pub struct PressureSystem {
    n_throats: usize,
    op: FineOperator,
    rhs: Vec<f64>,
    x: Vec<f64>,
    r: Vec<f64>,
    z: Vec<f64>,
    p: Vec<f64>,
    q: Vec<f64>,
    inv_diag: Vec<f64>,
    label: Vec<u32>,
    amg: Option<KeptAmg>,
    use_amg: bool,
    /// A hierarchy to build at the first preconditioner application: its
    /// options and the conductance scale of the assembled values.
    pending: Option<(AmgOptions, f64)>,
    /// Whether the current solve built a hierarchy.
    built: bool,
    /// Whether the kept hierarchy in use was built for another set of
    /// unknowns, so that its output is restricted to the present ones.
    masked: bool,
}

#[derive(Debug)]
struct KeptAmg {
    amg: Amg,
    opts: AmgOptions,
    unknown: Vec<bool>,
    /// Conductance scale of the matrix the hierarchy was built from.
    scale: f64,
    /// Iterations per decade of residual reduction of the building solve.
    build_rate: f64,
    stale: bool,
}

/// A multigrid hierarchy taken out of a [`PressureSystem`]
/// ([`PressureSystem::take_hierarchy`]), to be given back for a later solve
/// of a similar system ([`PressureSystem::put_hierarchy`]): one system can
/// then serve several sequences of solves (phases), each with its own kept
/// hierarchy.
#[derive(Debug)]
pub struct KeptHierarchy(KeptAmg);

impl KeptHierarchy {
    /// Bytes held by the hierarchy.
    pub fn heap_bytes(&self) -> usize {
        self.0.amg.heap_bytes() + self.0.unknown.capacity()
    }
}

const NO_LABEL: u32 = u32::MAX;

/// A solve with a kept hierarchy that needs more than this many times the
/// iterations per decade of the building solve rebuilds it on the spot
/// (2: on the kr sequence of the displacement benchmark 1.5, 2 and 3 gave
/// within 2% the same iterations, and a first imbibition point after a
/// wettability change took 632 iterations instead of 13 without it).
const SLOW_FACTOR: f64 = 2.0;

/// Outcome of [`PressureSystem::pcg`].
enum Pcg {
    /// Converged: iterations (all of the solve), true relative residual,
    /// iterations per decade of residual reduction of this call.
    Done(usize, f64, f64),
    /// The iteration budget ran out after this many iterations.
    Slow(usize),
}

/// What one pressure solve is given: conductances, which pores take part,
/// and the two faces held at fixed pressures.
#[derive(Clone, Copy, Debug)]
pub struct SolveInput<'a> {
    /// Conduit conductances, one per throat, `≥ 0` (0: no conduit).
    pub conduit_g: &'a [f64],
    /// Pores that take part (one per pore).
    pub active: &'a [bool],
    /// Inlet face mask (one per pore), held at `p_in`.
    pub inlet: &'a [bool],
    /// Outlet face mask (one per pore), held at `p_out`.
    pub outlet: &'a [bool],
    /// Inlet pressure, Pa.
    pub p_in: f64,
    /// Outlet pressure, Pa.
    pub p_out: f64,
    /// Initial guess of the unknowns, one value per pore (e.g. the previous
    /// [`FlowSolution::pressure`]); non-finite entries (excluded pores of an
    /// earlier solve) start at `(p_in + p_out)/2`. Without it CG starts
    /// from zero.
    pub warm_start: Option<&'a [f64]>,
}

impl PressureSystem {
    /// Copies the adjacency pattern of `network` and allocates the work
    /// vectors.
    pub fn new(network: &Network) -> PressureSystem {
        let n = network.n_pores();
        let adj = network.adjacency();
        let mut nbr = Vec::with_capacity(2 * network.n_throats());
        let mut thr = Vec::with_capacity(2 * network.n_throats());
        for i in 0..n {
            nbr.extend_from_slice(adj.neighbours_of(i));
            thr.extend_from_slice(adj.throats_of(i));
        }
        let n_half = nbr.len();
        PressureSystem {
            n_throats: network.n_throats(),
            op: FineOperator {
                offsets: adj.offsets().to_vec(),
                nbr,
                thr,
                diag: vec![1.0; n],
                off: vec![0.0; n_half],
                unknown: vec![false; n],
            },
            rhs: vec![0.0; n],
            x: vec![0.0; n],
            r: vec![0.0; n],
            z: vec![0.0; n],
            p: vec![0.0; n],
            q: vec![0.0; n],
            inv_diag: vec![0.0; n],
            label: vec![NO_LABEL; n],
            amg: None,
            use_amg: false,
            pending: None,
            built: false,
            masked: false,
        }
    }

    /// Number of pores.
    pub fn n_pores(&self) -> usize {
        self.op.diag.len()
    }

    /// Bytes held by the system (pattern, values, vectors, hierarchy).
    pub fn heap_bytes(&self) -> usize {
        let o = &self.op;
        4 * (o.offsets.capacity() + o.nbr.capacity() + o.thr.capacity() + self.label.capacity())
            + 8 * (o.diag.capacity() + o.off.capacity())
            + o.unknown.capacity()
            + 8 * 8 * self.rhs.capacity()
            + self.amg.as_ref().map_or(0, |k| k.amg.heap_bytes())
    }

    /// Takes the kept multigrid hierarchy out of the system (the next
    /// solve builds its own unless one is put back).
    pub fn take_hierarchy(&mut self) -> Option<KeptHierarchy> {
        self.pending = None;
        self.amg.take().map(KeptHierarchy)
    }

    /// Replaces the kept hierarchy (with `None`: drops it). The next solve
    /// with [`SolveOptions::reuse_hierarchy`] uses it as described there.
    pub fn put_hierarchy(&mut self, hierarchy: Option<KeptHierarchy>) {
        self.pending = None;
        self.amg = hierarchy.map(|h| h.0);
    }

    /// Solves for the pressures of one [`SolveInput`] (see its fields).
    ///
    /// Errors: [`SolveError::LengthMismatch`], [`SolveError::NonFinite`],
    /// [`SolveError::NegativeConductance`], [`SolveError::FaceOverlap`],
    /// [`SolveError::NoSpanningCluster`], [`SolveError::NoConvergence`].
    pub fn solve(
        &mut self,
        input: &SolveInput<'_>,
        opts: &SolveOptions,
    ) -> Result<FlowSolution, SolveError> {
        let SolveInput {
            conduit_g,
            active,
            inlet,
            outlet,
            p_in,
            p_out,
            warm_start,
        } = *input;
        let n = self.n_pores();
        check_len("conduit_g", conduit_g.len(), self.n_throats)?;
        check_len("active", active.len(), n)?;
        check_len("inlet", inlet.len(), n)?;
        check_len("outlet", outlet.len(), n)?;
        if let Some(w) = warm_start {
            check_len("warm_start", w.len(), n)?;
        }
        for (what, v) in [("inlet pressure", p_in), ("outlet pressure", p_out)] {
            if !v.is_finite() {
                return Err(SolveError::NonFinite {
                    what,
                    index: 0,
                    value: v,
                });
            }
        }
        if !(opts.tolerance > 0.0 && opts.tolerance.is_finite()) {
            return Err(SolveError::NonFinite {
                what: "tolerance",
                index: 0,
                value: opts.tolerance,
            });
        }
        if let Some(t) = conduit_g.par_iter().position_first(|g| !g.is_finite()) {
            return Err(SolveError::NonFinite {
                what: "conductance",
                index: t,
                value: conduit_g[t],
            });
        }
        if let Some(t) = conduit_g.par_iter().position_first(|&g| g < 0.0) {
            return Err(SolveError::NegativeConductance {
                throat: t,
                value: conduit_g[t],
            });
        }
        if let Some(i) = (0..n).find(|&i| active[i] && inlet[i] && outlet[i]) {
            return Err(SolveError::FaceOverlap { pore: i });
        }
        let flowing = self.flowing_set(conduit_g, active, inlet, outlet)?;
        let n_flowing = flowing.iter().filter(|&&f| f).count();
        let fixed = |i: usize| -> Option<f64> {
            if inlet[i] {
                Some(p_in)
            } else if outlet[i] {
                Some(p_out)
            } else {
                None
            }
        };
        // Unknowns, values and right-hand side.
        self.op
            .unknown
            .par_iter_mut()
            .enumerate()
            .for_each(|(i, u)| *u = flowing[i] && !inlet[i] && !outlet[i]);
        // Whether the kept multigrid hierarchy serves this solve.
        let keep = match &opts.preconditioner {
            Preconditioner::Amg(a_opts) => {
                opts.reuse_hierarchy
                    && self.amg.as_ref().is_some_and(|k| {
                        !k.stale && k.opts == *a_opts && subset(&self.op.unknown, &k.unknown)
                    })
            }
            Preconditioner::Jacobi => false,
        };
        // The matrix is scaled by the largest conductance (the solution does
        // not change), so that values near 1 reach the single-precision
        // multigrid levels whatever the units; a kept hierarchy keeps the
        // scale it was built with.
        let scale = match (&self.amg, keep) {
            (Some(k), true) => k.scale,
            _ => conduit_g.par_iter().copied().reduce(|| 0.0, f64::max),
        };
        self.assemble(conduit_g, 1.0 / scale, &flowing, &fixed);
        let n_unknowns = self.op.unknown.iter().filter(|&&u| u).count();

        // Preconditioner.
        self.built = false;
        self.pending = None;
        self.masked = keep
            && self
                .amg
                .as_ref()
                .is_some_and(|k| k.unknown != self.op.unknown);
        let (mut levels, mut complexity) = (0, 0.0);
        self.use_amg = matches!(opts.preconditioner, Preconditioner::Amg(_));
        match &opts.preconditioner {
            Preconditioner::Jacobi => {
                let d = &self.op.diag;
                let u = &self.op.unknown;
                self.inv_diag
                    .par_iter_mut()
                    .enumerate()
                    .for_each(|(i, v)| *v = if u[i] { 1.0 / d[i] } else { 0.0 });
            }
            Preconditioner::Amg(a_opts) => {
                if keep {
                    if let Some(k) = self.amg.as_mut() {
                        k.amg.refresh_fine(&self.op);
                    }
                } else {
                    // Built when CG first needs it: not at all when the
                    // warm start already meets the tolerance.
                    self.amg = None;
                    self.pending = Some((a_opts.clone(), scale));
                }
            }
        }

        // Initial guess.
        let mid = 0.5 * (p_in + p_out);
        {
            let u = &self.op.unknown;
            self.x.par_iter_mut().enumerate().for_each(|(i, x)| {
                *x = if !u[i] {
                    0.0
                } else {
                    match warm_start {
                        Some(w) if w[i].is_finite() => w[i],
                        Some(_) => mid,
                        None => 0.0,
                    }
                }
            });
        }

        // A kept hierarchy gets an iteration budget from the convergence
        // rate of the solve that built it.
        let budget = match &self.amg {
            Some(k) if keep && k.build_rate > 0.0 => Some(SLOW_FACTOR * k.build_rate),
            _ => None,
        };
        let (iterations, residual, rate) = match self.pcg(opts, budget, 0)? {
            Pcg::Done(it, res, rate) => (it, res, rate),
            Pcg::Slow(done) => {
                // Rebuilt for the current values; they were assembled with
                // the kept scale, which the new hierarchy takes over.
                if let Preconditioner::Amg(a_opts) = &opts.preconditioner {
                    self.build_amg(a_opts, scale);
                }
                match self.pcg(opts, None, done)? {
                    Pcg::Done(it, res, rate) => (it, res, rate),
                    // Unreachable without a budget; reported as not converged.
                    Pcg::Slow(it) => {
                        return Err(SolveError::NoConvergence {
                            iterations: it,
                            residual: f64::NAN,
                        });
                    }
                }
            }
        };
        if let Some(k) = &self.amg
            && self.use_amg
        {
            levels = k.amg.n_levels();
            complexity = k.amg.operator_complexity();
        }
        let built = self.built;
        if let Some(k) = self.amg.as_mut()
            && matches!(opts.preconditioner, Preconditioner::Amg(_))
        {
            if built {
                k.build_rate = rate;
            } else if rate > 1.5 * k.build_rate && k.build_rate > 0.0 {
                k.stale = true;
            }
        }

        // Pressures and face flows.
        let pressure: Vec<f64> = (0..n)
            .into_par_iter()
            .map(|i| {
                if !flowing[i] {
                    f64::NAN
                } else if let Some(v) = fixed(i) {
                    v
                } else {
                    self.x[i]
                }
            })
            .collect();
        let op = &self.op;
        let face_flow = |mask: &[bool], sign: f64| {
            par_sum(n, |i| {
                if !(flowing[i] && mask[i]) {
                    return 0.0;
                }
                let mut s = 0.0;
                for h in op.range(i) {
                    let j = op.nbr[h] as usize;
                    if flowing[j] {
                        s += conduit_g[op.thr[h] as usize] * (pressure[i] - pressure[j]);
                    }
                }
                sign * s
            })
        };
        let inflow = face_flow(inlet, 1.0);
        let outflow = face_flow(outlet, -1.0);
        if !opts.reuse_hierarchy {
            // Never used again: the next solve builds its own, so the
            // memory goes back now rather than staying beside what the
            // caller does between solves.
            self.amg = None;
        }
        let scale = inflow.abs().max(outflow.abs());
        let imbalance = if scale > 0.0 {
            (inflow - outflow).abs() / scale
        } else {
            0.0
        };
        Ok(FlowSolution {
            pressure,
            flowing,
            inflow,
            outflow,
            imbalance,
            iterations,
            relative_residual: residual,
            n_unknowns,
            n_excluded: n - n_flowing,
            preconditioner_built: built,
            preconditioner_reused: keep,
            amg_levels: levels,
            operator_complexity: complexity,
        })
    }

    /// Labels the clusters of active pores joined by conduits of positive
    /// conductance and returns the mask of those holding an inlet and an
    /// outlet pore.
    fn flowing_set(
        &mut self,
        conduit_g: &[f64],
        active: &[bool],
        inlet: &[bool],
        outlet: &[bool],
    ) -> Result<Vec<bool>, SolveError> {
        let n = self.n_pores();
        let op = &self.op;
        let label = &mut self.label;
        label.iter_mut().for_each(|l| *l = NO_LABEL);
        let mut spans: Vec<bool> = Vec::new();
        let mut stack: Vec<u32> = Vec::new();
        for start in 0..n {
            if !active[start] || label[start] != NO_LABEL {
                continue;
            }
            let c = spans.len() as u32;
            let (mut tin, mut tout) = (false, false);
            label[start] = c;
            stack.push(start as u32);
            while let Some(i) = stack.pop() {
                let i = i as usize;
                tin |= inlet[i];
                tout |= outlet[i];
                for h in op.range(i) {
                    let j = op.nbr[h] as usize;
                    if active[j] && label[j] == NO_LABEL && conduit_g[op.thr[h] as usize] > 0.0 {
                        label[j] = c;
                        stack.push(j as u32);
                    }
                }
            }
            spans.push(tin && tout);
        }
        if !spans.iter().any(|&s| s) {
            let count = |m: &[bool]| (0..n).filter(|&i| active[i] && m[i]).count();
            return Err(SolveError::NoSpanningCluster {
                n_active: active.iter().filter(|&&a| a).count(),
                n_inlet: count(inlet),
                n_outlet: count(outlet),
            });
        }
        Ok(label
            .par_iter()
            .map(|&l| l != NO_LABEL && spans[l as usize])
            .collect())
    }

    /// Writes the diagonal, off-diagonal values and right-hand side of the
    /// system with conductances multiplied by `inv_scale`.
    fn assemble(
        &mut self,
        conduit_g: &[f64],
        inv_scale: f64,
        flowing: &[bool],
        fixed: &(dyn Fn(usize) -> Option<f64> + Sync),
    ) {
        let n = self.n_pores();
        let op = &mut self.op;
        let offsets = &op.offsets;
        let nbr = &op.nbr;
        let thr = &op.thr;
        let unknown = &op.unknown;
        // Split the half-edge values into the ranges of fixed pore chunks.
        let n_chunks = n.div_ceil(CHUNK);
        let mut off_chunks: Vec<&mut [f64]> = Vec::with_capacity(n_chunks);
        let mut rest: &mut [f64] = &mut op.off;
        for c in 0..n_chunks {
            let lo = offsets[c * CHUNK] as usize;
            let hi = offsets[((c + 1) * CHUNK).min(n)] as usize;
            let (head, tail) = rest.split_at_mut(hi - lo);
            off_chunks.push(head);
            rest = tail;
        }
        op.diag
            .par_chunks_mut(CHUNK)
            .zip(self.rhs.par_chunks_mut(CHUNK))
            .zip(off_chunks.into_par_iter())
            .enumerate()
            .for_each(|(c, ((diag, rhs), off))| {
                let base_i = c * CHUNK;
                let base_h = offsets[base_i] as usize;
                for (k, (d, b)) in diag.iter_mut().zip(rhs.iter_mut()).enumerate() {
                    let i = base_i + k;
                    let range = offsets[i] as usize..offsets[i + 1] as usize;
                    if !unknown[i] {
                        *d = 1.0;
                        *b = 0.0;
                        for h in range {
                            off[h - base_h] = 0.0;
                        }
                        continue;
                    }
                    let (mut sd, mut sb) = (0.0, 0.0);
                    for h in range {
                        let j = nbr[h] as usize;
                        let g = conduit_g[thr[h] as usize] * inv_scale;
                        let mut o = 0.0;
                        if flowing[j] && g > 0.0 {
                            sd += g;
                            if unknown[j] {
                                o = -g;
                            } else if let Some(pj) = fixed(j) {
                                sb += g * pj;
                            }
                        }
                        off[h - base_h] = o;
                    }
                    *d = sd;
                    *b = sb;
                }
            });
    }

    /// Preconditioned conjugate gradients from `self.x`; returns the
    /// iterations, the final true relative residual and the iterations per
    /// decade of residual reduction.
    ///
    /// `done` iterations were already spent on this system (they count
    /// towards [`SolveOptions::max_iterations`]). With `budget_rate`, CG
    /// gives up with [`Pcg::Slow`] after `⌈budget_rate · d⌉ + 2` iterations,
    /// `d` the decades of residual reduction still needed at the start.
    fn pcg(
        &mut self,
        opts: &SolveOptions,
        budget_rate: Option<f64>,
        done: usize,
    ) -> Result<Pcg, SolveError> {
        let b_norm = dot(&self.rhs, &self.rhs).sqrt();
        if b_norm == 0.0 {
            // A x = 0 with A SPD: the solution is zero.
            self.x.iter_mut().for_each(|v| *v = 0.0);
            return Ok(Pcg::Done(done, 0.0, 0.0));
        }
        self.op.residual(&self.rhs, &self.x, &mut self.r);
        let mut r_norm = dot(&self.r, &self.r).sqrt();
        let r0 = r_norm;
        let budget = budget_rate.map(|rate| {
            let decades = (r0 / (opts.tolerance * b_norm)).log10().max(0.0);
            done + (rate * decades).ceil() as usize + 2
        });
        let mut iterations = done;
        let mut restarts = 0usize;
        loop {
            check_finite("residual", iterations, r_norm)?;
            if r_norm <= opts.tolerance * b_norm {
                break;
            }
            self.precondition();
            self.p.copy_from_slice(&self.z);
            let mut rz = dot(&self.r, &self.z);
            loop {
                if iterations >= opts.max_iterations {
                    return Err(SolveError::NoConvergence {
                        iterations,
                        residual: r_norm / b_norm,
                    });
                }
                self.op.apply(&self.p, &mut self.q);
                let pq = dot(&self.p, &self.q);
                check_finite("curvature pᵀAp", iterations, pq)?;
                if pq <= 0.0 {
                    break;
                }
                let alpha = rz / pq;
                r_norm = update_xr(alpha, &self.p, &self.q, &mut self.x, &mut self.r).sqrt();
                iterations += 1;
                check_finite("residual", iterations, r_norm)?;
                if r_norm <= opts.tolerance * b_norm {
                    break;
                }
                if budget.is_some_and(|b| iterations >= b) {
                    return Ok(Pcg::Slow(iterations));
                }
                self.precondition();
                let rz_new = dot(&self.r, &self.z);
                let beta = rz_new / rz;
                rz = rz_new;
                update_p(beta, &self.z, &mut self.p);
            }
            // Confirm on the true residual.
            self.op.residual(&self.rhs, &self.x, &mut self.r);
            r_norm = dot(&self.r, &self.r).sqrt();
            if r_norm <= opts.tolerance * b_norm {
                break;
            }
            restarts += 1;
            if restarts > 8 {
                return Err(SolveError::NoConvergence {
                    iterations,
                    residual: r_norm / b_norm,
                });
            }
        }
        let decades = (r0 / r_norm.max(f64::MIN_POSITIVE)).log10();
        let rate = if decades > 0.0 {
            (iterations - done) as f64 / decades
        } else {
            0.0
        };
        Ok(Pcg::Done(iterations, r_norm / b_norm, rate))
    }

    /// Builds the multigrid hierarchy for the assembled values (assembled
    /// with conductances divided by `scale`) and keeps it.
    fn build_amg(&mut self, a_opts: &AmgOptions, scale: f64) {
        self.amg = None;
        self.pending = None;
        self.built = true;
        self.masked = false;
        let amg = Amg::build(&self.op, a_opts);
        self.amg = Some(KeptAmg {
            amg,
            opts: a_opts.clone(),
            unknown: self.op.unknown.clone(),
            scale,
            build_rate: 0.0,
            stale: false,
        });
    }

    /// `z = M⁻¹ r`.
    fn precondition(&mut self) {
        if let Some((a_opts, scale)) = self.pending.take() {
            self.build_amg(&a_opts, scale);
        }
        match self.amg.as_mut() {
            Some(k) if self.use_amg => {
                k.amg.apply(&self.op, &self.r, &mut self.z);
                if self.masked {
                    // Restriction to the present unknowns (see
                    // `PressureSystem`): the kept prolongators may reach
                    // pores that are no longer unknowns.
                    let u = &self.op.unknown;
                    self.z
                        .par_chunks_mut(CHUNK)
                        .enumerate()
                        .for_each(|(c, zs)| {
                            for (k, z) in zs.iter_mut().enumerate() {
                                if !u[c * CHUNK + k] {
                                    *z = 0.0;
                                }
                            }
                        });
                }
            }
            _ => {
                let d = &self.inv_diag;
                let r = &self.r;
                self.z
                    .par_iter_mut()
                    .enumerate()
                    .for_each(|(i, z)| *z = d[i] * r[i]);
            }
        }
    }
}

/// Whether every `true` of `a` is `true` in `b` (fixed chunking).
fn subset(a: &[bool], b: &[bool]) -> bool {
    a.par_chunks(CHUNK)
        .zip(b.par_chunks(CHUNK))
        .all(|(x, y)| x.iter().zip(y).all(|(&x, &y)| !x || y))
}

fn check_len(what: &'static str, found: usize, expected: usize) -> Result<(), SolveError> {
    if found == expected {
        Ok(())
    } else {
        Err(SolveError::LengthMismatch {
            what,
            expected,
            found,
        })
    }
}

fn check_finite(what: &'static str, index: usize, value: f64) -> Result<(), SolveError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(SolveError::NonFinite { what, index, value })
    }
}

/// `x += α p`, `r −= α q`; returns `‖r‖²` (fixed grouping).
fn update_xr(alpha: f64, p: &[f64], q: &[f64], x: &mut [f64], r: &mut [f64]) -> f64 {
    let partial: Vec<f64> = x
        .par_chunks_mut(CHUNK)
        .zip(r.par_chunks_mut(CHUNK))
        .zip(p.par_chunks(CHUNK).zip(q.par_chunks(CHUNK)))
        .map(|((xs, rs), (ps, qs))| {
            let mut s = 0.0;
            for k in 0..xs.len() {
                xs[k] += alpha * ps[k];
                rs[k] -= alpha * qs[k];
                s += rs[k] * rs[k];
            }
            s
        })
        .collect();
    partial.iter().sum()
}

/// `p = z + β p`.
fn update_p(beta: f64, z: &[f64], p: &mut [f64]) {
    p.par_chunks_mut(CHUNK)
        .zip(z.par_chunks(CHUNK))
        .for_each(|(ps, zs)| {
            for (pi, zi) in ps.iter_mut().zip(zs) {
                *pi = zi + beta * *pi;
            }
        });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::connectivity::face_masks;
    use crate::flow::{conduit_conductances, element_hydraulic_conductances};
    use crate::generate::{LatticeSpec, generate};
    use crate::numeric::unit_hash;
    use crate::progress::Silent;

    fn lattice(n: usize) -> Network {
        let spec = LatticeSpec {
            nx: n,
            ny: n,
            nz: n,
            target_coordination: 5.0,
            seed: 4,
            ..LatticeSpec::default()
        };
        generate(&spec, &Silent).expect("lattice")
    }

    fn conduits(net: &Network) -> Vec<f64> {
        let mut c = vec![0.0; net.n_throats()];
        conduit_conductances(net, &element_hydraulic_conductances(net, 1.0), &mut c).unwrap();
        c
    }

    fn tolerance(tolerance: f64) -> SolveOptions {
        SolveOptions {
            tolerance,
            ..SolveOptions::default()
        }
    }

    #[test]
    fn dissipation_is_flow_times_pressure_drop_with_a_second_order_error() {
        // Tellegen (1952): at the solution D = Q Δp. For an approximate
        // solution D(x* + e) = D(x*) + eᵀA e (derived in
        // `FlowSolution::dissipation`), with eᵀA e = Σ g (e_a − e_b)² over
        // the throats (e = 0 on the fixed pores); checked on a loose solve
        // against a tight one.
        let net = lattice(12);
        let axis = net.info().flow_axis;
        let (inlet, outlet) = face_masks(&net, axis);
        let active = vec![true; net.n_pores()];
        let c = conduits(&net);
        let dp = 3.0;
        let solve = |tol: f64| {
            PressureSystem::new(&net)
                .solve(
                    &SolveInput {
                        conduit_g: &c,
                        active: &active,
                        inlet: &inlet,
                        outlet: &outlet,
                        p_in: dp,
                        p_out: 0.0,
                        warm_start: None,
                    },
                    &tolerance(tol),
                )
                .unwrap()
        };
        let exact = solve(1e-13);
        let q = exact.inflow;
        let d = exact.dissipation(&net, &c);
        assert!((d / dp - q).abs() <= 1e-11 * q, "{d} vs {q}");
        let loose = solve(1e-3);
        assert!(loose.iterations < exact.iterations);
        let excess = loose.dissipation(&net, &c) - d;
        let ends = &net.throats().pores;
        let e_a_e: f64 = (0..net.n_throats())
            .filter(|&t| {
                let [a, b] = ends[t];
                exact.flowing[a as usize] && exact.flowing[b as usize]
            })
            .map(|t| {
                let [a, b] = ends[t].map(|p| p as usize);
                let e = |i: usize| loose.pressure[i] - exact.pressure[i];
                c[t] * (e(a) - e(b)).powi(2)
            })
            .sum();
        assert!(e_a_e > 0.0);
        assert!(
            (excess - e_a_e).abs() <= 1e-6 * e_a_e,
            "excess dissipation {excess:e} against eᵀAe {e_a_e:e}"
        );
        // The face flow carries the error linearly: it is further off.
        let face = (loose.inflow - q).abs();
        assert!(excess / dp < face, "{excess:e} vs {face:e}");
    }

    #[test]
    fn hierarchy_kept_from_a_larger_set_of_unknowns_gives_the_cold_answer() {
        // A kept hierarchy restricted to fewer unknowns is an SPD
        // preconditioner (module documentation): the second solve, with a
        // tenth of the pores inactive, must reuse it and end at the answer
        // of a cold solve to the tolerance (common practice); a third with
        // all pores active again has new unknowns and must rebuild.
        let net = lattice(14);
        let axis = net.info().flow_axis;
        let (inlet, outlet) = face_masks(&net, axis);
        let all = vec![true; net.n_pores()];
        let some: Vec<bool> = (0..net.n_pores())
            .map(|i| inlet[i] || outlet[i] || unit_hash(9, 0, i as u64) >= 0.1)
            .collect();
        let c = conduits(&net);
        let opts = tolerance(1e-10);
        let input_all = SolveInput {
            conduit_g: &c,
            active: &all,
            inlet: &inlet,
            outlet: &outlet,
            p_in: 1.0,
            p_out: 0.0,
            warm_start: None,
        };
        let input_some = SolveInput {
            active: &some,
            ..input_all
        };
        let mut sys = PressureSystem::new(&net);
        let first = sys.solve(&input_all, &opts).unwrap();
        assert!(first.preconditioner_built && !first.preconditioner_reused);
        let second = sys.solve(&input_some, &opts).unwrap();
        assert!(second.preconditioner_reused && !second.preconditioner_built);
        assert!(second.n_unknowns < first.n_unknowns);
        let cold = PressureSystem::new(&net).solve(&input_some, &opts).unwrap();
        let q = cold.dissipation(&net, &c);
        assert!((second.dissipation(&net, &c) - q).abs() <= 1e-10 * q);
        for i in 0..net.n_pores() {
            assert_eq!(second.flowing[i], cold.flowing[i]);
            if cold.flowing[i] {
                assert!((second.pressure[i] - cold.pressure[i]).abs() < 1e-6);
            }
        }
        let third = sys.solve(&input_all, &opts).unwrap();
        assert!(third.preconditioner_built && !third.preconditioner_reused);
    }

    #[test]
    fn kept_hierarchy_that_stops_fitting_is_rebuilt_during_the_solve() {
        // The second system has the same unknowns but the conduits of half
        // the pores scaled by 10⁻⁶ (water films against bulk, the case of
        // relative permeability); the hierarchy kept from the first is a
        // poor preconditioner for it, so the solve must rebuild it and end
        // close to the iterations of a cold solve. Its answer must equal the
        // cold solve's to the tolerance (common practice).
        let net = lattice(14);
        let axis = net.info().flow_axis;
        let (inlet, outlet) = face_masks(&net, axis);
        let active = vec![true; net.n_pores()];
        let c = conduits(&net);
        let ends = &net.throats().pores;
        let c2: Vec<f64> = c
            .iter()
            .zip(ends)
            .map(|(&g, &[a, _])| {
                if unit_hash(8, 0, a as u64) < 0.5 {
                    g * 1e-6
                } else {
                    g
                }
            })
            .collect();
        let opts = tolerance(1e-8);
        let mut sys = PressureSystem::new(&net);
        let first = sys
            .solve(
                &SolveInput {
                    conduit_g: &c,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: None,
                },
                &opts,
            )
            .unwrap();
        assert!(first.preconditioner_built);
        let second = sys
            .solve(
                &SolveInput {
                    conduit_g: &c2,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: Some(&first.pressure),
                },
                &opts,
            )
            .unwrap();
        let cold = PressureSystem::new(&net)
            .solve(
                &SolveInput {
                    conduit_g: &c2,
                    active: &active,
                    inlet: &inlet,
                    outlet: &outlet,
                    p_in: 1.0,
                    p_out: 0.0,
                    warm_start: None,
                },
                &opts,
            )
            .unwrap();
        assert_eq!(second.n_unknowns, first.n_unknowns);
        assert!(second.preconditioner_built);
        assert!(
            second.iterations <= 2 * cold.iterations + 10,
            "{} iterations against {} cold",
            second.iterations,
            cold.iterations
        );
        let q = cold.dissipation(&net, &c2);
        assert!((second.dissipation(&net, &c2) - q).abs() <= 1e-9 * q);
    }
}
