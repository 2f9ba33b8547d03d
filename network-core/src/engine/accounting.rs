//! Incremental saturation bookkeeping.
//!
//! Recomputing every element's corner water at every recorded point costs
//! O(N) trigonometry per point. Most elements, however, sit in a regime
//! where their corner water scales as `(σ/Pc)²`:
//! - in drainage, the receding menisci of connected oil (`r = σ/Pc`);
//! - in imbibition, water-wet corners whose contact lines advance at `θa`
//!   (`r = σ/Pc` once the hinging angle has reached `θa`).
//!
//! Those elements add a constant coefficient to one running sum, so their
//! water is `(σ/Pc)² × sum` at any pressure. Trapped elements are frozen:
//! their water is computed once, when they are trapped. Only the rest —
//! hinging menisci, oil layers, reversals after an imbibition — is
//! evaluated element by element at a recorded point ([`Engine::saturation`]).
//! Elements that will enter a fast regime at a known pressure are kept in a
//! sorted list and moved when the pressure passes it.
//!
//! [`Engine::saturation_full`] recomputes everything from scratch; the
//! tests check that both agree.

use std::collections::BinaryHeap;
use std::f64::consts::FRAC_PI_2;

use serde::{Deserialize, Serialize};

use super::{Engine, Mode};
use crate::capillary;
use crate::numeric::CHUNK;

/// How an element's water is accounted for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[repr(u8)]
pub enum Regime {
    /// Bulk only: a water-filled centre without layers, or an oil-filled
    /// element without corner water.
    #[default]
    Bulk = 0,
    /// Corner water `(σ/Pc)² c`, receding (drainage).
    Receding = 1,
    /// Corner water `(σ/Pc)² c`, advancing (imbibition).
    Advancing = 2,
    /// Evaluated at every recorded point.
    Explicit = 3,
    /// Frozen by trapping.
    Frozen = 4,
}

/// The running sums and per-element records (part of the engine's dynamic
/// state, so snapshots restore them).
#[derive(Clone, Debug, Default)]
pub struct Accounts {
    regime: Vec<Regime>,
    /// Per element: the fast-regime coefficient `c` (m: water volume per
    /// `(σ/Pc)²`, i.e. `V/A Σ corner_area(r = 1)`), or for frozen elements
    /// `[water adjustment, trapped oil, trapped water]` volumes, m³.
    rec: Vec<[f64; 3]>,
    /// Pressure at which an explicit element enters its fast regime (NaN
    /// if none).
    switch_pc: Vec<f64>,
    listed: Vec<bool>,
    explicit: Vec<u32>,
    /// Elements waiting to switch, the next one (the first the pressure
    /// passes) on top.
    pending: BinaryHeap<Pending>,
    sum_receding: f64,
    sum_advancing: f64,
    frozen_corner: f64,
    frozen_layer: f64,
    trapped_oil: f64,
    trapped_water: f64,
}

/// A pending switch: `key` is the switch pressure, negated in drainage so
/// the heap's maximum is always the next one.
#[derive(Clone, Copy, Debug)]
struct Pending {
    key: f64,
    element: u32,
}

