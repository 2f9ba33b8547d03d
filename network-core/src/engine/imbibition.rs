//! Imbibition: water invades as the capillary pressure falls. Each
//! oil-filled element carries one pending event, the highest of the
//! mechanisms open to it:
//! - piston-like advance from a water-filled neighbour
//!   ([`crate::capillary::piston_imbibition_pc`], with the hinging corner
//!   menisci of Ma, Mason & Morrow 1996);
//! - cooperative pore filling `I_n` in water-wet pores with `n ≥ 2`
//!   oil-filled throats (Lenormand, Zarcone & Sarr 1983; the parametric
//!   model of Blunt 1998, see [`crate::capillary::cooperative_fill_pc`]);
//! - snap-off by swelling corner water
//!   ([`crate::capillary::snap_off_pc`]; Mason & Morrow 1991; Øren et al.
//!   1998; Valvatne & Blunt 2004), which needs no water-filled neighbour.
//!   Competing with piston-like advance through the thresholds, it is the
//!   network form of Roof's (1970) criterion;
//! - in water-filled elements with oil layers, layer collapse
//!   ([`crate::capillary::layer_collapse_pc`]; Hui & Blunt 2000).
//!
//! Water enters through the inlet face (both faces with
//! [`ImbibitionFaces::Both`]) and is taken as continuous through bulk water
//! and corner films, except water trapped by drainage, which invades nothing
//! until the invading water reaches it. The non-aqueous phase leaves through
//! the outlet face (both faces with `Both`); a cluster of it (bulk and
//! layers) with no path to such a face is trapped and frozen at the
//! capillary pressure of trapping (common practice).

use std::f64::consts::FRAC_PI_2;

use rayon::prelude::*;

use super::queue::{Event, EventKind, Order, ThresholdQueue};
use super::{Engine, ImbibitionFaces, Mode};
use crate::capillary;
use crate::network::Boundary;
use crate::numeric::unit_hash;

const STREAM_COOPERATIVE: u64 = 0x636f_6f70;

