//! Pressure steps, recorded points and stopping rules of one process.
//!
//! A process is pressure-controlled: the capillary pressure moves through
//! `pc_steps` levels (geometric between the first threshold and the end
//! pressure when both are positive, linear otherwise). At each level every
//! accessible element whose threshold the level passes is filled, one at a
//! time in threshold order, with cascades. A point is recorded at each
//! level, and also inside a level whenever the bulk saturation has moved by
//! more than `1/pc_steps` since the last point, so curves stay resolved
//! where many elements fill at once (a point inside a level is the state
//! after an event, at that event's threshold).
//!
//! A target water saturation is met by bisection on the capillary pressure
//! between the last two levels, restarting from a snapshot, down to the
//! single event (or the corner-water change between events) that crosses
//! it.

use serde::{Deserialize, Serialize};

use crate::engine::saturation::Saturation;
use crate::engine::{Engine, EventCounts, LiveState, advance_limited, advance_to};
use crate::params::{ProcessKind, StopAt};
use crate::progress::Progress;
use crate::run::relperm::FlowPoint;

/// One recorded point of a process.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Point {
    /// Capillary pressure, Pa.
    pub pc_pa: f64,
    /// Saturations.
    pub saturation: Saturation,
    /// Events applied since the process started.
    pub events: u64,
    /// Relative permeabilities and resistivity index, where computed.
    pub flow: Option<FlowPoint>,
}

/// What one process did.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProcessOutcome {
    /// The process kind.
    pub kind: ProcessKind,
    /// Recorded points in order (the first is the starting state).
    pub points: Vec<Point>,
    /// Capillary pressure at the end, Pa.
    pub final_pc_pa: f64,
    /// Saturations at the end.
    pub final_saturation: Saturation,
    /// Capillary pressure of breakthrough (first invasion of the outlet
    /// face), if it happened.
    pub breakthrough_pc_pa: Option<f64>,
    /// Events by mechanism.
    pub counts: EventCounts,
    /// True when a saturation target could not be reached within the
    /// pressure range searched (then the process ends at the range end).
    pub target_unreached: bool,
}

fn levels(start: f64, end: f64, n: usize) -> Vec<f64> {
    let n = n.max(1);
    if start == end {
        return vec![end];
    }
    let geometric = start > 0.0 && end > 0.0;
    (1..=n)
        .map(|k| {
            let f = k as f64 / n as f64;
            if k == n {
                end
            } else if geometric {
                start * (end / start).powf(f)
            } else {
                start + f * (end - start)
            }
        })
        .collect()
}

/// Runs one process (the engine must be idle) and returns its outcome.
pub fn run_process(
    engine: &mut Engine<'_>,
    kind: ProcessKind,
    stop: StopAt,
    pc_steps: usize,
    progress: &dyn Progress,
) -> ProcessOutcome {
    run_process_observed(engine, kind, stop, pc_steps, progress, &mut |_, _| {})
}

