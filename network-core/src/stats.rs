//! What a network is: counts, porosity, coordination, radius and shape
//! factor statistics, shape classes and connectivity (the `inspect`
//! report).

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::connectivity::Components;
use crate::geometry::Shape;
use crate::network::{Boundary, Network};

/// Summary statistics of one column.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ColumnStats {
    /// Smallest value.
    pub min: f64,
    /// Arithmetic mean.
    pub mean: f64,
    /// Median (the lower middle value for even counts).
    pub median: f64,
    /// Largest value.
    pub max: f64,
}

impl ColumnStats {
    /// Statistics of `values` (all zero when empty).
    pub fn of(values: &[f64]) -> ColumnStats {
        if values.is_empty() {
            return ColumnStats::default();
        }
        let (min, max, sum) = values
            .par_chunks(crate::numeric::CHUNK)
            .map(|c| {
                c.iter().fold(
                    (f64::INFINITY, f64::NEG_INFINITY, 0.0),
                    |(lo, hi, s), &v| (lo.min(v), hi.max(v), s + v),
                )
            })
            .collect::<Vec<_>>()
            .into_iter()
            .fold(
                (f64::INFINITY, f64::NEG_INFINITY, 0.0),
                |(a, b, c), (x, y, z)| (a.min(x), b.max(y), c + z),
            );
        let mut v = values.to_vec();
        let mid = (v.len() - 1) / 2;
        let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
        ColumnStats {
            min,
            mean: sum / values.len() as f64,
            median: *m,
            max,
        }
    }
}

/// Fractions of shape classes.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ShapeFractions {
    /// Fraction classified as triangles.
    pub triangle: f64,
    /// Fraction classified as squares.
    pub square: f64,
    /// Fraction classified as circles.
    pub circle: f64,
}

impl ShapeFractions {
    fn of(g: &[f64]) -> ShapeFractions {
        let n = g.len().max(1) as f64;
        let mut c = [0usize; 3];
        for &x in g {
            c[Shape::from_shape_factor(x) as usize] += 1;
        }
        ShapeFractions {
            triangle: c[0] as f64 / n,
            square: c[1] as f64 / n,
            circle: c[2] as f64 / n,
        }
    }
}

/// Statistics of one element kind (pores or throats).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ElementStats {
    /// Inscribed radius, m.
    pub radius_m: ColumnStats,
    /// Shape factor.
    pub shape_factor: ColumnStats,
    /// Volume, m³.
    pub volume_m3: ColumnStats,
    /// Shape-class fractions.
    pub shapes: ShapeFractions,
    /// Total clay volume, m³.
    pub clay_volume_m3: f64,
}

/// The `inspect` report of a network.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NetworkReport {
    /// Network name.
    pub name: String,
    /// Flow axis.
    pub flow_axis: String,
    /// Number of pores.
    pub pores: usize,
    /// Number of throats.
    pub throats: usize,
    /// Pores on the inlet face.
    pub inlet_pores: usize,
    /// Pores on the outlet face.
    pub outlet_pores: usize,
    /// Porosity (clay included).
    pub porosity: f64,
    /// Total pore volume, m³.
    pub pore_volume_m3: f64,
    /// Bulk volume, m³.
    pub bulk_volume_m3: f64,
    /// Mean coordination number `2 n_throats / n_pores`.
    pub mean_coordination: f64,
    /// `coordination_histogram[z]` pores have `z` throats.
    pub coordination_histogram: Vec<usize>,
    /// True when some cluster joins the inlet and outlet faces.
    pub spanning: bool,
    /// Pores with no throat.
    pub isolated_pores: usize,
    /// Pores in clusters touching at most one face (excluded from flow).
    pub non_spanning_pores: usize,
    /// Number of connected clusters.
    pub clusters: usize,
    /// Pore statistics.
    pub pore_stats: ElementStats,
    /// Throat statistics.
    pub throat_stats: ElementStats,
}

impl NetworkReport {
    /// Builds the report.
    pub fn of(network: &Network) -> NetworkReport {
        let p = network.pores();
        let t = network.throats();
        let comps = Components::of(network);
        let adj = network.adjacency();
        let mut hist = Vec::new();
        for i in 0..network.n_pores() {
            let z = adj.degree(i);
            if hist.len() <= z {
                hist.resize(z + 1, 0);
            }
            hist[z] += 1;
        }
        let elem = |r: &[f64], g: &[f64], v: &[f64], c: &[f64]| ElementStats {
            radius_m: ColumnStats::of(r),
            shape_factor: ColumnStats::of(g),
            volume_m3: ColumnStats::of(v),
            shapes: ShapeFractions::of(g),
            clay_volume_m3: c.iter().sum(),
        };
        NetworkReport {
            name: network.info().name.clone(),
            flow_axis: network.info().flow_axis.as_str().into(),
            pores: network.n_pores(),
            throats: network.n_throats(),
            inlet_pores: p.boundary.iter().filter(|&&b| b == Boundary::Inlet).count(),
            outlet_pores: p
                .boundary
                .iter()
                .filter(|&&b| b == Boundary::Outlet)
                .count(),
            porosity: network.porosity(),
            pore_volume_m3: network.pore_volume(),
            bulk_volume_m3: network.info().bulk_volume_m3,
            mean_coordination: 2.0 * network.n_throats() as f64 / network.n_pores().max(1) as f64,
            coordination_histogram: hist,
            spanning: comps.spans(),
            isolated_pores: comps.isolated_pores(network),
            non_spanning_pores: comps.non_spanning_pores(),
            clusters: comps.len(),
            pore_stats: elem(&p.radius, &p.shape_factor, &p.volume, &p.clay_volume),
            throat_stats: elem(&t.radius, &t.shape_factor, &t.volume, &t.clay_volume),
        }
    }
}

/// The `inspect --json` object of a network: the [`NetworkReport`] fields
/// followed by `warnings` (the warnings met while reading the network, as
/// text). The CLI prints it and the Python package returns it, so both give
/// the same numbers.
pub fn inspect_json(
    network: &Network,
    warnings: &[String],
) -> serde_json::Result<serde_json::Value> {
    let mut v = serde_json::to_value(NetworkReport::of(network))?;
    v["warnings"] = serde_json::Value::from(warnings.to_vec());
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn column_stats_of_a_known_list() {
        // Direct: min 1, max 9, mean 4.6, median of [1,2,4,7,9] = 4.
        let s = ColumnStats::of(&[7.0, 1.0, 4.0, 9.0, 2.0]);
        assert_eq!((s.min, s.max, s.median), (1.0, 9.0, 4.0));
        assert!((s.mean - 4.6).abs() < 1e-15);
    }
}
