//! The pore network: immutable columns of pore and throat properties with a
//! compressed adjacency.
//!
//! A [`Network`] is built once (from files or the generator), validated, and
//! never changed afterwards. Everything that changes during a displacement
//! lives in separate state arrays indexed the same way.
//!
//! Invariants established by [`Network::new`]:
//! - every column of [`Pores`] has `n_pores` entries, every column of
//!   [`Throats`] has `n_throats` entries;
//! - every throat joins two distinct existing pores;
//! - radii are positive and finite, shape factors lie in `(0, 1/(4π)]`,
//!   volumes are finite and non-negative, conduit lengths are non-negative
//!   and do not exceed the throat's total length;
//! - at least one pore is tagged [`Boundary::Inlet`] and one
//!   [`Boundary::Outlet`].

use serde::{Deserialize, Serialize};

mod elements;
pub mod validate;

pub use elements::{Element, Elements};

use validate::Violation;

/// Where a pore sits with respect to the sample faces.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[repr(u8)]
pub enum Boundary {
    /// An interior pore.
    #[default]
    Interior = 0,
    /// A pore on the inlet face: the invading phase enters here and the
    /// inlet pressure is imposed at its centre.
    Inlet = 1,
    /// A pore on the outlet face: the displaced phase leaves here and the
    /// outlet pressure is imposed at its centre.
    Outlet = 2,
}

impl Boundary {
    /// The tag as written in `pores.csv` (`inlet`, `outlet` or empty).
    pub fn as_str(self) -> &'static str {
        match self {
            Boundary::Interior => "",
            Boundary::Inlet => "inlet",
            Boundary::Outlet => "outlet",
        }
    }
}

/// A Cartesian axis of the sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Axis {
    /// The x axis.
    X,
    /// The y axis.
    Y,
    /// The z axis (the default flow axis of generated networks).
    #[default]
    Z,
}

impl Axis {
    /// 0 for x, 1 for y, 2 for z.
    pub fn index(self) -> usize {
        match self {
            Axis::X => 0,
            Axis::Y => 1,
            Axis::Z => 2,
        }
    }

    /// The lower-case name of the axis.
    pub fn as_str(self) -> &'static str {
        match self {
            Axis::X => "x",
            Axis::Y => "y",
            Axis::Z => "z",
        }
    }

    /// Parses `x`, `y` or `z` (case-insensitive).
    pub fn parse(text: &str) -> Option<Axis> {
        match text.trim().to_ascii_lowercase().as_str() {
            "x" => Some(Axis::X),
            "y" => Some(Axis::Y),
            "z" => Some(Axis::Z),
            _ => None,
        }
    }
}

/// Sample-level description of a network (`network.toml`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NetworkInfo {
    /// A short name of the network.
    pub name: String,
    /// The axis along which the inlet and outlet faces are tagged.
    pub flow_axis: Axis,
    /// Distance between the planes where inlet and outlet pressures are
    /// imposed, in m (for generated lattices: between the centres of the
    /// first and last pore layers).
    pub length_m: f64,
    /// Cross-section of the sample normal to the flow axis, in m².
    pub area_m2: f64,
    /// Bulk volume of the sample, in m³ (default `length_m × area_m2`).
    pub bulk_volume_m3: f64,
    /// Optional sample dimensions along x, y and z, in m; used to compute
    /// permeability along an axis other than `flow_axis`.
    pub extent_m: Option<[f64; 3]>,
    /// Free text.
    pub description: Option<String>,
}

/// Pore properties, one column per property, indexed by pore.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Pores {
    /// Centre x coordinate, m.
    pub x: Vec<f64>,
    /// Centre y coordinate, m.
    pub y: Vec<f64>,
    /// Centre z coordinate, m.
    pub z: Vec<f64>,
    /// Inscribed radius, m.
    pub radius: Vec<f64>,
    /// Shape factor G = A/P² of the cross-section (dimensionless).
    pub shape_factor: Vec<f64>,
    /// Pore volume, m³ (resolved pore space only, clay excluded).
    pub volume: Vec<f64>,
    /// Volume of unresolved micro-porosity (clay), m³; always water-filled.
    pub clay_volume: Vec<f64>,
    /// Face tag.
    pub boundary: Vec<Boundary>,
    /// Wettability given by the network files (optional column `oil_wet`):
    /// `true` where the wall turns oil-wet once oil contacts it. `None`
    /// when the files carry no such column; the study's alteration rule
    /// then chooses (see [`crate::wettability::ContactAngles::alter`]).
    #[serde(default)]
    pub oil_wet: Option<Vec<bool>>,
}

