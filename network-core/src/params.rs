//! The parameters of a run as plain, validated data: fluids, wettability,
//! boundary rules, mechanism switches, flow settings and the ordered
//! processes, gathered in [`Study`].
//!
//! The engine and the run take these structs; the study-file parser
//! ([`crate::study`]) is one way to make them (from TOML, with key and line
//! in every error), a program can build them directly. Nothing here reads
//! files or knows the engine.

use serde::{Deserialize, Serialize};

/// The fluids of the study.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Fluids {
    /// Water–non-aqueous interfacial tension σ, N/m (default 0.030).
    pub interfacial_tension_n_per_m: f64,
    /// Water viscosity, Pa·s (default 1.0e-3).
    pub water_viscosity_pa_s: f64,
    /// Non-aqueous-phase viscosity, Pa·s (default 1.0e-3).
    pub nonaqueous_viscosity_pa_s: f64,
    /// Name of the non-aqueous phase in outputs (`oil`, `gas`, `CO2`, …;
    /// default `oil`).
    pub nonaqueous_label: String,
    /// Electrical conductivity of the water (brine), S/m (default 5.0);
    /// sets absolute resistivities, not the formation factor or RI.
    pub water_conductivity_s_per_m: f64,
}

impl Default for Fluids {
    fn default() -> Self {
        Fluids {
            interfacial_tension_n_per_m: 0.030,
            water_viscosity_pa_s: 1.0e-3,
            nonaqueous_viscosity_pa_s: 1.0e-3,
            nonaqueous_label: "oil".into(),
            water_conductivity_s_per_m: 5.0,
        }
    }
}

/// How the oil-wet part of the contacted pores is chosen.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum OilWetSelection {
    /// A random subset.
    #[default]
    Random,
    /// The largest elements first (oil-wet large pores, water-wet small
    /// ones).
    Largest,
    /// The smallest elements first.
    Smallest,
}

/// Contact angles and wettability alteration. Angles in degrees, measured
/// through water.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WettabilitySpec {
    /// Intrinsic (receding) angle range, drawn uniformly per element
    /// (default `[0, 0]`).
    pub receding_contact_angle_deg: [f64; 2],
    /// Advancing angle range of water-wet elements after drainage
    /// (default: the receding range).
    pub advancing_contact_angle_deg: [f64; 2],
    /// Fraction of the oil-contacted pores that become oil-wet after
    /// drainage (default 0); a contacted throat turns oil-wet when both its
    /// pores did (see [`crate::wettability::ContactAngles::alter`]).
    pub oil_wet_fraction: f64,
    /// Which contacted elements become oil-wet (default `random`).
    pub oil_wet_selection: OilWetSelection,
    /// Advancing angle range of oil-wet elements (default `[100, 160]`).
    pub oil_wet_advancing_contact_angle_deg: [f64; 2],
    /// Receding angle range of oil-wet elements, used by a later drainage
    /// (default: the oil-wet advancing range).
    pub oil_wet_receding_contact_angle_deg: [f64; 2],
}

impl Default for WettabilitySpec {
    fn default() -> Self {
        WettabilitySpec {
            receding_contact_angle_deg: [0.0, 0.0],
            advancing_contact_angle_deg: [0.0, 0.0],
            oil_wet_fraction: 0.0,
            oil_wet_selection: OilWetSelection::Random,
            oil_wet_advancing_contact_angle_deg: [100.0, 160.0],
            oil_wet_receding_contact_angle_deg: [100.0, 160.0],
        }
    }
}

/// What the outlet face lets through.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum OutletRule {
    /// Both phases may leave; outlet pores can be invaded.
    #[default]
    Open,
    /// A water-wet plate: water leaves, the non-aqueous phase is held back
    /// (outlet pores are never invaded in drainage).
    SemiPermeable,
}

/// Options of the imbibition mechanisms.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MechanismOptions {
    /// Allow snap-off (default true).
    pub snap_off: bool,
    /// Allow oil layers in oil-wet corners (default true).
    pub oil_layers: bool,
    /// Cooperative-filling weights `a_i` for `i = 2, 3, …` oil-filled
    /// throats (`A_1 = 0`), dimensionless; the model uses `A_i = a_i / r̄_t`
    /// with `r̄_t` the mean throat radius (Blunt 1998, J. Pet. Sci. Eng.
    /// 20:117–125), subtracted from the pore's piston-like threshold
    /// (`docs/physics.md` §5.4). The last weight repeats for larger `i`.
    /// Default `[0.5, 1, 2, 5, 10]`: a parameter set of ours, of the order
    /// the model asks and growing with `i`; not verified against published
    /// values.
    pub cooperative_weights: Vec<f64>,
}

impl Default for MechanismOptions {
    fn default() -> Self {
        MechanismOptions {
            snap_off: true,
            oil_layers: true,
            cooperative_weights: vec![0.5, 1.0, 2.0, 5.0, 10.0],
        }
    }
}

/// Water held below the resolution of the network: the clay
/// (microporosity) volume of each element (table `[microporosity]`).
///
/// The model keeps that volume water-filled at every simulated pressure
/// (it counts in `S_w` and in electrical conduction). That is right below
/// the capillary entry pressure of the microporosity; the study states it
/// here so that a drainage beyond it is refused instead of silently
/// overstating connate water (`docs/physics.md` §10).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Microporosity {
    /// Capillary pressure, Pa, up to which the microporosity stays
    /// water-filled (default: none given, no check).
    pub entry_pressure_pa: Option<f64>,
}

