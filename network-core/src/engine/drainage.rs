//! Drainage: the non-aqueous phase invades from the inlet face as the
//! capillary pressure rises — invasion percolation (Wilkinson & Willemsen
//! 1983, J. Phys. A 16:3365–3376) with the entry pressures of
//! [`crate::capillary::drainage_entry_pc`].
//!
//! Rules:
//! - an element can be invaded when it is an entry pore (the non-aqueous
//!   reservoir is at the inlet face, or at every external face with
//!   [`crate::params::DrainageFaces::All`]) or touches an element whose
//!   non-aqueous phase (bulk or layer) is connected to the inlet supply;
//! - with [`OutletRule::SemiPermeable`] outlet pores are never invaded;
//! - water leaves only through the outlet face (through every external
//!   face with `DrainageFaces::All`, counter-current to the entering
//!   phase; no breakthrough is recorded then). It stays connected through
//!   bulk water and through the corner films of drained angular elements
//!   (corners with θ < π/2 − β). Water that loses every such path to an
//!   outlet pore is trapped and keeps its volume;
//! - when the invading phase touches a trapped cluster of the non-aqueous
//!   phase (secondary drainage), the cluster reconnects.

use rayon::prelude::*;

use super::queue::{EventKind, Order, ThresholdQueue};
use super::{Engine, Mode};
use crate::capillary;
use crate::network::Boundary;
use crate::params::OutletRule;

