//! The threshold queue: the pending event of every element with its
//! threshold capillary pressure, popped in order.
//!
//! An indexed 4-ary heap: each element has at most one entry, whose key is
//! changed in place when the element's threshold changes (no stale
//! entries). Ties in pressure break by element index (then event kind), so
//! the order of events depends on nothing but the inputs.

/// What an event does to its element.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[repr(u8)]
pub enum EventKind {
    /// Bulk filling of the element centre by the invading phase from a
    /// neighbour (piston-like advance; in drainage: invasion).
    Piston = 0,
    /// Snap-off of the element centre by swelling corner water.
    SnapOff = 1,
    /// Cooperative pore-body filling `I_n` (n = oil-filled throats left).
    Cooperative = 2,
    /// Collapse of the oil layers of a water-filled element.
    LayerCollapse = 3,
}

/// Direction of the queue: which thresholds come first.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Order {
    /// Lowest threshold first (drainage: the non-aqueous phase invades as
    /// the capillary pressure rises).
    Ascending,
    /// Highest threshold first (imbibition: water invades as the capillary
    /// pressure falls).
    Descending,
}

#[derive(Clone, Copy, Debug)]
struct Entry {
    /// Sort key: the threshold, negated for descending queues (smallest
    /// first).
    key: f64,
    element: u32,
    kind: EventKind,
}

impl Entry {
    #[inline]
    fn before(&self, o: &Entry) -> bool {
        match self.key.total_cmp(&o.key) {
            std::cmp::Ordering::Less => true,
            std::cmp::Ordering::Greater => false,
            std::cmp::Ordering::Equal => (self.element, self.kind) < (o.element, o.kind),
        }
    }
}

/// A popped event.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Event {
    /// The threshold capillary pressure, Pa.
    pub pc: f64,
    /// The element (shared index).
    pub element: usize,
    /// What happens.
    pub kind: EventKind,
}

const ARITY: usize = 4;
const ABSENT: u32 = u32::MAX;

/// Indexed 4-ary heap of (threshold, element, kind), one entry per element.
#[derive(Clone, Debug)]
pub struct ThresholdQueue {
    heap: Vec<Entry>,
    pos: Vec<u32>,
    order: Order,
}

impl ThresholdQueue {
    /// An empty queue for `n_elements` elements.
    pub fn new(n_elements: usize, order: Order) -> ThresholdQueue {
        ThresholdQueue {
            heap: Vec::new(),
            pos: vec![ABSENT; n_elements],
            order,
        }
    }

    #[inline]
    fn key(&self, pc: f64) -> f64 {
        match self.order {
            Order::Ascending => pc,
            Order::Descending => -pc,
        }
    }

    #[inline]
    fn place(&mut self, i: usize, entry: Entry) {
        self.pos[entry.element as usize] = i as u32;
        self.heap[i] = entry;
    }

    fn sift_up(&mut self, mut i: usize) {
        let entry = self.heap[i];
        while i > 0 {
            let parent = (i - 1) / ARITY;
            if entry.before(&self.heap[parent]) {
                let p = self.heap[parent];
                self.place(i, p);
                i = parent;
            } else {
                break;
            }
        }
        self.place(i, entry);
    }

    fn sift_down(&mut self, mut i: usize) {
        let n = self.heap.len();
        let entry = self.heap[i];
        loop {
            let first = ARITY * i + 1;
            if first >= n {
                break;
            }
            let mut best = first;
            for c in first + 1..(first + ARITY).min(n) {
                if self.heap[c].before(&self.heap[best]) {
                    best = c;
                }
            }
            if self.heap[best].before(&entry) {
                let b = self.heap[best];
                self.place(i, b);
                i = best;
            } else {
                break;
            }
        }
        self.place(i, entry);
    }

    /// Replaces whatever event element `e` had queued by `kind` at `pc`.
    /// Non-finite thresholds just cancel the element's pending event.
    pub fn set(&mut self, e: usize, pc: f64, kind: EventKind) {
        if !pc.is_finite() {
            self.cancel(e);
            return;
        }
        let entry = Entry {
            key: self.key(pc),
            element: e as u32,
            kind,
        };
        match self.pos[e] {
            ABSENT => {
                self.heap.push(entry);
                let i = self.heap.len() - 1;
                self.sift_up(i);
            }
            p => {
                let i = p as usize;
                let old = self.heap[i];
                if old.key.to_bits() == entry.key.to_bits() && old.kind == kind {
                    return;
                }
                self.heap[i] = entry;
                if entry.before(&old) {
                    self.sift_up(i);
                } else {
                    self.sift_down(i);
                }
            }
        }
    }