impl PartialEq for Pending {
    fn eq(&self, o: &Self) -> bool {
        self.cmp(o) == std::cmp::Ordering::Equal
    }
}
impl Eq for Pending {}
impl PartialOrd for Pending {
    fn partial_cmp(&self, o: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Pending {
    fn cmp(&self, o: &Self) -> std::cmp::Ordering {
        self.key
            .total_cmp(&o.key)
            .then(o.element.cmp(&self.element))
    }
}

/// Corner water of element `e` in its current occupancy relative to the
/// bulk baseline (the centre's volume if water-filled, else 0), and the
/// water and oil it holds; m³.
struct Parts {
    adjust: f64,
    water: f64,
    oil: f64,
}

impl Engine<'_> {
    fn parts(&self, e: usize) -> Parts {
        let v = self.volume[e];
        let area = self.setup.geometry.area(e);
        let (aw, _) = self.element_areas(e);
        let w = v * aw / area;
        let baseline = if self.dyn_.state.oil[e] { 0.0 } else { v };
        Parts {
            adjust: w - baseline,
            water: self.clay[e] + w,
            oil: v * (area - aw) / area,
        }
    }

    /// `V/A Σ corner_area(r = 1, θ, β)` over the wet corners.
    fn unit_corner_coefficient(&self, e: usize, theta: f64) -> f64 {
        let sec = self.section(e);
        let mut f = 0.0;
        for (i, &beta) in sec.corners.iter().enumerate() {
            if self.wet[e] & (1 << i) != 0 {
                f += capillary::corner_area(1.0, theta, beta);
            }
        }
        f * self.volume[e] / self.setup.geometry.area(e)
    }

    /// Removes element `e`'s contribution from the sums.
    fn unaccount(&mut self, e: usize) {
        if self.dyn_.acc.regime.len() != self.volume.len() {
            return;
        }
        let a = &mut self.dyn_.acc;
        let r = a.rec[e];
        match a.regime[e] {
            Regime::Receding => a.sum_receding -= r[0],
            Regime::Advancing => a.sum_advancing -= r[0],
            Regime::Frozen => {
                if self.dyn_.state.oil[e] {
                    a.frozen_corner -= r[0];
                } else {
                    a.frozen_layer -= r[0];
                }
                a.trapped_oil -= r[1];
                a.trapped_water -= r[2];
            }
            Regime::Bulk | Regime::Explicit => {}
        }
        a.regime[e] = Regime::Bulk;
        a.switch_pc[e] = f64::NAN;
    }

    fn push_pending(&mut self, e: usize, switch_pc: f64) {
        let key = if self.mode == Mode::Imbibition {
            switch_pc
        } else {
            -switch_pc
        };
        self.dyn_.acc.pending.push(Pending {
            key,
            element: e as u32,
        });
    }

    fn set_explicit(&mut self, e: usize, switch_pc: f64) {
        let a = &mut self.dyn_.acc;
        a.regime[e] = Regime::Explicit;
        a.switch_pc[e] = switch_pc;
        if !a.listed[e] {
            a.listed[e] = true;
            a.explicit.push(e as u32);
        }
    }

    /// Re-derives element `e`'s regime from its state and adds it back.
    /// Must be called after every change of the element's occupancy, trap
    /// flags or connection (before any later change of the sums' order).
    pub(super) fn reaccount(&mut self, e: usize) {
        // `regime` is Bulk here; a Frozen element's old record was removed
        // by `unaccount`, which needs the occupancy it had: callers that
        // change occupancy call `unaccount` first.
        if self.dyn_.acc.regime.len() != self.volume.len() {
            return;
        }
        let s = &self.dyn_.state;
        let sigma = self.setup.sigma;
        if s.frozen_pc[e].is_finite() {
            let p = self.parts(e);
            let trapped_oil = if s.oil_trapped[e] { p.oil } else { 0.0 };
            let trapped_water = if s.water_trapped[e] { p.water } else { 0.0 };
            let oil = s.oil[e];
            let a = &mut self.dyn_.acc;
            a.regime[e] = Regime::Frozen;
            a.rec[e] = [p.adjust, trapped_oil, trapped_water];
            if oil {
                a.frozen_corner += p.adjust;
            } else {
                a.frozen_layer += p.adjust;
            }
            a.trapped_oil += trapped_oil;
            a.trapped_water += trapped_water;
            return;
        }
        if !s.oil[e] {
            if s.layers[e] != 0 {
                self.set_explicit(e, f64::NAN);
            }
            return;
        }
        if self.wet[e] == 0 {
            return;
        }
        let (pc, pc_max, pc_min) = self.meniscus_pressures(e);
        if pc_max <= 0.0 {
            return;
        }
        let area = self.setup.geometry.area(e);
        let theta_r = self.angles.pinned_receding[e];
        let theta_a = self.angles.advancing[e];
        match self.mode {
            Mode::Drainage if self.dyn_.connected[e] => {
                let c = self.corner_coef[e];
                let fits = |pc: f64| pc > 0.0 && (sigma / pc).powi(2) * c <= self.volume[e];
                if pc_min.is_finite() && pc < pc_max {
                    // Hinging back after an imbibition until Pc passes the
                    // old drainage pressure, then receding.
                    if fits(pc_max) {
                        self.dyn_.acc.rec[e][0] = c;
                        self.set_explicit(e, pc_max);
                        self.push_pending(e, pc_max);
                    } else {
                        self.set_explicit(e, f64::NAN);
                    }
                } else if fits(pc) {
                    let a = &mut self.dyn_.acc;
                    a.regime[e] = Regime::Receding;
                    a.rec[e][0] = c;
                    a.sum_receding += c;
                } else {
                    self.set_explicit(e, f64::NAN);
                }
            }
            Mode::Imbibition if !pc_min.is_finite() => {
                // Every wet corner advances below min_i pc_max cos(θa+β)/cos(θr+β)
                // (the hinging relation of Ma et al. 1996 at θh = θa).
                let mut switch = f64::INFINITY;
                for (i, &beta) in self.section(e).corners.iter().enumerate() {
                    if self.wet[e] & (1 << i) != 0 {
                        let p = if theta_a + beta < FRAC_PI_2 {
                            pc_max * (theta_a + beta).cos() / (theta_r + beta).cos()
                        } else {
                            f64::NEG_INFINITY
                        };
                        switch = switch.min(p);
                    }
                }
                let c = self.corner_coef[e];
                // The advancing arcs fill the section below
                // pc_cap = σ √(c/V); the element must snap off before.
                let pc_cap = sigma * (c / self.volume[e]).sqrt();
                let snap = self.snap.get(e).copied().unwrap_or(f64::NAN);
                let safe = self.setup.mechanisms.snap_off
                    && snap.is_finite()
                    && snap > 0.0
                    && snap >= pc_cap
                    && switch > 0.0
                    && switch.is_finite()
                    && area > 0.0;
                if !safe {
                    self.set_explicit(e, f64::NAN);
                } else if s.pc < switch {
                    let a = &mut self.dyn_.acc;
                    a.regime[e] = Regime::Advancing;
                    a.rec[e][0] = c;
                    a.sum_advancing += c;
                } else {
                    self.dyn_.acc.rec[e][0] = c;
                    self.set_explicit(e, switch);
                    self.push_pending(e, switch);
                }
            }
            _ => self.set_explicit(e, f64::NAN),
        }
    }

    /// Removes `e` before its occupancy changes (call `reaccount` after).
    pub(super) fn release_account(&mut self, e: usize) {
        self.unaccount(e);
    }

    /// Rebuilds every record (at the start of a process).
    pub(super) fn reaccount_all(&mut self) {
        let n = self.volume.len();
        // Receding menisci at θr in drainage, advancing ones at θa in
        // imbibition.
        let imbibition = self.mode == Mode::Imbibition;
        self.corner_coef = (0..n)
            .into_par_iter()
            .map(|e| {
                let theta = if imbibition {
                    self.angles.advancing[e]
                } else {
                    self.angles.pinned_receding[e]
                };
                self.unit_corner_coefficient(e, theta)
            })
            .collect();
        self.dyn_.acc = Accounts {
            regime: vec![Regime::Bulk; n],
            rec: vec![[0.0; 3]; n],
            switch_pc: vec![f64::NAN; n],
            listed: vec![false; n],
            ..Accounts::default()
        };
        for e in 0..n {
            self.reaccount(e);
        }
    }

    /// Drops the records (at the end of a process): saturations are then
    /// recomputed in full until the next process rebuilds them.
    pub(super) fn drop_accounts(&mut self) {
        self.dyn_.acc = Accounts::default();
    }

    /// Moves explicit elements whose switch pressure the current pressure
    /// has passed into their fast regime, and drops stale list entries.
    pub(super) fn settle_accounts(&mut self) {
        if self.dyn_.acc.regime.len() != self.volume.len() {
            return;
        }
        let pc = self.dyn_.state.pc;
        let descending = self.mode == Mode::Imbibition;
        while let Some(&top) = self.dyn_.acc.pending.peek() {
            let p = if descending { top.key } else { -top.key };
            let passed = if descending { pc < p } else { pc >= p };
            if !passed {
                break;
            }
            self.dyn_.acc.pending.pop();
            let e = top.element as usize;
            let a = &mut self.dyn_.acc;
            if a.regime[e] == Regime::Explicit && a.switch_pc[e] == p {
                let c = a.rec[e][0];
                a.switch_pc[e] = f64::NAN;
                if descending {
                    a.regime[e] = Regime::Advancing;
                    a.sum_advancing += c;
                } else {
                    a.regime[e] = Regime::Receding;
                    a.sum_receding += c;
                }
            }
        }
        let a = &mut self.dyn_.acc;
        let live = a
            .explicit
            .iter()
            .filter(|&&e| a.regime[e as usize] == Regime::Explicit)
            .count();
        if live * 2 < a.explicit.len() {
            let (regime, listed) = (&a.regime, &mut a.listed);
            a.explicit.retain(|&e| {
                let keep = regime[e as usize] == Regime::Explicit;
                if !keep {
                    listed[e as usize] = false;
                }
                keep
            });
        }
    }

    /// Elements evaluated one by one at a recorded point.
    pub fn explicit_elements(&self) -> usize {
        let a = &self.dyn_.acc;
        a.explicit
            .iter()
            .filter(|&&e| a.regime[e as usize] == Regime::Explicit)
            .count()
    }

    /// Saturations of the current state from the running sums plus the
    /// explicit elements (parallel, deterministic). Equals
    /// [`Engine::saturation_full`] up to round-off.
    pub fn saturation(&self) -> super::saturation::Saturation {
        let a = &self.dyn_.acc;
        if a.regime.len() != self.volume.len() {
            return self.saturation_full();
        }
        let pc = self.dyn_.state.pc;
        let sigma = self.setup.sigma;
        let r2 = if pc > 0.0 { (sigma / pc).powi(2) } else { 0.0 };
        let descending = self.mode == Mode::Imbibition;
        let list = &a.explicit;
        let n_chunks = list.len().div_ceil(CHUNK);
        let parts: Vec<(f64, f64)> = (0..n_chunks)
            .into_par_iter()
            .map(|c| {
                let (mut corner, mut layer) = (0.0, 0.0);
                for &e in &list[c * CHUNK..((c + 1) * CHUNK).min(list.len())] {
                    let e = e as usize;
                    if a.regime[e] != Regime::Explicit {
                        continue;
                    }
                    let sw = a.switch_pc[e];
                    let passed = sw.is_finite() && if descending { pc < sw } else { pc >= sw };
                    let adj = if passed {
                        a.rec[e][0] * r2
                    } else {
                        self.parts(e).adjust
                    };
                    if self.dyn_.state.oil[e] {
                        corner += adj;
                    } else {
                        layer += adj;
                    }
                }
                (corner, layer)
            })
            .collect();
        let (ex_corner, ex_layer) = parts.iter().fold((0.0, 0.0), |s, p| (s.0 + p.0, s.1 + p.1));
        let fast = (a.sum_receding + a.sum_advancing) * r2;
        let corners = a.frozen_corner + fast + ex_corner;
        let layers = -(a.frozen_layer + ex_layer);
        let pv = self.pore_volume;
        // Running sums drift by round-off; the water volume stays in [0, PV].
        let water = (self.clay_total + (self.resolved_total - self.dyn_.bulk_oil_volume) + corners
            - layers)
            .clamp(0.0, pv);
        super::saturation::Saturation {
            sw: water / pv,
            sn: (pv - water) / pv,
            sn_trapped: a.trapped_oil / pv,
            sw_trapped: a.trapped_water / pv,
            sw_corners: corners / pv,
            sn_layers: layers / pv,
        }
    }
}

use rayon::prelude::*;
