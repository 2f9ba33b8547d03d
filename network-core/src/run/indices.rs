//! Wettability indices from a full cycle of capillary-pressure curves.
//!
//! - Amott (1959, Trans. AIME 216:156–162): the water index
//!   `I_w = ΔS_w(spontaneous, Pc ≥ 0) / ΔS_w(total)` of the imbibition, the
//!   oil index `I_o = ΔS_o(spontaneous, Pc ≤ 0) / ΔS_o(total)` of the
//!   secondary drainage, and the Amott–Harvey index `I_w − I_o`.
//! - USBM (Donaldson, Thomas & Lorenz 1969, SPE J 9(1):13–20):
//!   `W = log10(A1/A2)`, with `A1` the area between the secondary-drainage
//!   curve and `Pc = 0` (its positive part) and `A2` the area between the
//!   imbibition curve and `Pc = 0` (its negative part), both integrated over
//!   water saturation.

use serde::{Deserialize, Serialize};

/// Wettability indices of a drainage–imbibition–drainage cycle.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct WettabilityIndices {
    /// Amott water index `I_w` in [0, 1].
    pub amott_water: f64,
    /// Amott oil index `I_o` in [0, 1] (NaN without secondary drainage).
    pub amott_oil: f64,
    /// Amott–Harvey index `I_w − I_o` in [−1, 1].
    pub amott_harvey: f64,
    /// USBM index `log10(A1/A2)` (NaN when an area vanishes).
    pub usbm: f64,
}

/// Saturation where a monotone-in-order curve first reaches `Pc = 0`,
/// interpolated linearly between recorded points.
fn sw_at_zero(pc: &[f64], sw: &[f64], falling: bool) -> f64 {
    for k in 0..pc.len() {
        let crossed = if falling { pc[k] <= 0.0 } else { pc[k] >= 0.0 };
        if crossed {
            if k == 0 {
                return sw[0];
            }
            let (p0, p1) = (pc[k - 1], pc[k]);
            if p1 == p0 {
                return sw[k];
            }
            let f = (0.0 - p0) / (p1 - p0);
            return sw[k - 1] + f * (sw[k] - sw[k - 1]);
        }
    }
    *sw.last().unwrap_or(&f64::NAN)
}

/// Amott water index of an imbibition curve (points in process order,
/// Pc falling).
pub fn amott_water(pc: &[f64], sw: &[f64]) -> f64 {
    if pc.len() < 2 {
        return f64::NAN;
    }
    let total = sw[sw.len() - 1] - sw[0];
    if total <= 0.0 {
        return 0.0;
    }
    ((sw_at_zero(pc, sw, true) - sw[0]) / total).clamp(0.0, 1.0)
}

/// Amott oil index of a secondary-drainage curve (points in process order,
/// Pc rising).
pub fn amott_oil(pc: &[f64], sw: &[f64]) -> f64 {
    if pc.len() < 2 {
        return f64::NAN;
    }
    let total = sw[0] - sw[sw.len() - 1];
    if total <= 0.0 {
        return 0.0;
    }
    ((sw[0] - sw_at_zero(pc, sw, false)) / total).clamp(0.0, 1.0)
}

/// `∫ max(s·Pc, 0) dSw` over a curve (trapezoid rule on the clipped
/// values), with `s = +1` for the positive part and `−1` for the negative.
fn signed_area(pc: &[f64], sw: &[f64], sign: f64) -> f64 {
    let mut a = 0.0;
    for k in 1..pc.len() {
        let y0 = (sign * pc[k - 1]).max(0.0);
        let y1 = (sign * pc[k]).max(0.0);
        a += 0.5 * (y0 + y1) * (sw[k] - sw[k - 1]).abs();
    }
    a
}

/// USBM index from the imbibition curve and the secondary-drainage curve.
pub fn usbm(imb_pc: &[f64], imb_sw: &[f64], dr_pc: &[f64], dr_sw: &[f64]) -> f64 {
    let a1 = signed_area(dr_pc, dr_sw, 1.0);
    let a2 = signed_area(imb_pc, imb_sw, -1.0);
    if a1 > 0.0 && a2 > 0.0 {
        (a1 / a2).log10()
    } else {
        f64::NAN
    }
}

/// The wettability indices of a run's processes: Amott water index from the
/// first imbibition (process 2), Amott oil index, Amott–Harvey and USBM when
/// a secondary drainage (process 3) followed; `None` without an imbibition.
pub fn of_cycle(outcomes: &[super::process::ProcessOutcome]) -> Option<WettabilityIndices> {
    let curve = |o: &super::process::ProcessOutcome| -> (Vec<f64>, Vec<f64>) {
        (
            o.points.iter().map(|p| p.pc_pa).collect(),
            o.points.iter().map(|p| p.saturation.sw).collect(),
        )
    };
    match outcomes {
        [_, imb, dra, ..] => {
            let (ip, is) = curve(imb);
            let (dp, ds) = curve(dra);
            let iw = amott_water(&ip, &is);
            let io = amott_oil(&dp, &ds);
            Some(WettabilityIndices {
                amott_water: iw,
                amott_oil: io,
                amott_harvey: iw - io,
                usbm: usbm(&ip, &is, &dp, &ds),
            })
        }
        [_, imb] => {
            let (ip, is) = curve(imb);
            Some(WettabilityIndices {
                amott_water: amott_water(&ip, &is),
                amott_oil: f64::NAN,
                amott_harvey: f64::NAN,
                usbm: f64::NAN,
            })
        }
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn amott_water_index_of_a_linear_curve() {
        // Analytic: Pc falls linearly from 10 to -10 while Sw rises from
        // 0.2 to 0.8; Pc = 0 at the midpoint, Sw = 0.5: I_w = 0.3/0.6 = 0.5.
        let pc: Vec<f64> = (0..=10).map(|k| 10.0 - 2.0 * k as f64).collect();
        let sw: Vec<f64> = (0..=10).map(|k| 0.2 + 0.06 * k as f64).collect();
        assert!((amott_water(&pc, &sw) - 0.5).abs() < 1e-12);
    }

    #[test]
    fn usbm_areas_of_symmetric_curves_give_zero() {
        // Analytic: mirror-image curves have equal areas, log10(1) = 0.
        let imb_pc = [5.0, 0.0, -5.0];
        let imb_sw = [0.2, 0.5, 0.8];
        let dr_pc = [-5.0, 0.0, 5.0];
        let dr_sw = [0.8, 0.5, 0.2];
        assert!(usbm(&imb_pc, &imb_sw, &dr_pc, &dr_sw).abs() < 1e-12);
        assert!((amott_oil(&dr_pc, &dr_sw) - 0.5).abs() < 1e-12);
    }
}
