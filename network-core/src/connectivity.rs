//! Connected components of the pore graph and which faces they touch.
//!
//! Used to find the spanning cluster (pores connected to both the inlet and
//! the outlet face), isolated pores, and the dead-end clusters that touch
//! only one face or none; those are kept in the network, flagged in
//! `inspect`, and excluded from flow.

use crate::network::{Axis, Boundary, Network};

/// Component labels of the pores and the faces each component touches.
#[derive(Clone, Debug, PartialEq)]
pub struct Components {
    /// Component label per pore, `0..n_components`, numbered in order of the
    /// lowest pore index of each component.
    pub label: Vec<u32>,
    /// Number of pores per component.
    pub size: Vec<u32>,
    /// Whether each component holds an inlet pore.
    pub touches_inlet: Vec<bool>,
    /// Whether each component holds an outlet pore.
    pub touches_outlet: Vec<bool>,
}

impl Components {
    /// Labels the components of the network using its own inlet/outlet tags.
    pub fn of(network: &Network) -> Components {
        let b = &network.pores().boundary;
        let inlet: Vec<bool> = b.iter().map(|&x| x == Boundary::Inlet).collect();
        let outlet: Vec<bool> = b.iter().map(|&x| x == Boundary::Outlet).collect();
        Components::with_faces(network, &inlet, &outlet)
    }

    /// Labels the components with explicit face masks (one flag per pore).
    pub fn with_faces(network: &Network, inlet: &[bool], outlet: &[bool]) -> Components {
        let n = network.n_pores();
        let adj = network.adjacency();
        let mut label = vec![u32::MAX; n];
        let mut size = Vec::new();
        let mut touches_inlet = Vec::new();
        let mut touches_outlet = Vec::new();
        let mut stack: Vec<u32> = Vec::new();
        for start in 0..n {
            if label[start] != u32::MAX {
                continue;
            }
            let c = size.len() as u32;
            let (mut count, mut tin, mut tout) = (0u32, false, false);
            label[start] = c;
            stack.push(start as u32);
            while let Some(p) = stack.pop() {
                let p = p as usize;
                count += 1;
                tin |= inlet[p];
                tout |= outlet[p];
                for &q in adj.neighbours_of(p) {
                    if label[q as usize] == u32::MAX {
                        label[q as usize] = c;
                        stack.push(q);
                    }
                }
            }
            size.push(count);
            touches_inlet.push(tin);
            touches_outlet.push(tout);
        }
        Components {
            label,
            size,
            touches_inlet,
            touches_outlet,
        }
    }

    /// Number of components.
    pub fn len(&self) -> usize {
        self.size.len()
    }

    /// True when there are no pores.
    pub fn is_empty(&self) -> bool {
        self.size.is_empty()
    }

    /// True when pore `i` lies in a component touching both faces.
    pub fn is_spanning_pore(&self, i: usize) -> bool {
        let c = self.label[i] as usize;
        self.touches_inlet[c] && self.touches_outlet[c]
    }

    /// Mask of the pores in spanning components.
    pub fn spanning_mask(&self) -> Vec<bool> {
        (0..self.label.len())
            .map(|i| self.is_spanning_pore(i))
            .collect()
    }

    /// True when at least one component touches both faces.
    pub fn spans(&self) -> bool {
        self.touches_inlet
            .iter()
            .zip(&self.touches_outlet)
            .any(|(a, b)| *a && *b)
    }

    /// Number of pores with no throat at all.
    pub fn isolated_pores(&self, network: &Network) -> usize {
        (0..network.n_pores())
            .filter(|&i| network.adjacency().degree(i) == 0)
            .count()
    }

    /// Number of pores in components that touch only one face or none.
    pub fn non_spanning_pores(&self) -> usize {
        (0..self.size.len())
            .filter(|&c| !(self.touches_inlet[c] && self.touches_outlet[c]))
            .map(|c| self.size[c] as usize)
            .sum()
    }
}

/// Inlet and outlet face masks along an axis.
///
/// Along the network's own flow axis these are its `inlet`/`outlet` tags.
/// Along another axis they are the pores whose centre lies within half the
/// median throat length of the lowest (inlet) or highest (outlet) centre
/// coordinate: for a lattice, exactly the first and last layer.
pub fn face_masks(network: &Network, axis: Axis) -> (Vec<bool>, Vec<bool>) {
    let p = network.pores();
    if axis == network.info().flow_axis {
        let inlet = p.boundary.iter().map(|&b| b == Boundary::Inlet).collect();
        let outlet = p.boundary.iter().map(|&b| b == Boundary::Outlet).collect();
        return (inlet, outlet);
    }
    let c = p.coordinate(axis);
    let lo = c.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let tol = 0.5 * median_throat_length(network).max((hi - lo) * 1e-9);
    let inlet = c.iter().map(|&v| v <= lo + tol).collect();
    let outlet = c.iter().map(|&v| v >= hi - tol).collect();
    (inlet, outlet)
}

/// Sample length and cross-section area along an axis, m and m².
///
/// Along the flow axis: `length_m` and `area_m2` of `network.toml`. Along
/// another axis: the length is the span of pore centres along the axis (it
/// runs between face-pore centres, as on the flow axis); the area is the
/// product of the other two `extent_m` values when given, otherwise
/// `bulk_volume / extent` along the axis (extent from `extent_m`, or the
/// pore-centre span).
pub fn sample_length_and_area(network: &Network, axis: Axis) -> (f64, f64) {
    let info = network.info();
    if axis == info.flow_axis {
        return (info.length_m, info.area_m2);
    }
    let c = network.pores().coordinate(axis);
    let lo = c.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let span = hi - lo;
    match info.extent_m {
        Some(ext) => {
            let i = axis.index();
            (span, ext[(i + 1) % 3] * ext[(i + 2) % 3])
        }
        None => (span, info.bulk_volume_m3 / span),
    }
}

fn median_throat_length(network: &Network) -> f64 {
    let l = &network.throats().length;
    if l.is_empty() {
        return 0.0;
    }
    let mut v: Vec<f64> = l
        .iter()
        .copied()
        .step_by((l.len() / 10_001).max(1))
        .collect();
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}
