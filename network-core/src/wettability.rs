//! Contact angles per element: intrinsic (receding) angles drawn before
//! drainage, and the wettability alteration applied after it.
//!
//! Alteration follows Kovscek, Wong & Radke (1993, AIChE J 39:1072–1085):
//! wall contacted by the non-aqueous phase during drainage may change its
//! wettability, while wall under corner water stays water-wet; the corner
//! contact lines stay pinned where drainage left them (the hinging of
//! [`crate::capillary`] handles that). Elements never contacted keep their
//! intrinsic angle.
//!
//! All draws use the counter-based generator [`crate::numeric::unit_hash`]
//! keyed by the study seed, a stream per quantity and the element index, so
//! angles do not depend on evaluation order or thread count.

use std::f64::consts::PI;

use serde::Serialize;

use crate::numeric::unit_hash;
use crate::params::{OilWetSelection, WettabilitySpec};

const STREAM_RECEDING: u64 = 0x7265_6365_6465;
const STREAM_ADVANCING: u64 = 0x6164_7661_6e63;
const STREAM_OIL_WET: u64 = 0x6f69_6c77_6574;
const STREAM_OW_ADVANCING: u64 = 0x006f_7761_6476;
const STREAM_OW_RECEDING: u64 = 0x006f_7772_6563;

/// Degrees to radians.
#[inline]
pub fn deg(x: f64) -> f64 {
    x * PI / 180.0
}

fn draw(range_deg: [f64; 2], seed: u64, stream: u64, e: usize) -> f64 {
    let u = unit_hash(seed, stream, e as u64);
    deg(range_deg[0] + u * (range_deg[1] - range_deg[0]))
}

/// Contact angles of every element (radians, through water), indexed like
/// [`crate::Element`].
///
/// Invariant: `advancing[e] >= receding[e]` for every element.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ContactAngles {
    /// Receding angle used by drainage: the intrinsic angle before
    /// alteration; for oil-wet elements after alteration, the oil-wet
    /// receding angle used by a later drainage.
    pub receding: Vec<f64>,
    /// Advancing angle used by imbibition.
    pub advancing: Vec<f64>,
    /// The receding angle at which the corner contact lines were pinned in
    /// primary drainage (the intrinsic angle); hinging starts from it.
    pub pinned_receding: Vec<f64>,
    /// True for elements altered to oil-wet.
    pub oil_wet: Vec<bool>,
}

impl ContactAngles {
    /// Intrinsic angles before any drainage: receding drawn uniformly from
    /// the receding range; advancing equal to receding until alteration.
    pub fn intrinsic(spec: &WettabilitySpec, n_elements: usize, seed: u64) -> ContactAngles {
        let receding: Vec<f64> = (0..n_elements)
            .map(|e| draw(spec.receding_contact_angle_deg, seed, STREAM_RECEDING, e))
            .collect();
        ContactAngles {
            advancing: receding.clone(),
            pinned_receding: receding.clone(),
            receding,
            oil_wet: vec![false; n_elements],
        }
    }

    /// Number of elements.
    pub fn len(&self) -> usize {
        self.receding.len()
    }

    /// True when there are no elements.
    pub fn is_empty(&self) -> bool {
        self.receding.is_empty()
    }

