//! Absolute permeability and formation factor of a network along an axis.

use serde::Serialize;

use super::FlowError;
use super::conductance::{
    conduit_conductances, element_electrical_conductances, element_hydraulic_conductances,
};
use super::solver::{PressureSystem, SolveInput, SolveOptions};
use crate::connectivity::{Components, face_masks, sample_length_and_area};
use crate::{Axis, Network};

/// Viscosity used for the permeability solve, Pa·s (water near 20 °C). The
/// permeability does not depend on it.
pub const VISCOSITY_PA_S: f64 = 1e-3;

/// Pressure drop imposed across the sample, Pa (the result is linear in it).
pub const PRESSURE_DROP_PA: f64 = 1.0;

/// Square metres per millidarcy: 1 D = 9.869233 × 10⁻¹³ m² (common practice;
/// the darcy is defined through 1 cP, 1 atm and 1 cm).
pub const M2_PER_MILLIDARCY: f64 = 9.869_233e-16;

/// Options of [`permeability`].
#[derive(Clone, Debug, PartialEq)]
pub struct PermOptions {
    /// Options of both pressure solves.
    pub solve: SolveOptions,
    /// Brine conductivity σ_w, S/m (default 1). The formation factor does
    /// not depend on it.
    pub brine_conductivity: f64,
    /// Factor τ_clay ≥ 1 by which clay water conducts worse than free brine
    /// (default 1); see
    /// [`element_electrical_conductances`](super::element_electrical_conductances).
    pub clay_tortuosity: f64,
}

impl Default for PermOptions {
    fn default() -> Self {
        PermOptions {
            solve: SolveOptions::default(),
            brine_conductivity: 1.0,
            clay_tortuosity: 1.0,
        }
    }
}

/// Single-phase results along one axis.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PermeabilityReport {
    /// Axis of the imposed pressure drop.
    pub axis: Axis,
    /// Absolute permeability `K = μ Q L / (A Δp)`, m², with `Q = D/Δp`
    /// from the dissipation `D` of the solution.
    pub permeability_m2: f64,
    /// Absolute permeability, mD.
    pub permeability_md: f64,
    /// Porosity (resolved plus clay pore volume over bulk volume).
    pub porosity: f64,
    /// Formation factor `F = R_o/R_w = σ_w/σ_eff`, with
    /// `σ_eff = I L / (A ΔV)` from the electrical solve.
    pub formation_factor: f64,
    /// Sample length `L` between the inlet and outlet planes, m.
    pub sample_length_m: f64,
    /// Sample cross-section `A`, m².
    pub sample_area_m2: f64,
    /// Viscosity used, Pa·s.
    pub viscosity_pa_s: f64,
    /// Pressure drop imposed, Pa.
    pub pressure_drop_pa: f64,
    /// Flow rate out of the inlet pores, m³/s.
    pub inflow_m3_per_s: f64,
    /// Flow rate into the outlet pores, m³/s.
    pub outflow_m3_per_s: f64,
    /// `|Q_in − Q_out| / max(|Q_in|, |Q_out|)`.
    pub flow_imbalance: f64,
    /// Conjugate-gradient iterations of the pressure solve.
    pub solver_iterations: usize,
    /// Final relative residual of the pressure solve.
    pub solver_residual: f64,
    /// Multigrid levels of the pressure solve (0 with Jacobi).
    pub solver_levels: usize,
    /// Conjugate-gradient iterations of the electrical solve.
    pub electrical_iterations: usize,
    /// Final relative residual of the electrical solve.
    pub electrical_residual: f64,
    /// Relative current imbalance of the electrical solve.
    pub current_imbalance: f64,
    /// Pores in the network.
    pub n_pores: usize,
    /// Pores of the flowing set (spanning clusters).
    pub n_flowing_pores: usize,
    /// Pores excluded from flow (isolated or dead clusters).
    pub n_excluded_pores: usize,
}

/// Absolute permeability, formation factor and porosity along `axis`.
///
/// Faces from [`face_masks`], sample length and area from
/// [`sample_length_and_area`]; pores outside the clusters spanning both
/// faces are excluded. The hydraulic solve imposes [`PRESSURE_DROP_PA`] with
/// viscosity [`VISCOSITY_PA_S`] on conduit conductances from
/// [`element_hydraulic_conductances`]; Darcy's law gives
///
/// $$K = \frac{\mu\,Q\,L}{A\,\Delta p}$$
///
/// (common practice; docs/physics.md §9). The electrical solve imposes 1 V
/// on the brine conductances of
/// [`element_electrical_conductances`]; `F = σ_w A ΔV / (I L)`. `Q` and
/// `I` are taken from the dissipation of the solutions
/// ([`FlowSolution::dissipation`](super::FlowSolution::dissipation)), whose
/// error is the square of the solver's; the face flows are reported too.
pub fn permeability(
    network: &Network,
    axis: Axis,
    opts: &PermOptions,
) -> Result<PermeabilityReport, FlowError> {
    permeability_with_fields(network, axis, opts).map(|(report, _)| report)
}