    /// Cancels element `e`'s pending event.
    pub fn cancel(&mut self, e: usize) {
        let p = self.pos[e];
        if p == ABSENT {
            return;
        }
        self.remove_at(p as usize);
    }

    fn remove_at(&mut self, i: usize) -> Entry {
        let removed = self.heap[i];
        self.pos[removed.element as usize] = ABSENT;
        let last = self.heap.pop().expect("non-empty");
        if i < self.heap.len() {
            self.heap[i] = last;
            self.pos[last.element as usize] = i as u32;
            if last.before(&removed) {
                self.sift_up(i);
            } else {
                self.sift_down(i);
            }
        }
        removed
    }

    fn event(&self, e: &Entry) -> Event {
        Event {
            pc: match self.order {
                Order::Ascending => e.key,
                Order::Descending => -e.key,
            },
            element: e.element as usize,
            kind: e.kind,
        }
    }

    /// The next event without removing it.
    pub fn peek(&mut self) -> Option<Event> {
        self.heap.first().map(|e| self.event(e))
    }

    /// Removes and returns the next event.
    pub fn pop(&mut self) -> Option<Event> {
        if self.heap.is_empty() {
            return None;
        }
        let e = self.remove_at(0);
        Some(self.event(&e))
    }

    /// True when the next event comes at or before `pc` in this queue's
    /// order (at or below it ascending, at or above it descending).
    pub fn next_within(&mut self, pc: f64) -> bool {
        match (self.peek(), self.order) {
            (Some(ev), Order::Ascending) => ev.pc <= pc,
            (Some(ev), Order::Descending) => ev.pc >= pc,
            (None, _) => false,
        }
    }

    /// Number of pending events.
    pub fn heap_len(&self) -> usize {
        self.heap.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::unit_hash;

    #[test]
    fn ascending_queue_pops_lowest_threshold_and_replaces_entries() {
        let mut q = ThresholdQueue::new(4, Order::Ascending);
        q.set(0, 30.0, EventKind::Piston);
        q.set(1, 10.0, EventKind::Piston);
        q.set(2, 20.0, EventKind::Piston);
        q.set(1, 40.0, EventKind::Piston); // supersedes 10.0
        let order: Vec<usize> = std::iter::from_fn(|| q.pop()).map(|e| e.element).collect();
        assert_eq!(order, vec![2, 0, 1]);
    }

    #[test]
    fn descending_queue_pops_highest_threshold_and_breaks_ties_by_index() {
        let mut q = ThresholdQueue::new(4, Order::Descending);
        q.set(3, 5.0, EventKind::SnapOff);
        q.set(1, 5.0, EventKind::Piston);
        q.set(2, -1.0, EventKind::Piston);
        q.set(0, f64::NAN, EventKind::Piston); // cancelled, never pops
        let ev: Vec<(usize, f64)> = std::iter::from_fn(|| q.pop())
            .map(|e| (e.element, e.pc))
            .collect();
        assert_eq!(ev, vec![(1, 5.0), (3, 5.0), (2, -1.0)]);
        assert!(!q.next_within(-10.0));
    }

    #[test]
    fn random_updates_pop_in_sorted_order_like_a_reference_sort() {
        // Reference: sort the final (key, element) pairs directly.
        let n = 2000;
        let mut q = ThresholdQueue::new(n, Order::Ascending);
        let mut last = vec![None; n];
        for k in 0..10_000u64 {
            let e = (unit_hash(1, 1, k) * n as f64) as usize;
            let u = unit_hash(1, 2, k);
            if u < 0.1 {
                q.cancel(e);
                last[e] = None;
            } else {
                let pc = (unit_hash(1, 3, k) * 50.0).floor();
                q.set(e, pc, EventKind::Piston);
                last[e] = Some(pc);
            }
        }
        let mut expect: Vec<(f64, usize)> = last
            .iter()
            .enumerate()
            .filter_map(|(e, p)| p.map(|p| (p, e)))
            .collect();
        expect.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let got: Vec<(f64, usize)> = std::iter::from_fn(|| q.pop())
            .map(|ev| (ev.pc, ev.element))
            .collect();
        assert_eq!(got, expect);
    }
}