impl Pores {
    /// Number of pores.
    pub fn len(&self) -> usize {
        self.radius.len()
    }

    /// True when there are no pores.
    pub fn is_empty(&self) -> bool {
        self.radius.is_empty()
    }

    /// Centre of pore `i` as `[x, y, z]`.
    pub fn centre(&self, i: usize) -> [f64; 3] {
        [self.x[i], self.y[i], self.z[i]]
    }

    /// Coordinate column along an axis.
    pub fn coordinate(&self, axis: Axis) -> &[f64] {
        match axis {
            Axis::X => &self.x,
            Axis::Y => &self.y,
            Axis::Z => &self.z,
        }
    }

    /// Creates empty columns with room for `n` pores.
    pub fn with_capacity(n: usize) -> Pores {
        Pores {
            x: Vec::with_capacity(n),
            y: Vec::with_capacity(n),
            z: Vec::with_capacity(n),
            radius: Vec::with_capacity(n),
            shape_factor: Vec::with_capacity(n),
            volume: Vec::with_capacity(n),
            clay_volume: Vec::with_capacity(n),
            boundary: Vec::with_capacity(n),
            oil_wet: None,
        }
    }

    fn shrink_to_fit(&mut self) {
        self.x.shrink_to_fit();
        self.y.shrink_to_fit();
        self.z.shrink_to_fit();
        self.radius.shrink_to_fit();
        self.shape_factor.shrink_to_fit();
        self.volume.shrink_to_fit();
        self.clay_volume.shrink_to_fit();
        self.boundary.shrink_to_fit();
    }
}

/// Throat properties, one column per property, indexed by throat.
///
/// A throat's conduit from the centre of pore a to the centre of pore b has
/// total length `length`; `conduit_a` of it lies inside pore a, `conduit_b`
/// inside pore b, and the throat proper is the rest
/// ([`Throats::throat_length`]).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Throats {
    /// The two pores joined, `[a, b]`.
    pub pores: Vec<[u32; 2]>,
    /// Inscribed radius, m.
    pub radius: Vec<f64>,
    /// Shape factor G = A/P² (dimensionless).
    pub shape_factor: Vec<f64>,
    /// Throat volume, m³ (resolved pore space only).
    pub volume: Vec<f64>,
    /// Clay (micro-porosity) volume, m³.
    pub clay_volume: Vec<f64>,
    /// Total conduit length, pore centre to pore centre, m.
    pub length: Vec<f64>,
    /// Part of the conduit inside pore a, m.
    pub conduit_a: Vec<f64>,
    /// Part of the conduit inside pore b, m.
    pub conduit_b: Vec<f64>,
    /// Wettability given by the network files, as for
    /// [`Pores::oil_wet`].
    #[serde(default)]
    pub oil_wet: Option<Vec<bool>>,
}

impl Throats {
    /// Number of throats.
    pub fn len(&self) -> usize {
        self.radius.len()
    }

    /// True when there are no throats.
    pub fn is_empty(&self) -> bool {
        self.radius.is_empty()
    }

    /// Length of the throat proper (total minus the two pore parts), m.
    pub fn throat_length(&self, t: usize) -> f64 {
        (self.length[t] - self.conduit_a[t] - self.conduit_b[t]).max(0.0)
    }

    /// Creates empty columns with room for `n` throats.
    pub fn with_capacity(n: usize) -> Throats {
        Throats {
            pores: Vec::with_capacity(n),
            radius: Vec::with_capacity(n),
            shape_factor: Vec::with_capacity(n),
            volume: Vec::with_capacity(n),
            clay_volume: Vec::with_capacity(n),
            length: Vec::with_capacity(n),
            conduit_a: Vec::with_capacity(n),
            conduit_b: Vec::with_capacity(n),
            oil_wet: None,
        }
    }

