//! The threshold queue: every possible event with its threshold capillary
//! pressure, popped in order, with lazy deletion of stale entries.
//!
//! Each element has a version counter; pushing a new threshold for an
//! element bumps its version, and entries whose version no longer matches
//! are skipped when popped. Ties in pressure break by element index (then
//! event kind), so the order of events never depends on anything but the
//! inputs.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

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
    /// Sort key: the threshold, negated for descending queues.
    key: f64,
    element: u32,
    kind: EventKind,
    version: u32,
}

impl PartialEq for Entry {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}
impl Eq for Entry {}
impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        // BinaryHeap is a max-heap: reverse so the smallest key pops first.
        other
            .key
            .total_cmp(&self.key)
            .then_with(|| other.element.cmp(&self.element))
            .then_with(|| other.kind.cmp(&self.kind))
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

/// Binary heap of (threshold, element, kind, version) with lazy deletion.
#[derive(Clone, Debug)]
pub struct ThresholdQueue {
    heap: BinaryHeap<Entry>,
    version: Vec<u32>,
    /// The pending threshold and kind of each element (NaN: none), so an
    /// unchanged threshold is not pushed again.
    pending: Vec<(f64, EventKind)>,
    order: Order,
}

impl ThresholdQueue {
    /// An empty queue for `n_elements` elements.
    pub fn new(n_elements: usize, order: Order) -> ThresholdQueue {
        ThresholdQueue {
            heap: BinaryHeap::new(),
            version: vec![0; n_elements],
            pending: vec![(f64::NAN, EventKind::Piston); n_elements],
            order,
        }
    }

    fn key(&self, pc: f64) -> f64 {
        match self.order {
            Order::Ascending => pc,
            Order::Descending => -pc,
        }
    }

    /// Replaces whatever event element `e` had queued by `kind` at `pc`.
    /// Non-finite thresholds just cancel the element's pending event.
    pub fn set(&mut self, e: usize, pc: f64, kind: EventKind) {
        if self.pending[e] == (pc, kind) {
            return;
        }
        self.version[e] = self.version[e].wrapping_add(1);
        self.pending[e] = (if pc.is_finite() { pc } else { f64::NAN }, kind);
        if pc.is_finite() {
            self.heap.push(Entry {
                key: self.key(pc),
                element: e as u32,
                kind,
                version: self.version[e],
            });
        }
    }

    /// Cancels element `e`'s pending event.
    pub fn cancel(&mut self, e: usize) {
        self.version[e] = self.version[e].wrapping_add(1);
        self.pending[e].0 = f64::NAN;
    }

    fn drop_stale(&mut self) {
        while let Some(top) = self.heap.peek() {
            if self.version[top.element as usize] == top.version {
                return;
            }
            self.heap.pop();
        }
    }

    /// The next event without removing it.
    pub fn peek(&mut self) -> Option<Event> {
        self.drop_stale();
        let order = self.order;
        self.heap.peek().map(|t| Event {
            pc: match order {
                Order::Ascending => t.key,
                Order::Descending => -t.key,
            },
            element: t.element as usize,
            kind: t.kind,
        })
    }

    /// Removes and returns the next event.
    pub fn pop(&mut self) -> Option<Event> {
        let ev = self.peek()?;
        self.heap.pop();
        self.version[ev.element] = self.version[ev.element].wrapping_add(1);
        self.pending[ev.element].0 = f64::NAN;
        Some(ev)
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

    /// Number of heap entries, stale ones included.
    pub fn heap_len(&self) -> usize {
        self.heap.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ascending_queue_pops_lowest_threshold_and_skips_stale_entries() {
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
}
