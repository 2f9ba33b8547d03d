//! Phase volumes at a recorded point.
//!
//! Bulk occupancy is exact; corner water depends on the capillary pressure
//! of every element, so it is computed here, in parallel with fixed
//! grouping ([`crate::numeric::CHUNK`]), only when a point is recorded.
//!
//! Water in element `e` = clay volume + resolved volume × water area
//! fraction of the cross-section (prism model: the fraction of area is the
//! fraction of volume). For an oil-filled element the water area is its
//! corner water ([`Engine::corner_menisci`]). Trapped phases keep the
//! capillary pressure at which they were trapped. For a water-filled element
//! with oil layers the oil area is that of the layers.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use super::{Engine, Mode};
use crate::capillary;
use crate::numeric::CHUNK;

/// Saturations and volumes at one state.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Saturation {
    /// Water saturation (fraction of pore volume, clay included).
    pub sw: f64,
    /// Non-aqueous saturation, `1 − sw`.
    pub sn: f64,
    /// Trapped non-aqueous saturation.
    pub sn_trapped: f64,
    /// Trapped (bulk and film) water saturation.
    pub sw_trapped: f64,
    /// Water in corners and films of oil-filled elements, fraction of pore
    /// volume.
    pub sw_corners: f64,
    /// Non-aqueous phase in layers, fraction of pore volume.
    pub sn_layers: f64,
}

/// Saturations closer than this to 0 or 1 are round-off of the running
/// volume sums (relative drift of order 1e-15 per event) and are set to
/// exactly 0 or 1 by [`Saturation::tidy`].
pub const SATURATION_NOISE: f64 = 1.0e-12;

impl Saturation {
    /// The same saturations with round-off noise removed: each fraction
    /// within [`SATURATION_NOISE`] of 0 becomes `+0.0` (never `-0.0`), and
    /// `sw` within it of 1 becomes 1 with `sn` 0 (and the reverse), so a
    /// fully water-filled sample reads Sw = 1, Sn = 0 exactly.
    pub fn tidy(self) -> Saturation {
        let zero = |x: f64| if x.abs() < SATURATION_NOISE { 0.0 } else { x };
        let (sw, sn) = if (1.0 - self.sw).abs() < SATURATION_NOISE {
            (1.0, 0.0)
        } else if (1.0 - self.sn).abs() < SATURATION_NOISE {
            (0.0, 1.0)
        } else {
            (zero(self.sw), zero(self.sn))
        };
        Saturation {
            sw,
            sn,
            sn_trapped: zero(self.sn_trapped),
            sw_trapped: zero(self.sw_trapped),
            sw_corners: zero(self.sw_corners),
            sn_layers: zero(self.sn_layers),
        }
    }
}

/// Phase volumes of one element, m³ ([`Engine::element_volumes`]).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ElementVolumes {
    /// Water, clay water included.
    pub water: f64,
    /// Non-aqueous phase (centre or layers).
    pub oil: f64,
    /// Water in the corners of an oil-filled centre.
    pub corner_water: f64,
    /// Non-aqueous phase in layers of a water-filled centre.
    pub layer_oil: f64,
}

/// Phase volumes summed over a region of the sample, m³
/// ([`Engine::region_volumes`]).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct RegionVolumes {
    /// Pore volume (clay included), `water + oil`.
    pub pore: f64,
    /// Water.
    pub water: f64,
    /// Non-aqueous phase.
    pub oil: f64,
    /// Trapped non-aqueous phase.
    pub oil_trapped: f64,
}

impl std::ops::AddAssign for RegionVolumes {
    fn add_assign(&mut self, o: RegionVolumes) {
        self.pore += o.pore;
        self.water += o.water;
        self.oil += o.oil;
        self.oil_trapped += o.oil_trapped;
    }
}

#[derive(Clone, Copy, Default)]
struct Sums {
    water: f64,
    oil: f64,
    oil_trapped: f64,
    water_trapped: f64,
    corners: f64,
    layers: f64,
}

impl Sums {
    fn add(mut self, o: Sums) -> Sums {
        self.water += o.water;
        self.oil += o.oil;
        self.oil_trapped += o.oil_trapped;
        self.water_trapped += o.water_trapped;
        self.corners += o.corners;
        self.layers += o.layers;
        self
    }
}