impl Engine<'_> {
    /// Starts a drainage from the current state.
    pub fn begin_drainage(&mut self) {
        self.mode = Mode::Drainage;
        let n_e = self.volume.len();
        let sigma = self.setup.sigma;
        self.entry = (0..n_e)
            .into_par_iter()
            .map(|e| capillary::drainage_entry_pc(&self.section(e), self.angles.receding[e], sigma))
            .collect();
        let d = &mut self.live;
        d.queue = ThresholdQueue::new(n_e, Order::Ascending);
        d.connected.iter_mut().for_each(|c| *c = false);
        d.queued.iter_mut().for_each(|q| *q = false);
        d.counts = Default::default();
        d.events = 0;
        d.breakthrough_pc = None;
        // Oil connected to the inlet supply (secondary drainage: what
        // imbibition left connected to inlet pores).
        let mut stack: Vec<usize> = (0..self.elements.n_pores())
            .filter(|&p| self.is_drainage_entry(p) && self.live.state.conducts_oil(p))
            .collect();
        for &p in &stack {
            self.live.connected[p] = true;
        }
        while let Some(x) = stack.pop() {
            self.reconnect_from(x, &mut stack);
        }
        // Initial accessible elements.
        for p in 0..self.elements.n_pores() {
            if self.is_drainage_entry(p) {
                self.push_drainage(p);
            }
        }
        for e in 0..n_e {
            if self.live.connected[e] {
                let nb = self.neighbours(e);
                for n in nb {
                    self.push_drainage(n);
                }
            }
        }
        self.reaccount_all();
    }

    /// Marks the unconnected oil around `x` as connected, pushing onto
    /// `stack`; a reconnected trapped element is released.
    fn reconnect_from(&mut self, x: usize, stack: &mut Vec<usize>) {
        let mut nb = [usize::MAX; 64];
        let mut k = 0;
        self.for_each_neighbour(x, |n| {
            if k < nb.len() {
                nb[k] = n;
                k += 1;
            }
        });
        if k == nb.len() {
            // Very high coordination: fall back to a vector.
            let mut v = Vec::new();
            self.for_each_neighbour(x, |n| v.push(n));
            for n in v {
                self.reconnect_one(n, stack);
            }
            return;
        }
        for &n in &nb[..k] {
            self.reconnect_one(n, stack);
        }
    }

    fn reconnect_one(&mut self, n: usize, stack: &mut Vec<usize>) {
        if self.live.state.conducts_oil(n) && !self.live.connected[n] {
            self.change_element(n, |eng| {
                eng.live.connected[n] = true;
                let s = &mut eng.live.state;
                if s.oil_trapped[n] {
                    s.oil_trapped[n] = false;
                    if !s.water_trapped[n] {
                        s.frozen_pc[n] = f64::NAN;
                    }
                    s.ganglion[n] = super::state::NO_GANGLION;
                }
            });
            stack.push(n);
        }
    }

    /// True when pore `p` lets the non-aqueous phase in (an inlet pore, or
    /// any face pore with `DrainageFaces::All`).
    #[inline]
    fn is_drainage_entry(&self, p: usize) -> bool {
        if self.all_faces.is_empty() {
            self.boundary(p) == Boundary::Inlet
        } else {
            p < self.elements.n_pores() && self.all_faces[p]
        }
    }

    /// True when element `x` lets water out in drainage (an outlet pore, or
    /// any face pore with `DrainageFaces::All`).
    #[inline]
    fn is_water_exit(&self, x: usize) -> bool {
        if self.all_faces.is_empty() {
            self.boundary(x) == Boundary::Outlet
        } else {
            x < self.elements.n_pores() && self.all_faces[x]
        }
    }

    /// Queues element `e` for invasion if it can be invaded.
    fn push_drainage(&mut self, e: usize) {
        let s = &self.live.state;
        if s.oil[e] || s.water_trapped[e] || self.live.queued[e] {
            return;
        }
        if self.setup.outlet == OutletRule::SemiPermeable && self.boundary(e) == Boundary::Outlet {
            return;
        }
        self.live.queued[e] = true;
        self.live.queue.set(e, self.entry[e], EventKind::Piston);
    }

    /// True when element `x` conducts water that is not trapped.
    #[inline]
    fn conducts_water(&self, x: usize) -> bool {
        self.live.flags[x] & super::FLAG_WATER != 0
    }

    /// Fills element `e` with the non-aqueous phase at the current Pc.
    pub(super) fn fill_oil(&mut self, e: usize) {
        let pc = self.live.state.pc;
        self.change_element(e, |eng| {
            let volume = eng.volume[e];
            let d = &mut eng.live;
            let s = &mut d.state;
            s.oil[e] = true;
            s.layers[e] = 0;
            s.contacted[e] = true;
            // New corner menisci recede from the current pressure; below
            // zero (oil-wet walls) the corner water stays pinned where the
            // last drainage left it.
            if pc > 0.0 {
                s.pc_max[e] = pc;
                s.pc_min[e] = f64::NAN;
            }
            s.oil_trapped[e] = false;
            s.ganglion[e] = super::state::NO_GANGLION;
            if !s.water_trapped[e] {
                s.frozen_pc[e] = f64::NAN;
            }
            d.connected[e] = true;
            d.bulk_oil_volume += volume;
            d.events += 1;
        });
        if self.elements.is_pore(e) {
            self.live.counts.drainage_pores += 1;
        } else {
            self.live.counts.drainage_throats += 1;
        }
        if self.live.breakthrough_pc.is_none() && self.all_faces.is_empty() {
            let reached = match self.setup.outlet {
                OutletRule::Open => self.boundary(e) == Boundary::Outlet,
                OutletRule::SemiPermeable => {
                    let mut r = false;
                    self.for_each_neighbour(e, |n| r |= self.boundary(n) == Boundary::Outlet);
                    r && !self.elements.is_pore(e)
                }
            };
            if reached {
                self.live.breakthrough_pc = Some(pc);
            }
        }
        // Reconnect unconnected non-aqueous clusters touched by e.
        let nb = self.neighbours(e);
        let mut reconnected = Vec::new();
        if nb
            .iter()
            .any(|&n| self.live.state.conducts_oil(n) && !self.live.connected[n])
        {
            let mut stack = vec![e];
            while let Some(x) = stack.pop() {
                let before = stack.len();
                self.reconnect_from(x, &mut stack);
                reconnected.extend_from_slice(&stack[before..]);
            }
            self.live.counts.reconnections += 1;
        }
        // New accessible neighbours.
        for &n in &nb {
            self.push_drainage(n);
        }
        for &x in &reconnected {
            let nb2 = self.neighbours(x);
            for n in nb2 {
                self.push_drainage(n);
            }
        }
        // Water trapping: e no longer passes water unless its corners do.
        if self.wet[e] == 0 && self.water_trapping {
            let seeds: super::Neighbours = nb
                .iter()
                .copied()
                .filter(|&n| self.conducts_water(n))
                .collect();
            let one_must_escape = !self.is_water_exit(e);
            self.trap_water(&seeds, one_must_escape);
        }
    }

    fn trap_water(&mut self, seeds: &[usize], one_must_escape: bool) {
        if seeds.is_empty() {
            return;
        }
        let mut pieces: Vec<Vec<u32>> = Vec::new();
        let mut search = std::mem::replace(&mut self.search, super::trapping::SplitSearch::new(0));
        search.run(
            seeds,
            |x| self.conducts_water(x),
            |x| self.is_water_exit(x),
            |x, out| self.neighbours_into(x, out),
            one_must_escape,
            |p| pieces.push(p.to_vec()),
        );
        self.search = search;
        let pc = self.live.state.pc;
        for piece in pieces {
            self.live.counts.trapped_water_clusters += 1;
            for &x in &piece {
                let x = x as usize;
                self.change_element(x, |eng| {
                    let s = &mut eng.live.state;
                    s.water_trapped[x] = true;
                    if s.frozen_pc[x].is_nan() {
                        s.frozen_pc[x] = pc;
                    }
                    if !s.oil[x] {
                        eng.live.queue.cancel(x);
                    }
                });
            }
        }
    }

    /// Applies the next drainage event (already popped).
    pub(super) fn apply_drainage_event(&mut self, e: usize) {
        self.live.queued[e] = false;
        let s = &self.live.state;
        if s.oil[e] || s.water_trapped[e] {
            return;
        }
        self.fill_oil(e);
    }

    /// Ends a drainage: every connected oil-filled element has seen the
    /// final capillary pressure.
    pub fn end_drainage(&mut self) {
        let pc = self.live.state.pc;
        let d = &mut self.live;
        for e in 0..d.state.oil.len() {
            if d.state.oil[e] && !d.state.oil_trapped[e] {
                // Corner menisci stopped receding at the final pressure, or
                // earlier where their water was trapped.
                let seen = if d.state.frozen_pc[e].is_finite() {
                    d.state.frozen_pc[e]
                } else {
                    pc
                };
                if seen >= d.state.pc_max[e] {
                    // Receded past the old pinning: a fresh drainage state.
                    d.state.pc_max[e] = seen;
                    d.state.pc_min[e] = f64::NAN;
                }
            }
        }
        self.mode = Mode::Idle;
        self.drop_accounts();
    }
}