impl Engine<'_> {
    /// True when the non-aqueous phase leaves the network at element `e`.
    #[inline]
    pub(super) fn is_oil_exit(&self, e: usize) -> bool {
        match self.boundary(e) {
            Boundary::Outlet => true,
            Boundary::Inlet => self.setup.imbibition_faces == ImbibitionFaces::Both,
            Boundary::Interior => false,
        }
    }

    /// True when water enters the network at element `e`.
    #[inline]
    fn is_water_entry(&self, e: usize) -> bool {
        match self.boundary(e) {
            Boundary::Inlet => true,
            Boundary::Outlet => self.setup.imbibition_faces == ImbibitionFaces::Both,
            Boundary::Interior => false,
        }
    }

    #[inline]
    fn conducts_free_oil(&self, x: usize) -> bool {
        self.live.flags[x] & super::FLAG_FREE_OIL != 0
    }

    /// Starts an imbibition from the current state.
    pub fn begin_imbibition(&mut self) {
        self.mode = Mode::Imbibition;
        // The drainage thresholds are not needed again before the next
        // drainage, which recomputes them.
        self.entry = Vec::new();
        let n_e = self.volume.len();
        let sigma = self.setup.sigma;
        let snap_allowed = self.setup.mechanisms.snap_off;
        {
            let s = &self.live.state;
            let a = &self.angles;
            let wet = &self.wet;
            self.piston = (0..n_e)
                .into_par_iter()
                .map(|e| {
                    if s.oil[e] {
                        capillary::piston_imbibition_pc(
                            &self.section(e),
                            a.pinned_receding[e],
                            a.advancing[e],
                            s.pc_max[e],
                            sigma,
                        )
                    } else {
                        f64::NAN
                    }
                })
                .collect();
            self.snap = (0..n_e)
                .into_par_iter()
                .map(|e| {
                    if snap_allowed && s.oil[e] && wet[e] != 0 {
                        capillary::snap_off_pc(
                            &self.section(e),
                            a.pinned_receding[e],
                            a.advancing[e],
                            s.pc_max[e],
                            sigma,
                        )
                        .unwrap_or(f64::NAN)
                    } else {
                        f64::NAN
                    }
                })
                .collect();
        }
        let d = &mut self.live;
        d.queue = ThresholdQueue::new(n_e, Order::Descending);
        d.counts = Default::default();
        d.events = 0;
        d.breakthrough_pc = None;
        // Non-aqueous phase with no path to an exit face is trapped from
        // the start.
        let mut reach = vec![false; n_e];
        let exits: Vec<usize> = (0..self.elements.n_pores())
            .filter(|&p| self.is_oil_exit(p) && self.conducts_free_oil(p))
            .collect();
        self.flood(&exits, &mut reach, Self::conducts_free_oil);
        for e in 0..n_e {
            if self.conducts_free_oil(e) && !reach[e] {
                let piece = self.flood(&[e], &mut reach, Self::conducts_free_oil);
                self.mark_oil_trapped(&piece);
            }
        }
        for e in 0..n_e {
            let s = &self.live.state;
            if s.oil[e] && !s.oil_trapped[e] {
                self.update_imbibition(e);
            } else if !s.oil[e] && s.layers[e] != 0 && !s.oil_trapped[e] {
                self.queue_layer_collapse(e);
            }
        }
        self.reaccount_all();
    }

    fn mark_oil_trapped(&mut self, piece: &[u32]) {
        let id = self.new_ganglion();
        let pc = self.live.state.pc;
        self.live.counts.trapped_oil_clusters += 1;
        for &x in piece {
            let x = x as usize;
            self.change_element(x, |eng| {
                let s = &mut eng.live.state;
                s.oil_trapped[x] = true;
                s.ganglion[x] = id;
                if s.frozen_pc[x].is_nan() {
                    s.frozen_pc[x] = pc;
                }
                eng.live.queue.cancel(x);
            });
        }
    }

    /// Recomputes the pending event of oil-filled element `e`.
    fn update_imbibition(&mut self, e: usize) {
        let s = &self.live.state;
        if !s.oil[e] || s.oil_trapped[e] {
            self.live.queue.cancel(e);
            return;
        }
        let mut access = self.is_water_entry(e);
        let mut n_oil_throats = 0usize;
        let mut n_throats = 0usize;
        self.for_each_neighbour(e, |n| {
            if !s.oil[n] && !s.water_trapped[n] {
                access = true;
            }
            n_throats += 1;
            if s.oil[n] {
                n_oil_throats += 1;
            }
        });
        let mut best = f64::NEG_INFINITY;
        let mut kind = EventKind::Piston;
        if access {
            let theta_a = self.angles.advancing[e];
            if self.elements.is_pore(e) && theta_a < FRAC_PI_2 && n_oil_throats >= 2 {
                // A water reservoir at a face counts as one more water-filled
                // connection.
                let n_conn = n_throats + self.is_water_entry(e) as usize;
                best = self.cooperative_pc(e, n_oil_throats, n_conn);
                kind = EventKind::Cooperative;
            } else {
                best = self.piston[e];
            }
        }
        let snap = self.snap[e];
        if snap.is_finite() && !s.water_trapped[e] && snap > best {
            best = snap;
            kind = EventKind::SnapOff;
        }
        if best.is_finite() {
            self.live.queue.set(e, best, kind);
        } else {
            self.live.queue.cancel(e);
        }
    }

    /// `P_c(I_n)` of pore `p` on the base of its piston-like threshold
    /// (`docs/physics.md` §5.4). The draw of the `i`-th oil-filled throat is
    /// `x = 1 − u` with `u` the counter-based uniform of the seed, the pore
    /// and `i`, so `x ∈ (0, 1]` and the threshold falls strictly with `n`.
    fn cooperative_pc(&self, p: usize, n_oil: usize, n_throats: usize) -> f64 {
        // weights[k] and draws[k] belong to the (k+2)-th oil-filled throat.
        let w = &self.setup.mechanisms.cooperative_weights;
        let mut weights = [0.0f64; 32];
        let mut draws = [0.0f64; 32];
        let n = n_oil.saturating_sub(1).min(32);
        if w.is_empty() {
            return self.piston[p];
        }
        for k in 0..n {
            weights[k] = w[k.min(w.len() - 1)] * self.coop_scale;
            draws[k] = 1.0
                - unit_hash(
                    self.setup.seed,
                    STREAM_COOPERATIVE,
                    (p as u64) << 5 | k as u64,
                );
        }
        capillary::cooperative_fill_pc(
            self.piston[p],
            self.angles.advancing[p],
            self.setup.sigma,
            n_oil,
            n_throats,
            &weights[..n],
            &draws[..n],
        )
    }

    fn layer_collapse(&self, e: usize, corner: usize) -> f64 {
        let beta = self.section(e).corners[corner];
        capillary::layer_collapse_pc(
            self.angles.pinned_receding[e],
            self.angles.advancing[e],
            beta,
            self.live.state.pc_max[e],
            self.setup.sigma,
        )
        .unwrap_or(f64::INFINITY)
    }

    fn queue_layer_collapse(&mut self, e: usize) {
        let mask = self.live.state.layers[e];
        let mut best = f64::NEG_INFINITY;
        for i in 0..8 {
            if mask & (1 << i) != 0 {
                best = best.max(self.layer_collapse(e, i));
            }
        }
        if best.is_finite() {
            self.live.queue.set(e, best, EventKind::LayerCollapse);
        } else {
            // A layer that is unstable at once collapses now.
            let pc = self.live.state.pc;
            self.live.queue.set(e, pc, EventKind::LayerCollapse);
        }
    }

    /// Applies a popped imbibition event.
    pub(super) fn apply_imbibition_event(&mut self, ev: Event) {
        let e = ev.element;
        match ev.kind {
            EventKind::LayerCollapse => {
                if self.live.state.layers[e] != 0 && !self.live.state.oil_trapped[e] {
                    self.collapse_layer(e);
                }
            }
            kind => {
                let s = &self.live.state;
                if s.oil[e] && !s.oil_trapped[e] {
                    self.fill_water(e, kind);
                }
            }
        }
    }

    fn fill_water(&mut self, e: usize, kind: EventKind) {
        let pc = self.live.state.pc;
        let is_pore = self.elements.is_pore(e);
        let mut n_oil_throats = 0usize;
        if kind == EventKind::Cooperative {
            let s = &self.live.state;
            self.for_each_neighbour(e, |n| n_oil_throats += s.oil[n] as usize);
        }
        let at_outlet = self.boundary(e) == Boundary::Outlet;
        self.change_element(e, |eng| {
            let volume = eng.volume[e];
            let d = &mut eng.live;
            d.state.oil[e] = false;
            d.bulk_oil_volume -= volume;
            d.events += 1;
            let c = &mut d.counts;
            match (kind, is_pore) {
                (EventKind::SnapOff, true) => c.snap_off_pores += 1,
                (EventKind::SnapOff, false) => c.snap_off_throats += 1,
                (EventKind::Cooperative, _) => {
                    if c.cooperative.len() <= n_oil_throats {
                        c.cooperative.resize(n_oil_throats + 1, 0);
                    }
                    c.cooperative[n_oil_throats] += 1;
                }
                (_, true) => c.piston_pores += 1,
                (_, false) => c.piston_throats += 1,
            }
            if d.breakthrough_pc.is_none() && at_outlet {
                d.breakthrough_pc = Some(pc);
            }
            eng.form_layers(e, pc);
        });
        let nb = self.neighbours(e);
        self.release_water(&nb);
        if !self.live.state.conducts_oil(e) {
            self.trap_oil_after(e);
        }
        for &n in &nb {
            if self.live.state.oil[n] {
                self.update_imbibition(n);
            }
        }
    }

    /// Oil layers in the corners of element `e` (just filled with water at
    /// `pc`) whose water stays and whose wall is oil-wet enough
    /// (θa > π/2 + β; Hui & Blunt 2000).
    fn form_layers(&mut self, e: usize, pc: f64) {
        if self.setup.mechanisms.oil_layers && self.wet[e] != 0 {
            let theta_a = self.angles.advancing[e];
            let corners = self.section(e).corners.len();
            let mut mask = 0u8;
            for i in 0..corners {
                if self.wet[e] & (1 << i) != 0 {
                    let beta = self.section(e).corners[i];
                    if capillary::layer_can_form(theta_a, beta) && self.layer_collapse(e, i) < pc {
                        mask |= 1 << i;
                    }
                }
            }
            if mask != 0 {
                self.live.state.layers[e] = mask;
                self.live.counts.layers_formed += mask.count_ones() as u64;
                self.queue_layer_collapse(e);
            }
        }
    }

    fn collapse_layer(&mut self, e: usize) {
        let mask = self.live.state.layers[e];
        let mut best = (f64::NEG_INFINITY, 0usize);
        for i in 0..8 {
            if mask & (1 << i) != 0 {
                let c = self.layer_collapse(e, i);
                if c > best.0 || best.0 == f64::NEG_INFINITY {
                    best = (c, i);
                }
            }
        }
        self.change_element(e, |eng| eng.live.state.layers[e] = mask & !(1 << best.1));
        self.live.counts.layer_collapses += 1;
        self.live.events += 1;
        if self.live.state.layers[e] != 0 {
            self.queue_layer_collapse(e);
            return;
        }
        self.trap_oil_after(e);
    }

    /// The other pore of throat element `t` seen from pore `p`.
    #[inline]
    fn other_pore(&self, t: usize, p: usize) -> usize {
        let [a, b] = self.setup.network.throats().pores[self.elements.throat_of(t)];
        if a as usize == p {
            b as usize
        } else {
            a as usize
        }
    }

    /// Oil-conducting pores joined to pore `p` through oil-conducting
    /// throats (the pore graph of the oil clusters).
    fn oil_pore_neighbours(&self, p: usize, out: &mut super::Neighbours) {
        let adj = self.setup.network.adjacency();
        let flags = &self.live.flags;
        for (&t, &q) in adj.throats_of(p).iter().zip(adj.neighbours_of(p)) {
            let te = self.elements.of_throat(t as usize);
            if flags[te] & flags[q as usize] & super::FLAG_FREE_OIL != 0 {
                out.push(q as usize);
            }
        }
    }

    /// Finds and freezes the oil clusters that element `e` (which just
    /// stopped conducting oil) cut off from every exit.
    ///
    /// The split search runs on the pore graph of the oil: a throat joins
    /// two pores when it and both pores conduct oil. A throat conducting
    /// oil whose other pore does not belongs to its one conducting pore,
    /// and is isolated (trapped on its own) when neither does.
    fn trap_oil_after(&mut self, e: usize) {
        let mut seeds = super::Neighbours::new();
        let mut isolated = super::Neighbours::new();
        if self.elements.is_pore(e) {
            for &t in self.setup.network.adjacency().throats_of(e) {
                let te = self.elements.of_throat(t as usize);
                if self.conducts_free_oil(te) {
                    let q = self.other_pore(te, e);
                    if self.conducts_free_oil(q) {
                        seeds.push(q);
                    } else {
                        isolated.push(te);
                    }
                }
            }
        } else {
            let [a, b] = self.setup.network.throats().pores[self.elements.throat_of(e)];
            for q in [a as usize, b as usize] {
                if self.conducts_free_oil(q) {
                    seeds.push(q);
                }
            }
        }
        for &t in &isolated {
            self.mark_oil_trapped(&[t as u32]);
        }
        if seeds.is_empty() {
            return;
        }
        let mut pieces: Vec<Vec<u32>> = Vec::new();
        let mut search = std::mem::replace(&mut self.search, super::trapping::SplitSearch::new(0));
        search.run(
            &seeds,
            |x| self.conducts_free_oil(x),
            |x| self.is_oil_exit(x),
            |x, out| self.oil_pore_neighbours(x, out),
            !self.is_oil_exit(e),
            |p| pieces.push(p.to_vec()),
        );
        self.search = search;
        for pores in pieces {
            // The piece's pores and every oil-conducting throat touching
            // them (between two of them, or a dead end).
            let mut piece: Vec<u32> = pores.clone();
            for &p in &pores {
                for &t in self.setup.network.adjacency().throats_of(p as usize) {
                    let te = self.elements.of_throat(t as usize);
                    if self.conducts_free_oil(te) {
                        piece.push(te as u32);
                    }
                }
            }
            piece.sort_unstable();
            piece.dedup();
            self.mark_oil_trapped(&piece);
        }
    }

    /// Element `n`'s trapped water joins the connected water again.
    fn release_trapped_water(&mut self, n: usize) {
        self.change_element(n, |eng| {
            let s = &mut eng.live.state;
            s.water_trapped[n] = false;
            if !s.oil_trapped[n] {
                s.frozen_pc[n] = f64::NAN;
            }
        });
    }

    /// Water trapped by drainage next to the invading water reconnects.
    fn release_water(&mut self, around: &[usize]) {
        let mut stack: Vec<usize> = Vec::new();
        for &n in around {
            if self.live.state.water_trapped[n] {
                self.release_trapped_water(n);
                stack.push(n);
            }
        }
        if stack.is_empty() {
            return;
        }
        self.live.counts.reconnections += 1;
        let mut released = stack.clone();
        while let Some(x) = stack.pop() {
            let nb = self.neighbours(x);
            for n in nb {
                if self.live.state.water_trapped[n] {
                    self.release_trapped_water(n);
                    stack.push(n);
                    released.push(n);
                }
            }
        }
        for x in released {
            let mut nb = self.neighbours(x);
            nb.push(x);
            for n in nb {
                if self.live.state.oil[n] {
                    self.update_imbibition(n);
                }
            }
        }
    }

    /// Ends an imbibition.
    pub fn end_imbibition(&mut self) {
        self.mode = Mode::Idle;
        self.drop_accounts();
        let s = &mut self.live.state;
        let pc = s.pc;
        for e in 0..s.oil.len() {
            if s.oil[e] {
                s.pc_min[e] = if s.frozen_pc[e].is_finite() {
                    s.frozen_pc[e]
                } else {
                    pc
                };
            }
        }
    }
}