impl Engine<'_> {
    /// Capillary pressures that set the menisci of element `e`: the
    /// pressure they see (frozen where trapped), the highest drainage
    /// pressure and the lowest imbibition pressure behind them.
    pub(super) fn meniscus_pressures(&self, e: usize) -> (f64, f64, f64) {
        let s = &self.live.state;
        let frozen = s.frozen_pc[e].is_finite();
        let mut pc = if frozen { s.frozen_pc[e] } else { s.pc };
        let mut pc_max = s.pc_max[e];
        let pc_min = s.pc_min[e];
        if s.oil[e] && self.mode == Mode::Drainage && !frozen && self.live.connected[e] {
            // Still receding with the invading phase; menisci that an
            // imbibition left at `pc_min` do not re-advance in drainage.
            if pc_min.is_finite() {
                pc = pc.max(pc_min);
            }
            pc_max = pc_max.max(pc);
        }
        (pc, pc_max, pc_min)
    }

    /// The corner menisci of an oil-filled element (`None` for corners
    /// without water). Receding drainage menisci at or above the highest
    /// drainage pressure; hinging menisci pinned by drainage below it
    /// ([`capillary::hinged_corner`]); after an imbibition, menisci hinging
    /// back from where it left them ([`capillary::reversed_corner`]).
    pub fn corner_menisci(&self, e: usize) -> [Option<capillary::CornerMeniscus>; 4] {
        let mut out = [None; 4];
        let s = &self.live.state;
        if !s.oil[e] || self.wet[e] == 0 {
            return out;
        }
        let (pc, pc_max, pc_min) = self.meniscus_pressures(e);
        if pc_max <= 0.0 {
            // Filled at a negative pressure with no pinned corner water.
            return out;
        }
        let sigma = self.setup.sigma;
        let theta_r = self.angles.pinned_receding[e];
        let theta_a = self.angles.advancing[e];
        let reversed = pc_min.is_finite() && pc >= pc_min && pc < pc_max;
        for (i, &beta) in self.section(e).corners.iter().enumerate() {
            if self.wet[e] & (1 << i) == 0 {
                continue;
            }
            out[i] = if reversed {
                capillary::reversed_corner(pc, pc_min, pc_max, theta_r, theta_a, beta, sigma)
            } else {
                capillary::hinged_corner(pc, pc_max, theta_r, theta_a, beta, sigma)
            };
        }
        out
    }

    /// Water area of element `e` at the current state, m² (capped at the
    /// cross-section), and the oil-layer area.
    pub fn element_areas(&self, e: usize) -> (f64, f64) {
        let s = &self.live.state;
        let sec = self.section(e);
        let area = crate::geometry::area(sec.radius, sec.shape_factor);
        if s.oil[e] {
            let mut a = 0.0;
            for (i, m) in self.corner_menisci(e).iter().enumerate() {
                if let Some(m) = m {
                    a += m.area(sec.corners[i]);
                }
            }
            (a.clamp(0.0, area), 0.0)
        } else if s.layers[e] != 0 {
            let (pc, pc_max, _) = self.meniscus_pressures(e);
            let theta_pin = self.angles.pinned_receding[e];
            let mut oil = 0.0;
            for (i, &beta) in sec.corners.iter().enumerate() {
                if s.layers[e] & (1 << i) != 0 {
                    oil += capillary::layer_area(
                        theta_pin,
                        self.angles.advancing[e],
                        beta,
                        pc_max,
                        self.setup.sigma,
                        pc,
                    );
                }
            }
            let oil = oil.clamp(0.0, area);
            (area - oil, oil)
        } else {
            (area, 0.0)
        }
    }

    /// Phase volumes of element `e` at the current state, m³: the one
    /// formula behind every saturation of the engine (see the module
    /// docs). Water counts the clay volume; `water + oil` is the element's
    /// pore volume (clay included).
    #[inline]
    pub fn element_volumes(&self, e: usize) -> ElementVolumes {
        let v = self.volume[e];
        let (aw, ao_layer) = self.element_areas(e);
        let area = self.setup.geometry.area(e);
        ElementVolumes {
            water: self.clay[e] + v * aw / area,
            oil: v * (area - aw) / area,
            corner_water: if self.live.state.oil[e] {
                v * aw / area
            } else {
                0.0
            },
            layer_oil: v * ao_layer / area,
        }
    }

    /// Phase volumes summed over regions of the sample (slabs of a
    /// saturation profile, an interior window): element `e` belongs to
    /// region `region[e]` (`u32::MAX` or any value `≥ n_regions`: none).
    /// Parallel with fixed grouping ([`CHUNK`]): the same bits with any
    /// number of threads. Whole-sample saturations follow from the sums
    /// over every region when every element belongs to one.
    pub fn region_volumes(&self, region: &[u32], n_regions: usize) -> Vec<RegionVolumes> {
        let n = self.volume.len().min(region.len());
        let n_chunks = n.div_ceil(CHUNK);
        let pc = self.live.state.pc;
        let r2 = if pc > 0.0 {
            (self.setup.sigma / pc).powi(2)
        } else {
            0.0
        };
        let parts: Vec<Vec<RegionVolumes>> = (0..n_chunks)
            .into_par_iter()
            .map(|c| {
                let mut acc = vec![RegionVolumes::default(); n_regions];
                for e in c * CHUNK..((c + 1) * CHUNK).min(n) {
                    let r = region[e] as usize;
                    if r >= n_regions {
                        continue;
                    }
                    // The running records hold most elements' water
                    // (accounting.rs); the rest is computed.
                    let ev = match self.recorded_water(e, r2) {
                        Some(w) => ElementVolumes {
                            water: self.clay[e] + w,
                            oil: self.volume[e] - w,
                            ..ElementVolumes::default()
                        },
                        None => self.element_volumes(e),
                    };
                    let a = &mut acc[r];
                    a.pore += ev.water + ev.oil;
                    a.water += ev.water;
                    a.oil += ev.oil;
                    if self.live.state.oil_trapped[e] {
                        a.oil_trapped += ev.oil;
                    }
                }
                acc
            })
            .collect();
        let mut out = vec![RegionVolumes::default(); n_regions];
        for part in parts {
            for (o, p) in out.iter_mut().zip(part) {
                *o += p;
            }
        }
        out
    }

    /// Water saturation of every element at the current state: its water
    /// (clay included) over its pore volume, in element order (pores
    /// first, then throats), in single precision; 1 for an element without
    /// volume. Taken from the running records where they hold it, as
    /// [`Engine::region_volumes`] does (parallel; each value depends on its
    /// element only).
    pub fn element_water_saturations(&self) -> Vec<f32> {
        let pc = self.live.state.pc;
        let r2 = if pc > 0.0 {
            (self.setup.sigma / pc).powi(2)
        } else {
            0.0
        };
        (0..self.volume.len())
            .into_par_iter()
            .map(|e| {
                let (water, oil) = match self.recorded_water(e, r2) {
                    Some(w) => (self.clay[e] + w, self.volume[e] - w),
                    None => {
                        let ev = self.element_volumes(e);
                        (ev.water, ev.oil)
                    }
                };
                let pv = water + oil;
                if pv > 0.0 {
                    (water / pv).clamp(0.0, 1.0) as f32
                } else {
                    1.0
                }
            })
            .collect()
    }

    /// Saturations of the current state recomputed element by element
    /// (parallel, deterministic): the reference for [`Engine::saturation`].
    pub fn saturation_full(&self) -> Saturation {
        let n = self.volume.len();
        let n_chunks = n.div_ceil(CHUNK);
        let parts: Vec<Sums> = (0..n_chunks)
            .into_par_iter()
            .map(|c| {
                let mut acc = Sums::default();
                for e in c * CHUNK..((c + 1) * CHUNK).min(n) {
                    let s = &self.live.state;
                    let ev = self.element_volumes(e);
                    acc.water += ev.water;
                    acc.oil += ev.oil;
                    if s.oil_trapped[e] {
                        acc.oil_trapped += ev.oil;
                    }
                    if s.water_trapped[e] {
                        acc.water_trapped += ev.water;
                    }
                    if s.oil[e] {
                        acc.corners += ev.corner_water;
                    }
                    acc.layers += ev.layer_oil;
                }
                acc
            })
            .collect();
        let t = parts.into_iter().fold(Sums::default(), Sums::add);
        let pv = t.water + t.oil;
        Saturation {
            sw: t.water / pv,
            sn: t.oil / pv,
            sn_trapped: t.oil_trapped / pv,
            sw_trapped: t.water_trapped / pv,
            sw_corners: t.corners / pv,
            sn_layers: t.layers / pv,
        }
        .tidy()
    }

    /// Bulk (centre) oil saturation from the incremental volume, a cheap
    /// trigger for recording points.
    pub fn bulk_oil_fraction(&self) -> f64 {
        self.live.bulk_oil_volume / self.pore_volume
    }
}

#[cfg(test)]
mod tests {
    use super::Saturation;

    #[test]
    fn tidy_removes_round_off_but_keeps_real_values() {
        // The first recorded point of a drainage as the running sums gave
        // it before tidying (values seen in a demo run's curves.csv).
        let noisy = Saturation {
            sw: 0.9999999999999982,
            sn: 1.8176703287480708e-15,
            sn_trapped: 0.0,
            sw_trapped: 0.0,
            sw_corners: 3.0e-17,
            sn_layers: -0.0,
        };
        let t = noisy.tidy();
        assert_eq!((t.sw, t.sn), (1.0, 0.0));
        assert!(t.sn_layers.is_sign_positive() && t.sn_layers == 0.0);
        assert_eq!(t.sw_corners, 0.0);
        // A small but real saturation (one pore of a million) is kept.
        let real = Saturation {
            sw: 0.999999,
            sn: 1.0e-6,
            sn_trapped: 2.0e-9,
            sw_trapped: 0.0,
            sw_corners: 0.0,
            sn_layers: 0.0,
        };
        assert_eq!(real.tidy(), real);
    }
}
