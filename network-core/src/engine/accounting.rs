//! Incremental saturation bookkeeping.
//!
//! Recomputing every element's corner water at every recorded point costs
//! O(N) trigonometry per point. Most corners, however, sit in a regime
//! where their water scales as `(σ/Pc)²`:
//! - in drainage, the receding menisci of connected oil (`r = σ/Pc`);
//! - in imbibition, water-wet corners whose contact lines advance at `θa`
//!   (`r = σ/Pc` once the hinging angle has reached `θa`).
//!
//! Those corners add a constant coefficient to one running sum, so their
//! water is `(σ/Pc)² × sum` at any pressure. Trapped elements are frozen:
//! their water is computed once, when they are trapped. Only the rest —
//! pinned (hinging) corners, oil layers, reversals after an imbibition — is
//! evaluated element by element at a recorded point
//! ([`Engine::saturation`]). Corners that will enter a fast regime at a
//! known pressure wait in a heap and move when the pressure passes it.
//!
//! [`Engine::saturation_full`] recomputes everything from scratch; the
//! tests check that both agree.

use std::collections::BinaryHeap;
use std::f64::consts::FRAC_PI_2;

use rayon::prelude::*;
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
    /// All corner water in the running sum (receding in drainage,
    /// advancing in imbibition).
    Fast = 1,
    /// Evaluated at every recorded point (possibly with some corners in the
    /// running sum).
    Explicit = 3,
    /// Frozen by trapping.
    Frozen = 4,
}

/// The running sums and per-element records (part of the engine's dynamic
/// state, so snapshots restore them).
#[derive(Clone, Debug, Default)]
pub struct Books {
    /// One record per element (one cache line each).
    cell: Vec<Cell>,
    explicit: Vec<u32>,
    /// Switches known when the process starts, sorted so the next one
    /// comes first, and how many are done.
    /// (Shared: snapshots do not copy it.)
    sorted: std::sync::Arc<Vec<Pending>>,
    building_list: Vec<Pending>,
    cursor: usize,
    /// True while the records are being built (switches go to `sorted`).
    building: bool,
    /// Switches added during the process, the next one on top.
    late: BinaryHeap<Pending>,
    sum_fast: f64,
    frozen_corner: f64,
    frozen_layer: f64,
    trapped_oil: f64,
    trapped_water: f64,
}

/// Live element: corner coefficient it will add to the sum when its
/// pending switch happens.
const SWITCH_COEF: usize = 0;
/// Live element: its coefficient now in the running sum.
const SUM_COEF: usize = 1;
/// Frozen element: its water relative to the bulk baseline.
const FROZEN_ADJUST: usize = 0;
/// Frozen element: its trapped oil.
const FROZEN_OIL: usize = 1;
/// Frozen element: its trapped water.
const FROZEN_WATER: usize = 2;

/// The record of one element.
#[derive(Clone, Copy, Debug)]
struct Cell {
    /// Three numbers whose meaning depends on the regime (one cache line
    /// per cell is worth the indirection); always indexed through the
    /// named slots below: [`SWITCH_COEF`] and [`SUM_COEF`] for live
    /// elements (coefficients in m: water volume per `(σ/Pc)²`),
    /// [`FROZEN_ADJUST`], [`FROZEN_OIL`] and [`FROZEN_WATER`] volumes (m³)
    /// for frozen ones.
    slots: [f64; 3],
    /// Drainage: pressure at which an explicit element switches to the
    /// receding regime (NaN if none).
    switch_pc: f64,
    /// Record generation, so superseded pending switches are ignored.
    generation: u32,
    regime: Regime,
    /// Imbibition: corners of an explicit element already in the sum.
    fast_mask: u8,
    /// The element is in the explicit list.
    listed: bool,
}

impl Default for Cell {
    fn default() -> Self {
        Cell {
            slots: [0.0; 3],
            switch_pc: f64::NAN,
            generation: 0,
            regime: Regime::Bulk,
            fast_mask: 0,
            listed: false,
        }
    }
}

/// A pending switch: `key` is the switch pressure, negated in drainage so
/// the heap's maximum is always the next one.
#[derive(Clone, Copy, Debug)]
struct Pending {
    key: f64,
    element: u32,
    corner: u8,
    generation: u32,
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
            .then(o.corner.cmp(&self.corner))
            .then(o.generation.cmp(&self.generation))
    }
}

