//! The event loop: pop the next threshold within the current capillary
//! pressure, apply its event, repeat. Sequential and deterministic (ties
//! break by element index in the queue).

use super::queue::Order;
use super::{Engine, EventCounts, Mode};

/// Advances the engine to capillary pressure `pc`, applying every event on
/// the way; `on_event` is called after each event.
pub fn advance_to(engine: &mut Engine<'_>, pc: f64, on_event: impl FnMut(&Engine<'_>)) {
    advance_limited(engine, pc, u64::MAX, on_event);
}

/// Like [`advance_to`] but applies at most `max_events` events; when the
/// limit stops it, the capillary pressure stays at the last event's
/// threshold. Returns the number of events applied.
pub fn advance_limited(
    engine: &mut Engine<'_>,
    pc: f64,
    max_events: u64,
    mut on_event: impl FnMut(&Engine<'_>),
) -> u64 {
    let mode = engine.mode();
    let mut applied = 0u64;
    let order = match mode {
        Mode::Drainage => Order::Ascending,
        _ => Order::Descending,
    };
    while engine.live.queue.next_within(pc) {
        if applied == max_events {
            return applied;
        }
        applied += 1;
        let Some(ev) = engine.live.queue.pop() else {
            break;
        };
        let s = &mut engine.live.state;
        s.pc = match order {
            Order::Ascending => s.pc.max(ev.pc),
            Order::Descending => s.pc.min(ev.pc),
        };
        match mode {
            Mode::Drainage => engine.apply_drainage_event(ev.element),
            Mode::Imbibition => engine.apply_imbibition_event(ev),
            Mode::Idle => {}
        }
        on_event(engine);
    }
    engine.live.state.pc = pc;
    engine.settle_accounts();
    applied
}

impl Engine<'_> {
    /// Lowest and highest finite threshold cached for the current process
    /// (`(0, 1)` when there is none).
    pub fn threshold_span(&self) -> (f64, f64) {
        let (v, w): (&[f64], &[f64]) = match self.mode() {
            Mode::Drainage => (&self.entry, &[]),
            _ => (&self.piston, &self.snap),
        };
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for &x in v.iter().chain(w.iter()) {
            if x.is_finite() {
                lo = lo.min(x);
                hi = hi.max(x);
            }
        }
        if lo > hi { (0.0, 1.0) } else { (lo, hi) }
    }
}

impl Engine<'_> {
    /// Current capillary pressure, Pa.
    pub fn pc(&self) -> f64 {
        self.live.state.pc
    }

    /// Threshold of the next event in the queue, Pa (drops stale entries
    /// on the way).
    pub fn next_threshold(&mut self) -> Option<f64> {
        self.live.queue.peek().map(|e| e.pc)
    }

    /// Events applied in the current process.
    pub fn events_applied(&self) -> u64 {
        self.live.events
    }

    /// Capillary pressure of breakthrough in the current process.
    pub fn breakthrough_pc(&self) -> Option<f64> {
        self.live.breakthrough_pc
    }

    /// Event counts of the current process.
    pub fn counts(&self) -> &EventCounts {
        &self.live.counts
    }
}