/// The flows and fields of [`permeability`]'s two solves, rescaled to unit
/// viscosity, unit pressure drop and unit brine conductivity (the
/// single-phase references of relative permeability and resistivity index,
/// which then need no solves of their own).
#[derive(Clone, Debug)]
pub(crate) struct UnitReferences {
    /// Flow `D/Δp` at unit viscosity and `Δp = 1`.
    pub q: f64,
    /// Current at unit brine conductivity and `ΔV = 1`.
    pub i: f64,
    /// Pressure of every pore for inlet 1, outlet 0 (NaN outside the
    /// flowing set).
    pub pressure: Vec<f64>,
    /// Potential of every pore for inlet 1, outlet 0 (NaN outside).
    pub potential: Vec<f64>,
}

/// [`permeability`] and its [`UnitReferences`]. The conductances are
/// linear in `1/μ` and `σ_w` and the fields linear in the imposed drop, so
/// the rescaled values are those of solves at unit values up to rounding
/// and the solver tolerance.
pub(crate) fn permeability_with_fields(
    network: &Network,
    axis: Axis,
    opts: &PermOptions,
) -> Result<(PermeabilityReport, UnitReferences), FlowError> {
    for (name, value) in [
        ("brine_conductivity", opts.brine_conductivity),
        ("clay_tortuosity", opts.clay_tortuosity),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(FlowError::InvalidOption {
                name,
                value,
                expected: "a positive finite number",
            });
        }
    }
    let (length, area) = sample_length_and_area(network, axis);
    if !(length.is_finite() && length > 0.0 && area.is_finite() && area > 0.0) {
        return Err(FlowError::DegenerateSample {
            axis,
            length_m: length,
            area_m2: area,
        });
    }
    let (inlet, outlet) = face_masks(network, axis);
    let components = Components::with_faces(network, &inlet, &outlet);
    if !components.spans() {
        return Err(FlowError::NoSpanningCluster {
            axis,
            n_inlet: inlet.iter().filter(|&&b| b).count(),
            n_outlet: outlet.iter().filter(|&&b| b).count(),
            n_components: components.len(),
        });
    }
    let active = components.spanning_mask();
    // A pore on both faces (possible along a short axis) carries no
    // pressure drop; keep it out.
    let active: Vec<bool> = active
        .iter()
        .zip(inlet.iter().zip(&outlet))
        .map(|(&a, (&i, &o))| a && !(i && o))
        .collect();

    let mut system = PressureSystem::new(network);
    let mut conduit = vec![0.0; network.n_throats()];

    let g = element_hydraulic_conductances(network, VISCOSITY_PA_S);
    conduit_conductances(network, &g, &mut conduit)?;
    drop(g);
    let flow = system
        .solve(
            &SolveInput {
                conduit_g: &conduit,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: PRESSURE_DROP_PA,
                p_out: 0.0,
                warm_start: None,
            },
            &opts.solve,
        )
        .map_err(FlowError::Hydraulic)?;
    // Q from the dissipation: accurate to the square of the solver error.
    let q = flow.dissipation(network, &conduit) / PRESSURE_DROP_PA;
    let k = VISCOSITY_PA_S * q * length / (area * PRESSURE_DROP_PA);

    let ge =
        element_electrical_conductances(network, opts.brine_conductivity, opts.clay_tortuosity);
    conduit_conductances(network, &ge, &mut conduit)?;
    drop(ge);
    let electrical_opts = SolveOptions {
        reuse_hierarchy: false,
        ..opts.solve.clone()
    };
    let current = system
        .solve(
            &SolveInput {
                conduit_g: &conduit,
                active: &active,
                inlet: &inlet,
                outlet: &outlet,
                p_in: 1.0,
                p_out: 0.0,
                warm_start: None,
            },
            &electrical_opts,
        )
        .map_err(FlowError::Electrical)?;
    // I from the dissipation at ΔV = 1 V.
    let sigma_eff = current.dissipation(network, &conduit) * length / area;
    let n_flowing = flow.flowing.iter().filter(|&&f| f).count();
    let unit = UnitReferences {
        q: q * VISCOSITY_PA_S / PRESSURE_DROP_PA,
        i: current.dissipation(network, &conduit) / opts.brine_conductivity,
        pressure: flow.pressure.iter().map(|p| p / PRESSURE_DROP_PA).collect(),
        potential: current.pressure.clone(),
    };

    let report = PermeabilityReport {
        axis,
        permeability_m2: k,
        permeability_md: k / M2_PER_MILLIDARCY,
        porosity: network.porosity(),
        formation_factor: opts.brine_conductivity / sigma_eff,
        sample_length_m: length,
        sample_area_m2: area,
        viscosity_pa_s: VISCOSITY_PA_S,
        pressure_drop_pa: PRESSURE_DROP_PA,
        inflow_m3_per_s: flow.inflow,
        outflow_m3_per_s: flow.outflow,
        flow_imbalance: flow.imbalance,
        solver_iterations: flow.iterations,
        solver_residual: flow.relative_residual,
        solver_levels: flow.amg_levels,
        electrical_iterations: current.iterations,
        electrical_residual: current.relative_residual,
        current_imbalance: current.imbalance,
        n_pores: network.n_pores(),
        n_flowing_pores: n_flowing,
        n_excluded_pores: flow.n_excluded,
    };
    Ok((report, unit))
}