/// Relative-permeability and resistivity settings (table `[flow]`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FlowSpec {
    /// Compute `k_rw`, `k_rn` and RI at `kr_points` points per process
    /// (default true).
    pub relative_permeability: bool,
    /// Axis of the pressure drop (default: the network's flow axis).
    pub axis: Option<crate::network::Axis>,
    /// Factor by which clay water conducts current worse than free brine
    /// (default 1).
    pub clay_tortuosity: f64,
    /// Relative residual of the flow solves (default 1e-6: flows are taken
    /// from the dissipation, accurate to the square of the solver error;
    /// 1e-6 gave k_r and RI within 1e-7 relative of 1e-12 solves on the
    /// displacement benchmark).
    pub solver_tolerance: f64,
}

impl Default for FlowSpec {
    fn default() -> Self {
        FlowSpec {
            relative_permeability: true,
            axis: None,
            clay_tortuosity: 1.0,
            solver_tolerance: 1e-6,
        }
    }
}

/// A displacement process kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ProcessKind {
    /// The non-aqueous phase invades from the inlet as Pc rises (primary
    /// drainage when first, secondary drainage after an imbibition).
    Drainage,
    /// Water invades from the inlet as Pc falls.
    Imbibition,
}

impl ProcessKind {
    /// The kind as written in study files.
    pub fn as_str(self) -> &'static str {
        match self {
            ProcessKind::Drainage => "drainage",
            ProcessKind::Imbibition => "imbibition",
        }
    }
}

/// Where a process stops.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum StopAt {
    /// At this capillary pressure, Pa.
    Pc(f64),
    /// At this water saturation (bisection to the element).
    Sw(f64),
}

/// One process of the study.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Process {
    /// What happens.
    pub kind: ProcessKind,
    /// Where it stops.
    pub stop: StopAt,
    /// Number of pressure steps recorded on the curve (default 40).
    pub pc_steps: usize,
    /// Number of relative-permeability points, spaced in saturation
    /// (default 20).
    pub kr_points: usize,
}

/// A validated study.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Study {
    /// Network path as written (relative to the study file): a CSV folder,
    /// a binary `.gnet` file, or a generator parameter file (`.toml`,
    /// see [`crate::generate::LatticeSpec`]) from which the network is
    /// generated.
    pub network: String,
    /// Seed of every random draw of the run (default 1).
    pub seed: u64,
    /// Optional title for reports.
    pub title: Option<String>,
    /// Fluids.
    pub fluids: Fluids,
    /// Wettability.
    pub wettability: WettabilitySpec,
    /// Outlet rule (key `boundary.outlet`).
    pub outlet: OutletRule,
    /// Faces open to the displaced phase in imbibition (key
    /// `boundary.imbibition_faces`: `outlet` or `both`; default `outlet`).
    pub imbibition_faces: ImbibitionFaces,
    /// Faces through which the non-aqueous phase enters in drainage (key
    /// `boundary.drainage_faces`: `inlet` or `all`; default `inlet`).
    pub drainage_faces: DrainageFaces,
    /// Mechanism options (table `[mechanisms]`).
    pub mechanisms: MechanismOptions,
    /// Flow settings (table `[flow]`).
    pub flow: FlowSpec,
    /// Microporosity (table `[microporosity]`).
    #[serde(default)]
    pub microporosity: Microporosity,
    /// Saturation profiles and the interior window (table `[output]`).
    pub output: OutputSpec,
    /// The processes, in order.
    pub processes: Vec<Process>,
}

/// Faces through which the non-aqueous phase enters in drainage.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum DrainageFaces {
    /// The inlet face only (a displacement along the flow axis).
    #[default]
    Inlet,
    /// Every external face of the sample: the pores at the six faces of its
    /// bounding box enter the non-aqueous phase and let water out, as for a
    /// sample surrounded by the non-aqueous phase (initial states for a
    /// trapping curve without an inlet end effect).
    All,
}

impl DrainageFaces {
    /// The value as written in study files.
    pub fn as_str(self) -> &'static str {
        match self {
            DrainageFaces::Inlet => "inlet",
            DrainageFaces::All => "all",
        }
    }
}

/// Saturation profiles along the flow axis and the interior window (table
/// `[output]`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OutputSpec {
    /// Number of equal slabs along the flow axis of the saturation profiles
    /// (default 10).
    pub profile_slabs: usize,
    /// Window `[start, end]` along the flow axis, as fractions of the
    /// sample length, over which saturations are also reported (default
    /// `None`: whole-sample saturations only).
    pub interior_window: Option<[f64; 2]>,
}

impl Default for OutputSpec {
    fn default() -> Self {
        OutputSpec {
            profile_slabs: 10,
            interior_window: None,
        }
    }
}

/// Faces through which the displaced non-aqueous phase may leave during
/// imbibition (and through which water enters).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum ImbibitionFaces {
    /// Water enters at the inlet face; the non-aqueous phase leaves at the
    /// outlet face (a waterflood).
    #[default]
    Outlet,
    /// Both faces are in contact with water and let the non-aqueous phase
    /// out (a sample surrounded by water).
    Both,
}