/// [`run_process`] calling `observer` with every candidate point and the
/// engine in that state (points inside a level that a saturation target
/// later discards are observed too; match points by `events` and `pc_pa`).
pub fn run_process_observed(
    engine: &mut Engine<'_>,
    kind: ProcessKind,
    stop: StopAt,
    pc_steps: usize,
    progress: &dyn Progress,
    observer: &mut dyn FnMut(&Point, &Engine<'_>),
) -> ProcessOutcome {
    match kind {
        ProcessKind::Drainage => engine.begin_drainage(),
        ProcessKind::Imbibition => engine.begin_imbibition(),
    }
    let ascending = kind == ProcessKind::Drainage;
    let start_pc = engine.pc();
    let first = engine.next_threshold();
    // The pressure range: to the requested end, or far enough to pass
    // every threshold for a saturation target.
    let end_pc = match stop {
        StopAt::Pc(p) => p,
        StopAt::Sw(_) => {
            let span = engine.threshold_span();
            if ascending {
                (span.1.abs() * 1.0e3).max(start_pc.abs() * 10.0).max(1.0)
            } else {
                -(span.0.abs().max(span.1.abs()) * 10.0)
                    .max(start_pc.abs() * 10.0)
                    .max(1.0)
            }
        }
    };
    let moving = if ascending {
        end_pc > start_pc
    } else {
        end_pc < start_pc
    };
    // Start levels at the first event (nothing happens before it).
    let level_start = match first {
        Some(f) if moving && ((ascending && f > start_pc) || (!ascending && f < start_pc)) => {
            if (ascending && f < end_pc) || (!ascending && f > end_pc) {
                f
            } else {
                start_pc
            }
        }
        _ => start_pc,
    };
    let mut lv = if moving {
        levels(level_start, end_pc, pc_steps)
    } else {
        vec![start_pc]
    };
    if moving && level_start != start_pc {
        lv.insert(0, level_start);
    }
    // A level at Pc = 0 separates spontaneous from forced displacement
    // (needed by the Amott and USBM indices).
    if let Some(k) = lv
        .windows(2)
        .position(|w| (w[0] < 0.0) != (w[1] < 0.0) && w[0] != 0.0 && w[1] != 0.0)
    {
        lv.insert(k + 1, 0.0);
    } else if moving && (start_pc < 0.0) != (lv[0] < 0.0) && start_pc != 0.0 && lv[0] != 0.0 {
        lv.insert(0, 0.0);
    }
    let ds = 1.0 / pc_steps.max(1) as f64;
    let mut points = vec![Point {
        pc_pa: start_pc,
        saturation: engine.saturation(),
        events: 0,
        flow: None,
    }];
    observer(&points[0], engine);
    let reached = |sw: f64, target: f64| {
        if ascending {
            sw <= target
        } else {
            sw >= target
        }
    };
    let target = match stop {
        StopAt::Sw(t) => Some(t),
        StopAt::Pc(_) => None,
    };
    let mut target_unreached = false;
    progress.start(
        match kind {
            ProcessKind::Drainage => "drainage",
            ProcessKind::Imbibition => "imbibition",
        },
        lv.len() as u64,
    );
    if let Some(t) = target
        && reached(points[0].saturation.sw, t)
    {
        lv.clear();
    }
    let mut last_bulk = engine.bulk_oil_fraction();
    let mut prev_pc = start_pc;
    for &level in &lv {
        let snapshot = target.map(|_| engine.snapshot());
        let mut extra: Vec<Point> = Vec::new();
        advance_to(engine, level, |eng| {
            let b = eng.bulk_oil_fraction();
            if (b - last_bulk).abs() >= ds {
                last_bulk = b;
                let p = Point {
                    pc_pa: eng.live.state.pc,
                    saturation: eng.saturation(),
                    events: eng.live.events,
                    flow: None,
                };
                observer(&p, eng);
                extra.push(p);
            }
        });
        let sat = engine.saturation();
        progress.advance(1);
        if let (Some(t), Some(snap)) = (target, snapshot)
            && reached(sat.sw, t)
        {
            let (pc_final, sat_final) = bisect(engine, snap, prev_pc, level, t, ascending);
            points.extend(extra.into_iter().filter(|p| !reached(p.saturation.sw, t)));
            let p = Point {
                pc_pa: pc_final,
                saturation: sat_final,
                events: engine.events_applied(),
                flow: None,
            };
            observer(&p, engine);
            points.push(p);
            progress.finish();
            return finish(engine, kind, points, false);
        }
        points.extend(extra);
        let p = Point {
            pc_pa: level,
            saturation: sat,
            events: engine.events_applied(),
            flow: None,
        };
        observer(&p, engine);
        points.push(p);
        last_bulk = engine.bulk_oil_fraction();
        prev_pc = level;
    }
    progress.finish();
    if let Some(t) = target {
        target_unreached = !reached(points.last().map_or(1.0, |p| p.saturation.sw), t);
    }
    finish(engine, kind, points, target_unreached)
}

/// Bisection on Pc between `lo` (target not yet reached; its snapshot) and
/// `hi` (reached); leaves the engine at the first state that reaches it.
fn bisect(
    engine: &mut Engine<'_>,
    mut lo_snap: LiveState,
    mut lo: f64,
    mut hi: f64,
    target: f64,
    ascending: bool,
) -> (f64, Saturation) {
    let reached = |sw: f64| {
        if ascending {
            sw <= target
        } else {
            sw >= target
        }
    };
    for _ in 0..200 {
        if (hi - lo).abs() <= 1e-12 * hi.abs().max(lo.abs()).max(1.0) {
            break;
        }
        let mid = 0.5 * (lo + hi);
        if mid == lo || mid == hi {
            break;
        }
        engine.restore(lo_snap.clone());
        advance_to(engine, mid, |_| {});
        let sat = engine.saturation();
        if reached(sat.sw) {
            hi = mid;
        } else {
            lo = mid;
            lo_snap = engine.snapshot();
        }
    }
    // The crossing may lie inside a cascade of events at one pressure:
    // bisect on the number of events (invasion-percolation order).
    engine.restore(lo_snap.clone());
    let n_total = advance_limited(engine, hi, u64::MAX, |_| {});
    let (mut k_lo, mut k_hi) = (0u64, n_total);
    while k_hi - k_lo > 1 {
        let k = k_lo + (k_hi - k_lo) / 2;
        engine.restore(lo_snap.clone());
        advance_limited(engine, hi, k, |_| {});
        if reached(engine.saturation().sw) {
            k_hi = k;
        } else {
            k_lo = k;
        }
    }
    engine.restore(lo_snap);
    advance_limited(engine, hi, k_hi, |_| {});
    let pc = engine.pc();
    (pc, engine.saturation())
}

fn finish(
    engine: &mut Engine<'_>,
    kind: ProcessKind,
    points: Vec<Point>,
    target_unreached: bool,
) -> ProcessOutcome {
    let final_pc = engine.pc();
    let final_saturation = engine.saturation();
    match kind {
        ProcessKind::Drainage => engine.end_drainage(),
        ProcessKind::Imbibition => engine.end_imbibition(),
    }
    ProcessOutcome {
        kind,
        points,
        final_pc_pa: final_pc,
        final_saturation,
        breakthrough_pc_pa: engine.breakthrough_pc(),
        counts: engine.counts().clone(),
        target_unreached,
    }
}