/// Water of element `e` in its current occupancy relative to the bulk
/// baseline (the centre's volume if water-filled, else 0), and the water
/// and oil it holds; m³.
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
        let baseline = if self.live.state.oil[e] { 0.0 } else { v };
        Parts {
            adjust: w - baseline,
            water: self.clay[e] + w,
            oil: v * (area - aw) / area,
        }
    }

    /// `V/A Σ corner_area(r = 1, θ, β)` over the wet corners in `mask`,
    /// with `(sin θ, cos θ)` given: `corner_area(1, θ, β) =
    /// cos θ cos(θ+β)/sin β − (π/2 − θ − β)` (Ma et al. 1996), `cos(θ+β)`
    /// by angle addition.
    fn unit_corner_coefficient(&self, e: usize, theta: f64, (st, ct): (f64, f64), mask: u8) -> f64 {
        let sec = self.section(e);
        let mut f = 0.0;
        for (i, &beta) in sec.corners.iter().enumerate() {
            if self.wet[e] & mask & (1 << i) != 0 {
                let (sb, cb) = self.corner_sin_cos(e, i);
                let c = ct * cb - st * sb;
                f += ct * c / sb - (FRAC_PI_2 - theta - beta);
            }
        }
        f * self.volume[e] / self.setup.geometry.area(e)
    }

    fn advancing_trig(&self, e: usize) -> (f64, f64) {
        let t = self.angle_trig(e);
        (t[2], t[3])
    }

    fn accounts_ready(&self) -> bool {
        self.live.books.cell.len() == self.volume.len()
    }

    /// Water of element `e` outside its clay, m³, from the running records
    /// when they hold it without trigonometry: `(σ/Pc)² × coefficient` for
    /// an element in the [`Regime::Fast`] regime (`r2` = `(σ/Pc)²`, 0 at
    /// Pc ≤ 0, as in [`Engine::saturation`]) and the stored volume of a
    /// [`Regime::Frozen`] one; `None` when it must be computed
    /// ([`Engine::element_volumes`]). Agrees with that computation up to
    /// round-off, which the saturation tests check.
    pub(crate) fn recorded_water(&self, e: usize, r2: f64) -> Option<f64> {
        if !self.accounts_ready() {
            return None;
        }
        let cell = &self.live.books.cell[e];
        let baseline = if self.live.state.oil[e] {
            0.0
        } else {
            self.volume[e]
        };
        match cell.regime {
            Regime::Fast if self.live.state.oil[e] => Some(cell.slots[SUM_COEF] * r2),
            Regime::Frozen => Some(baseline + cell.slots[FROZEN_ADJUST]),
            _ => None,
        }
    }

    /// Brackets every change of element `e`'s occupancy, layers, trap
    /// flags or connection: takes the element's contribution out of the
    /// saturation sums, applies `change`, then puts the element back in
    /// the regime its new state calls for and refreshes its search flags.
    /// The sums stay exact only if every such change goes through here
    /// (the two halves are private to this module for that reason).
    pub(super) fn change_element<R>(&mut self, e: usize, change: impl FnOnce(&mut Self) -> R) -> R {
        self.release_account(e);
        let r = change(self);
        self.reaccount(e);
        r
    }

    /// Removes element `e`'s contribution from the sums (first half of
    /// [`Engine::change_element`]).
    fn release_account(&mut self, e: usize) {
        if !self.accounts_ready() {
            return;
        }
        let oil = self.live.state.oil[e];
        let a = &mut self.live.books;
        let r = a.cell[e].slots;
        match a.cell[e].regime {
            Regime::Fast | Regime::Explicit => a.sum_fast -= r[SUM_COEF],
            Regime::Frozen => {
                if oil {
                    a.frozen_corner -= r[FROZEN_ADJUST];
                } else {
                    a.frozen_layer -= r[FROZEN_ADJUST];
                }
                a.trapped_oil -= r[FROZEN_OIL];
                a.trapped_water -= r[FROZEN_WATER];
            }
            Regime::Bulk => {}
        }
        a.cell[e].regime = Regime::Bulk;
        a.cell[e].slots = [0.0; 3];
        a.cell[e].switch_pc = f64::NAN;
        a.cell[e].fast_mask = 0;
        a.cell[e].generation = a.cell[e].generation.wrapping_add(1);
    }

    fn set_explicit(&mut self, e: usize) {
        let a = &mut self.live.books;
        a.cell[e].regime = Regime::Explicit;
        if !a.cell[e].listed {
            a.cell[e].listed = true;
            a.explicit.push(e as u32);
        }
    }

    fn push_pending(&mut self, e: usize, corner: usize, switch_pc: f64) {
        let key = if self.mode == Mode::Imbibition {
            switch_pc
        } else {
            -switch_pc
        };
        let a = &mut self.live.books;
        let p = Pending {
            key,
            element: e as u32,
            corner: corner as u8,
            generation: a.cell[e].generation,
        };
        if a.building {
            a.building_list.push(p);
        } else {
            a.late.push(p);
        }
    }

    /// Switch pressure of corner `i` of element `e` to the advancing
    /// regime: `Pc,max cos(θa+β)/cos(θr+β)` (the hinging relation of Ma et
    /// al. 1996 at `θh = θa`), or −∞ when it never advances at `Pc > 0`.
    fn advancing_switch(&self, e: usize, i: usize, beta: f64) -> f64 {
        let theta_a = self.angles.advancing[e];
        if theta_a + beta < FRAC_PI_2 {
            let [sr, cr, sa, ca] = self.angle_trig(e);
            let (sb, cb) = self.corner_sin_cos(e, i);
            self.live.state.pc_max[e] * (ca * cb - sa * sb) / (cr * cb - sr * sb)
        } else {
            f64::NEG_INFINITY
        }
    }

    /// True when the advancing arcs of every wet corner of `e` can never
    /// fill the section while the element is live: it snaps off first.
    fn advancing_is_safe(&self, e: usize) -> bool {
        let c = self.corner_coef[e];
        let pc_cap = self.setup.sigma * (c / self.volume[e]).sqrt();
        let snap = self.snap.get(e).copied().unwrap_or(f64::NAN);
        self.setup.mechanisms.snap_off && snap.is_finite() && snap > 0.0 && snap >= pc_cap
    }

    /// Re-derives element `e`'s regime from its state and adds it to the
    /// sums (after [`Engine::release_account`]).
    fn reaccount(&mut self, e: usize) {
        self.refresh_flags(e);
        if !self.accounts_ready() {
            return;
        }
        let s = &self.live.state;
        if s.frozen_pc[e].is_finite() {
            let p = self.parts(e);
            let trapped_oil = if s.oil_trapped[e] { p.oil } else { 0.0 };
            let trapped_water = if s.water_trapped[e] { p.water } else { 0.0 };
            let oil = s.oil[e];
            let a = &mut self.live.books;
            a.cell[e].regime = Regime::Frozen;
            let slots = &mut a.cell[e].slots;
            slots[FROZEN_ADJUST] = p.adjust;
            slots[FROZEN_OIL] = trapped_oil;
            slots[FROZEN_WATER] = trapped_water;
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
                self.set_explicit(e);
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
        let sigma = self.setup.sigma;
        match self.mode {
            Mode::Drainage if self.live.connected[e] => {
                let c = self.corner_coef[e];
                let v = self.volume[e];
                let fits = |pc: f64| pc > 0.0 && (sigma / pc).powi(2) * c <= v;
                if pc_min.is_finite() && pc < pc_max {
                    // Hinging back after an imbibition until Pc passes the
                    // old drainage pressure, then receding.
                    self.set_explicit(e);
                    if fits(pc_max) {
                        self.live.books.cell[e].slots[SWITCH_COEF] = c;
                        self.live.books.cell[e].switch_pc = pc_max;
                        self.push_pending(e, 0, pc_max);
                    }
                } else if fits(pc) {
                    let a = &mut self.live.books;
                    a.cell[e].regime = Regime::Fast;
                    a.cell[e].slots[SUM_COEF] = c;
                    a.sum_fast += c;
                } else {
                    self.set_explicit(e);
                }
            }
            Mode::Imbibition if !pc_min.is_finite() => {
                // Corners already advancing go into the sum now; the others
                // wait for their switch pressure.
                let now = self.live.state.pc;
                let mut mask = 0u8;
                let mut waits: smallvec::SmallVec<[(usize, f64); 4]> = smallvec::SmallVec::new();
                for (i, &beta) in self.section(e).corners.iter().enumerate() {
                    if self.wet[e] & (1 << i) == 0 {
                        continue;
                    }
                    let p = self.advancing_switch(e, i, beta);
                    if now < p {
                        mask |= 1 << i;
                    } else if p > 0.0 {
                        waits.push((i, p));
                    }
                }
                let c = self.unit_corner_coefficient(
                    e,
                    self.angles.advancing[e],
                    self.advancing_trig(e),
                    mask,
                );
                let full = mask == self.wet[e] && self.advancing_is_safe(e);
                let a = &mut self.live.books;
                a.cell[e].slots[SUM_COEF] = c;
                a.sum_fast += c;
                a.cell[e].fast_mask = mask;
                if full {
                    a.cell[e].regime = Regime::Fast;
                } else {
                    self.set_explicit(e);
                    for (i, p) in waits {
                        self.push_pending(e, i, p);
                    }
                }
            }
            _ => self.set_explicit(e),
        }
    }

    /// Recomputes the packed search flags of element `e` from its state.
    pub(super) fn refresh_flags(&mut self, e: usize) {
        let s = &self.live.state;
        let mut f = 0u8;
        if s.conducts_oil(e) && !s.oil_trapped[e] {
            f |= super::FLAG_FREE_OIL;
        }
        if !s.water_trapped[e] && (!s.oil[e] || self.wet[e] != 0) {
            f |= super::FLAG_WATER;
        }
        self.live.flags[e] = f;
    }

    /// Rebuilds every record (at the start of a process).
    pub(super) fn reaccount_all(&mut self) {
        let n = self.volume.len();
        for e in 0..n {
            self.refresh_flags(e);
        }
        // Receding menisci at θr in drainage, advancing ones at θa in
        // imbibition (all wet corners).
        let imbibition = self.mode == Mode::Imbibition;
        self.angle_cos = (0..n)
            .into_par_iter()
            .map(|e| {
                [
                    self.angles.pinned_receding[e].cos(),
                    self.angles.advancing[e].cos(),
                ]
            })
            .collect();
        self.corner_coef = (0..n)
            .into_par_iter()
            .map(|e| {
                let t = self.angle_trig(e);
                let (theta, trig) = if imbibition {
                    (self.angles.advancing[e], (t[2], t[3]))
                } else {
                    (self.angles.pinned_receding[e], (t[0], t[1]))
                };
                self.unit_corner_coefficient(e, theta, trig, u8::MAX)
            })
            .collect();
        self.live.books = Books {
            cell: vec![Cell::default(); n],
            building: true,
            ..Books::default()
        };
        for e in 0..n {
            self.reaccount(e);
        }
        let a = &mut self.live.books;
        let mut list = std::mem::take(&mut a.building_list);
        list.par_sort_unstable_by(|x, y| y.cmp(x));
        a.sorted = std::sync::Arc::new(list);
        a.building = false;
    }

    /// Drops the records (at the end of a process): saturations are then
    /// recomputed in full until the next process rebuilds them.
    pub(super) fn drop_accounts(&mut self) {
        self.live.books = Books::default();
    }

    /// Moves corners whose switch pressure the current pressure has passed
    /// into the running sum, and drops stale list entries.
    pub(super) fn settle_accounts(&mut self) {
        if !self.accounts_ready() {
            return;
        }
        let pc = self.live.state.pc;
        let imbibition = self.mode == Mode::Imbibition;
        loop {
            let a = &self.live.books;
            let from_sorted = a.sorted.get(a.cursor).copied();
            let from_late = a.late.peek().copied();
            let top = match (from_sorted, from_late) {
                (Some(x), Some(y)) => {
                    if x >= y {
                        x
                    } else {
                        y
                    }
                }
                (Some(x), None) => x,
                (None, Some(y)) => y,
                (None, None) => break,
            };
            let p = if imbibition { top.key } else { -top.key };
            let passed = if imbibition { pc < p } else { pc >= p };
            if !passed {
                break;
            }
            let a = &mut self.live.books;
            if from_sorted == Some(top) && from_late.is_none_or(|y| top >= y) {
                a.cursor += 1;
            } else {
                a.late.pop();
            }
            let e = top.element as usize;
            let a = &self.live.books;
            if a.cell[e].regime != Regime::Explicit || a.cell[e].generation != top.generation {
                continue;
            }
            if imbibition {
                let bit = 1u8 << top.corner;
                let c = self.unit_corner_coefficient(
                    e,
                    self.angles.advancing[e],
                    self.advancing_trig(e),
                    bit,
                );
                let full = (a.cell[e].fast_mask | bit) == self.wet[e] && self.advancing_is_safe(e);
                let a = &mut self.live.books;
                a.cell[e].fast_mask |= bit;
                a.cell[e].slots[SUM_COEF] += c;
                a.sum_fast += c;
                if full {
                    a.cell[e].regime = Regime::Fast;
                }
            } else {
                let a = &mut self.live.books;
                let c = a.cell[e].slots[SWITCH_COEF];
                a.cell[e].switch_pc = f64::NAN;
                a.cell[e].regime = Regime::Fast;
                a.cell[e].slots[SUM_COEF] = c;
                a.sum_fast += c;
            }
        }
        let a = &mut self.live.books;
        let live = a
            .explicit
            .iter()
            .filter(|&&e| a.cell[e as usize].regime == Regime::Explicit)
            .count();
        if live * 2 < a.explicit.len() {
            let cell = &mut a.cell;
            a.explicit.retain(|&e| {
                let c = &mut cell[e as usize];
                let keep = c.regime == Regime::Explicit;
                if !keep {
                    c.listed = false;
                }
                keep
            });
        }
    }

    /// Elements evaluated one by one at a recorded point.
    pub fn explicit_elements(&self) -> usize {
        let a = &self.live.books;
        a.explicit
            .iter()
            .filter(|&&e| a.cell[e as usize].regime == Regime::Explicit)
            .count()
    }

    /// Water volume of the corners of a live oil-filled element in
    /// imbibition that are not yet in the running sum: each is still pinned
    /// (the closed form of [`capillary::pinned_corner_area`], with
    /// `cos(θ+β)` by angle addition) or has just passed its switch
    /// pressure (advancing at `θa`, `r = σ/Pc`).
    fn pinned_corner_water(&self, e: usize, pc: f64, mask: u8) -> f64 {
        let sigma = self.setup.sigma;
        let pc_max = self.live.state.pc_max[e];
        let [sr, cr, sa, ca] = self.angle_trig(e);
        let theta_a = self.angles.advancing[e];
        let r = sigma / pc;
        let ratio = pc / pc_max;
        let mut area = 0.0;
        for (i, &beta) in self.section(e).corners.iter().enumerate() {
            if (self.wet[e] & !mask) & (1 << i) == 0 {
                continue;
            }
            let (sb, cb) = self.corner_sin_cos(e, i);
            let a_r = cr * cb - sr * sb;
            let a_a = ca * cb - sa * sb;
            area += if theta_a + beta < FRAC_PI_2 && pc * a_r < pc_max * a_a {
                let x = FRAC_PI_2 - theta_a - beta;
                r * r * (ca * a_a / sb - x)
            } else {
                let b = sigma / pc_max * a_r / sb;
                let c = ratio * a_r;
                let x = c.asin();
                b * b
                    * sb
                    * (cb - sb * capillary::corner::segment_factor_sc(x, c, (1.0 - c * c).sqrt()))
            };
        }
        self.volume[e] * area / self.setup.geometry.area(e)
    }

    /// Saturations of the current state from the running sums plus the
    /// explicit elements (parallel, deterministic). Equals
    /// [`Engine::saturation_full`] up to round-off.
    pub fn saturation(&self) -> super::saturation::Saturation {
        let a = &self.live.books;
        if !self.accounts_ready() {
            return self.saturation_full();
        }
        let st = &self.live.state;
        let pc = st.pc;
        let sigma = self.setup.sigma;
        let r2 = if pc > 0.0 { (sigma / pc).powi(2) } else { 0.0 };
        let imbibition = self.mode == Mode::Imbibition;
        let list = &a.explicit;
        let n_chunks = list.len().div_ceil(CHUNK);
        let parts: Vec<(f64, f64)> = (0..n_chunks)
            .into_par_iter()
            .map(|c| {
                let (mut corner, mut layer) = (0.0, 0.0);
                for &e in &list[c * CHUNK..((c + 1) * CHUNK).min(list.len())] {
                    let e = e as usize;
                    if a.cell[e].regime != Regime::Explicit {
                        continue;
                    }
                    let in_sum = a.cell[e].slots[SUM_COEF] * r2;
                    let adj = if imbibition
                        && pc > 0.0
                        && st.oil[e]
                        && st.pc_max[e] > pc
                        && !st.pc_min[e].is_finite()
                    {
                        // The element's water is capped at its volume.
                        let rest = self.pinned_corner_water(e, pc, a.cell[e].fast_mask);
                        rest.min(self.volume[e] - in_sum)
                    } else if !imbibition
                        && a.cell[e].switch_pc.is_finite()
                        && pc >= a.cell[e].switch_pc
                    {
                        a.cell[e].slots[SWITCH_COEF] * r2
                    } else {
                        self.parts(e).adjust - in_sum
                    };
                    if st.oil[e] {
                        corner += adj;
                    } else {
                        layer += adj;
                    }
                }
                (corner, layer)
            })
            .collect();
        let (ex_corner, ex_layer) = parts.iter().fold((0.0, 0.0), |s, p| (s.0 + p.0, s.1 + p.1));
        let corners = a.frozen_corner + a.sum_fast * r2 + ex_corner;
        let layers = -(a.frozen_layer + ex_layer);
        let pv = self.pore_volume;
        // Running sums drift by round-off; the water volume stays in [0, PV].
        let water = (self.clay_total + (self.resolved_total - self.live.bulk_oil_volume) + corners
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
        .tidy()
    }
}