    fn shrink_to_fit(&mut self) {
        self.pores.shrink_to_fit();
        self.radius.shrink_to_fit();
        self.shape_factor.shrink_to_fit();
        self.volume.shrink_to_fit();
        self.clay_volume.shrink_to_fit();
        self.length.shrink_to_fit();
        self.conduit_a.shrink_to_fit();
        self.conduit_b.shrink_to_fit();
    }
}

/// Compressed pore adjacency: the throats and neighbouring pores of pore `i`
/// are `throats[offsets[i]..offsets[i + 1]]` and
/// `pores[offsets[i]..offsets[i + 1]]`, in increasing throat order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Adjacency {
    offsets: Vec<u32>,
    throats: Vec<u32>,
    pores: Vec<u32>,
}

impl Adjacency {
    /// Builds the adjacency of `n_pores` pores from throat end points, which
    /// must name existing pores.
    pub fn build(n_pores: usize, ends: &[[u32; 2]]) -> Adjacency {
        let mut counts = vec![0u32; n_pores + 1];
        for &[a, b] in ends {
            counts[a as usize + 1] += 1;
            counts[b as usize + 1] += 1;
        }
        for i in 0..n_pores {
            counts[i + 1] += counts[i];
        }
        let offsets = counts;
        let mut cursor: Vec<u32> = offsets[..n_pores].to_vec();
        let n_half = 2 * ends.len();
        let mut throats = vec![0u32; n_half];
        let mut pores = vec![0u32; n_half];
        for (t, &[a, b]) in ends.iter().enumerate() {
            let slot = cursor[a as usize] as usize;
            throats[slot] = t as u32;
            pores[slot] = b;
            cursor[a as usize] += 1;
            let slot = cursor[b as usize] as usize;
            throats[slot] = t as u32;
            pores[slot] = a;
            cursor[b as usize] += 1;
        }
        Adjacency {
            offsets,
            throats,
            pores,
        }
    }

    /// Throats attached to pore `i`.
    #[inline]
    pub fn throats_of(&self, i: usize) -> &[u32] {
        &self.throats[self.offsets[i] as usize..self.offsets[i + 1] as usize]
    }

    /// Pores adjacent to pore `i` (same order as [`Adjacency::throats_of`]).
    #[inline]
    pub fn neighbours_of(&self, i: usize) -> &[u32] {
        &self.pores[self.offsets[i] as usize..self.offsets[i + 1] as usize]
    }

    /// Number of throats attached to pore `i` (its coordination number).
    #[inline]
    pub fn degree(&self, i: usize) -> usize {
        (self.offsets[i + 1] - self.offsets[i]) as usize
    }

    /// The offsets array (length `n_pores + 1`).
    pub fn offsets(&self) -> &[u32] {
        &self.offsets
    }

    /// Bytes held by the adjacency arrays.
    pub fn heap_bytes(&self) -> usize {
        4 * (self.offsets.capacity() + self.throats.capacity() + self.pores.capacity())
    }
}

/// A validated, immutable pore network.
#[derive(Clone, Debug)]
pub struct Network {
    info: NetworkInfo,
    pores: Pores,
    throats: Throats,
    adjacency: Adjacency,
}

impl PartialEq for Network {
    fn eq(&self, other: &Self) -> bool {
        // The adjacency is derived from the throats.
        self.info == other.info && self.pores == other.pores && self.throats == other.throats
    }
}

/// A network that failed validation: every violation found, in file order.
#[derive(Clone, Debug, PartialEq)]
pub struct InvalidNetwork {
    /// All violations found.
    pub violations: Vec<Violation>,
}

impl std::fmt::Display for InvalidNetwork {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        writeln!(f, "{} problem(s) in the network:", self.violations.len())?;
        for v in &self.violations {
            writeln!(f, "  {v}")?;
        }
        Ok(())
    }
}