    /// Applies the alteration after primary drainage.
    ///
    /// `contacted[e]` marks elements the non-aqueous phase filled; the first
    /// `throat_ends.len()` elements after the `n_pores` pores are throats,
    /// `throat_ends[t]` their two pores; `size[e]` (inscribed radius)
    /// orders the `largest`/`smallest` selections, ties broken by index.
    ///
    /// Which elements turn oil-wet (`docs/physics.md` §6.1). After Kovscek,
    /// Wong & Radke (1993, AIChE J 39:1072–1085), wall turns oil-wet where
    /// oil contacted it and the water film on it ruptured. The pores are
    /// chosen: `oil_wet_fraction` of the contacted pores, at random, the
    /// largest or the smallest first. A contacted throat turns oil-wet when
    /// both of its pores did — the throat wall between two altered pores
    /// that oil contacted. Choosing pores and throats by one rule keeps the
    /// altered elements in connected regions, so oil-wet paths form as the
    /// fraction grows (the mixed-wet rock of Salathiel 1973, J. Pet.
    /// Technol. 25:1216–1224, where continuous oil-wet paths let oil drain
    /// to low residual saturation). `preset`, when given (the `oil_wet`
    /// column of the network files), replaces the selection: contacted
    /// elements marked there turn oil-wet, and `oil_wet_fraction` and
    /// `oil_wet_selection` are not used.
    ///
    /// Contacted water-wet elements draw an advancing angle from
    /// `advancing_contact_angle_deg`, raised to the receding angle where the
    /// draw falls below it (advancing ≥ receding: contact-angle hysteresis,
    /// common practice). Oil-wet elements draw their advancing angle from
    /// the oil-wet range and their receding angle (for a later drainage)
    /// from the oil-wet receding range, capped at the advancing angle.
    #[allow(clippy::too_many_arguments)]
    pub fn alter(
        &mut self,
        spec: &WettabilitySpec,
        contacted: &[bool],
        n_pores: usize,
        throat_ends: &[[u32; 2]],
        size: &[f64],
        preset: Option<&[bool]>,
        seed: u64,
    ) {
        let n = self.len();
        let mut oil_wet = vec![false; n];
        if let Some(marks) = preset {
            for e in 0..n {
                oil_wet[e] = contacted[e] && marks[e];
            }
        } else {
            let mut chosen: Vec<usize> = (0..n_pores).filter(|&e| contacted[e]).collect();
            let k = (spec.oil_wet_fraction * chosen.len() as f64).round() as usize;
            if k > 0 {
                match spec.oil_wet_selection {
                    OilWetSelection::Random => {
                        chosen.sort_by(|&a, &b| {
                            unit_hash(seed, STREAM_OIL_WET, a as u64)
                                .total_cmp(&unit_hash(seed, STREAM_OIL_WET, b as u64))
                                .then(a.cmp(&b))
                        });
                    }
                    OilWetSelection::Largest => {
                        chosen.sort_by(|&a, &b| size[b].total_cmp(&size[a]).then(a.cmp(&b)));
                    }
                    OilWetSelection::Smallest => {
                        chosen.sort_by(|&a, &b| size[a].total_cmp(&size[b]).then(a.cmp(&b)));
                    }
                }
                for &e in &chosen[..k] {
                    oil_wet[e] = true;
                }
                for (t, ends) in throat_ends.iter().enumerate() {
                    let e = n_pores + t;
                    oil_wet[e] =
                        contacted[e] && oil_wet[ends[0] as usize] && oil_wet[ends[1] as usize];
                }
            }
        }
        for e in 0..n {
            if !contacted[e] {
                continue;
            }
            if oil_wet[e] {
                let adv = draw(
                    spec.oil_wet_advancing_contact_angle_deg,
                    seed,
                    STREAM_OW_ADVANCING,
                    e,
                );
                let rec = draw(
                    spec.oil_wet_receding_contact_angle_deg,
                    seed,
                    STREAM_OW_RECEDING,
                    e,
                );
                self.advancing[e] = adv.max(self.pinned_receding[e]);
                self.receding[e] = rec.min(self.advancing[e]);
            } else {
                let adv = draw(spec.advancing_contact_angle_deg, seed, STREAM_ADVANCING, e);
                self.advancing[e] = adv.max(self.receding[e]);
            }
        }
        self.oil_wet = oil_wet;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec() -> WettabilitySpec {
        WettabilitySpec {
            receding_contact_angle_deg: [10.0, 30.0],
            advancing_contact_angle_deg: [20.0, 40.0],
            oil_wet_fraction: 0.5,
            oil_wet_selection: OilWetSelection::Largest,
            oil_wet_advancing_contact_angle_deg: [120.0, 150.0],
            oil_wet_receding_contact_angle_deg: [100.0, 130.0],
        }
    }

    #[test]
    fn alteration_keeps_advancing_above_receding_and_spares_uncontacted_elements() {
        let n = 1000;
        let mut a = ContactAngles::intrinsic(&spec(), n, 3);
        let before = a.clone();
        let contacted: Vec<bool> = (0..n).map(|e| e % 3 != 0).collect();
        let size: Vec<f64> = (0..n).map(|e| e as f64).collect();
        // 600 throats joining pores (t mod 400, (t + 1) mod 400).
        let ends: Vec<[u32; 2]> = (0..600u32).map(|t| [t % 400, (t + 1) % 400]).collect();
        a.alter(&spec(), &contacted, 400, &ends, &size, None, 3);
        for e in 0..n {
            assert!(a.advancing[e] >= a.receding[e]);
            if !contacted[e] {
                assert_eq!(a.advancing[e], before.advancing[e]);
                assert!(!a.oil_wet[e]);
            }
        }
        // Half of the contacted pores, the largest ones, are oil-wet.
        let contacted_pores = (0..400).filter(|&e| contacted[e]).count();
        let ow_pores = (0..400).filter(|&e| a.oil_wet[e]).count();
        assert_eq!(ow_pores, (0.5 * contacted_pores as f64).round() as usize);
        assert!(a.oil_wet[398] && !a.oil_wet[1]);
        // A throat is oil-wet exactly when oil contacted it and both its
        // pores are oil-wet (the rule of `alter`).
        for (t, ends) in ends.iter().enumerate() {
            let e = 400 + t;
            let both = a.oil_wet[ends[0] as usize] && a.oil_wet[ends[1] as usize];
            assert_eq!(a.oil_wet[e], contacted[e] && both, "throat {t}");
        }
    }

    #[test]
    fn a_preset_column_replaces_the_selection() {
        // Marks from the network files: exactly the contacted, marked
        // elements turn oil-wet, whatever the fraction says.
        let n = 30;
        let mut a = ContactAngles::intrinsic(&spec(), n, 3);
        let contacted: Vec<bool> = (0..n).map(|e| e != 4).collect();
        let marks: Vec<bool> = (0..n).map(|e| e % 2 == 0).collect();
        let size = vec![1.0; n];
        a.alter(
            &spec(),
            &contacted,
            10,
            &[[0, 1]; 20],
            &size,
            Some(&marks),
            3,
        );
        for e in 0..n {
            assert_eq!(a.oil_wet[e], e % 2 == 0 && e != 4, "element {e}");
        }
    }

    #[test]
    fn angles_lie_in_their_ranges() {
        let a = ContactAngles::intrinsic(&spec(), 500, 1);
        assert!(
            a.receding
                .iter()
                .all(|&t| (deg(10.0)..=deg(30.0)).contains(&t))
        );
    }
}
