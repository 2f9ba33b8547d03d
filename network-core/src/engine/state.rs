//! Occupancy state of every element during a displacement.

use serde::Serialize;

/// Sentinel for "no ganglion".
pub const NO_GANGLION: u32 = u32::MAX;

/// Occupancy of every element (pores first, then throats), as columns.
///
/// Invariants: an element with `oil[e]` has no layers; `oil_trapped[e]`
/// implies the element conducts oil (`oil[e]` or layers); `frozen_pc[e]` is
/// finite exactly when the element's oil or water is trapped; `pc_max[e] >
/// 0` exactly when the element has been filled with oil at a positive
/// capillary pressure.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct State {
    /// The element centre holds the non-aqueous phase.
    pub oil: Vec<bool>,
    /// Bit `i` set: corner `i` holds an oil layer (water-filled centre).
    pub layers: Vec<u8>,
    /// The non-aqueous phase here is trapped.
    pub oil_trapped: Vec<bool>,
    /// The bulk or film water here is trapped.
    pub water_trapped: Vec<bool>,
    /// Highest capillary pressure seen while the centre held oil, Pa
    /// (0 if never filled). Fixes the pinned corner contact lines.
    pub pc_max: Vec<f64>,
    /// Lowest capillary pressure seen while the centre held oil during the
    /// last imbibition, Pa (NaN if none): where a later rise in pressure
    /// starts hinging the corner menisci back.
    pub pc_min: Vec<f64>,
    /// The element was ever filled with the non-aqueous phase.
    pub contacted: Vec<bool>,
    /// Capillary pressure at which the element's phase was trapped, Pa
    /// (NaN if not trapped).
    pub frozen_pc: Vec<f64>,
    /// Trapped-ganglion id of the element's non-aqueous phase.
    pub ganglion: Vec<u32>,
    /// Current capillary pressure, Pa.
    pub pc: f64,
}

impl State {
    /// A fully water-saturated network at zero capillary pressure.
    pub fn water_filled(n_elements: usize) -> State {
        State {
            oil: vec![false; n_elements],
            layers: vec![0; n_elements],
            oil_trapped: vec![false; n_elements],
            water_trapped: vec![false; n_elements],
            pc_max: vec![0.0; n_elements],
            pc_min: vec![f64::NAN; n_elements],
            contacted: vec![false; n_elements],
            frozen_pc: vec![f64::NAN; n_elements],
            ganglion: vec![NO_GANGLION; n_elements],
            pc: 0.0,
        }
    }

    /// Number of elements.
    pub fn len(&self) -> usize {
        self.oil.len()
    }

    /// True when there are no elements.
    pub fn is_empty(&self) -> bool {
        self.oil.is_empty()
    }

    /// The element conducts the non-aqueous phase (centre or layers).
    #[inline]
    pub fn conducts_oil(&self, e: usize) -> bool {
        self.oil[e] || self.layers[e] != 0
    }
}