impl std::error::Error for InvalidNetwork {}

impl Network {
    /// Validates the columns and builds the adjacency.
    ///
    /// All rule violations are collected; locations refer to 0-based pore and
    /// throat indices (readers translate them to file lines).
    pub fn new(
        info: NetworkInfo,
        mut pores: Pores,
        mut throats: Throats,
    ) -> Result<Network, InvalidNetwork> {
        let violations = validate::check_columns(&info, &pores, &throats);
        if !violations.is_empty() {
            return Err(InvalidNetwork { violations });
        }
        pores.shrink_to_fit();
        throats.shrink_to_fit();
        let adjacency = Adjacency::build(pores.len(), &throats.pores);
        Ok(Network {
            info,
            pores,
            throats,
            adjacency,
        })
    }

    /// The wettability marks of the network files, indexed like
    /// [`Element`] (pores, then throats): `Some` when the pore or the
    /// throat file carries an `oil_wet` column (a file without it counts
    /// as all water-wet).
    pub fn oil_wet_marks(&self) -> Option<Vec<bool>> {
        if self.pores.oil_wet.is_none() && self.throats.oil_wet.is_none() {
            return None;
        }
        let mut marks = Vec::with_capacity(self.n_elements());
        match &self.pores.oil_wet {
            Some(m) => marks.extend_from_slice(m),
            None => marks.resize(self.n_pores(), false),
        }
        match &self.throats.oil_wet {
            Some(m) => marks.extend_from_slice(m),
            None => marks.resize(self.n_elements(), false),
        }
        Some(marks)
    }

    /// Sample-level description.
    pub fn info(&self) -> &NetworkInfo {
        &self.info
    }

    /// Pore columns.
    pub fn pores(&self) -> &Pores {
        &self.pores
    }

    /// Throat columns.
    pub fn throats(&self) -> &Throats {
        &self.throats
    }

    /// Pore adjacency.
    pub fn adjacency(&self) -> &Adjacency {
        &self.adjacency
    }

    /// Number of pores.
    pub fn n_pores(&self) -> usize {
        self.pores.len()
    }

    /// Number of throats.
    pub fn n_throats(&self) -> usize {
        self.throats.len()
    }

    /// The shared element index space (pores first, then throats).
    pub fn elements(&self) -> Elements {
        Elements::new(self.n_pores(), self.n_throats())
    }

    /// Number of displacement elements (pores first, then throats).
    pub fn n_elements(&self) -> usize {
        self.pores.len() + self.throats.len()
    }

    /// Total resolved pore volume plus clay volume (pores and throats), m³.
    pub fn pore_volume(&self) -> f64 {
        crate::numeric::ordered_sum(&self.pores.volume)
            + crate::numeric::ordered_sum(&self.throats.volume)
            + crate::numeric::ordered_sum(&self.pores.clay_volume)
            + crate::numeric::ordered_sum(&self.throats.clay_volume)
    }

    /// Porosity: total pore volume (clay included) over bulk volume.
    pub fn porosity(&self) -> f64 {
        self.pore_volume() / self.info.bulk_volume_m3
    }

    /// Resident bytes of the network's arrays (heap only).
    pub fn heap_bytes(&self) -> usize {
        let p = &self.pores;
        let t = &self.throats;
        8 * (p.x.capacity()
            + p.y.capacity()
            + p.z.capacity()
            + p.radius.capacity()
            + p.shape_factor.capacity()
            + p.volume.capacity()
            + p.clay_volume.capacity())
            + p.boundary.capacity()
            + 8 * t.pores.capacity()
            + 8 * (t.radius.capacity()
                + t.shape_factor.capacity()
                + t.volume.capacity()
                + t.clay_volume.capacity()
                + t.length.capacity()
                + t.conduit_a.capacity()
                + t.conduit_b.capacity())
            + self.adjacency.heap_bytes()
    }

    /// Splits the network back into its parts (for writers and converters).
    pub fn into_parts(self) -> (NetworkInfo, Pores, Throats) {
        (self.info, self.pores, self.throats)
    }
}
