//! Warnings where a run reaches a known limit of the model: states a
//! practitioner would not accept as reservoir states, or wettability
//! patterns whose results hinge on details the model cannot know. Each
//! check returns its warning text (or nothing); the run collects them into
//! its `warnings`. See `docs/physics.md` §6.1 and §7.

use crate::network::{Boundary, Network};

/// Water saturation below which an initial state is not a reservoir state:
/// connate water of sandstones lies at about 0.1–0.3 (common practice).
pub const LOW_INITIAL_SW: f64 = 0.10;

/// Warning when the imbibition (and so a trapping point) starts from a
/// water saturation below [`LOW_INITIAL_SW`].
pub fn low_initial_water(sw_initial: f64) -> Option<String> {
    (sw_initial < LOW_INITIAL_SW).then(|| {
        format!(
            "the imbibition starts from Sw = {sw_initial:.3}, below the connate water of most \
             reservoir rocks (about 0.1–0.3); the network holds no water below its resolution \
             unless clay/microporosity volumes are given, so residual saturations from this state \
             are not those of a reservoir"
        )
    })
}

/// Whether the oil-wet elements (`oil_wet`, indexed pores first, then
/// throats) hold a connected path from an inlet pore to an outlet pore.
/// A pore-throat-pore path counts only through oil-wet throats and pores.
pub fn oil_wet_spans(network: &Network, oil_wet: &[bool]) -> bool {
    let n_p = network.n_pores();
    let pores = network.pores();
    let adj = network.adjacency();
    let mut seen = vec![false; n_p];
    let mut stack: Vec<usize> = (0..n_p)
        .filter(|&p| oil_wet[p] && pores.boundary[p] == Boundary::Inlet)
        .collect();
    for &p in &stack {
        seen[p] = true;
    }
    while let Some(p) = stack.pop() {
        if pores.boundary[p] == Boundary::Outlet {
            return true;
        }
        for (&t, &q) in adj.throats_of(p).iter().zip(adj.neighbours_of(p)) {
            let (t, q) = (t as usize, q as usize);
            if oil_wet[n_p + t] && oil_wet[q] && !seen[q] {
                seen[q] = true;
                stack.push(q);
            }
        }
    }
    false
}

/// Warning for a mixed-wet state whose oil-wet elements span nothing: oil
/// in the oil-wet regions is then held by water-wet surroundings, and the
/// residual saturation depends on how the regions are placed more than on
/// any measured property.
pub fn isolated_oil_wet_regions(network: &Network, oil_wet: &[bool]) -> Option<String> {
    let n = oil_wet.iter().filter(|&&w| w).count();
    if n == 0 || oil_wet_spans(network, oil_wet) {
        return None;
    }
    Some(format!(
        "mixed-wet state: the {n} oil-wet elements form no connected path from inlet to outlet; \
         oil in them is surrounded by water-wet elements, so its trapping depends on where the \
         oil-wet regions sit (compare oil_wet_selection variants and several seeds)"
    ))
}

/// Warning when a drainage (stopped at a saturation, so not checked when
/// the study was read) ended above the microporosity entry pressure.
pub fn microporosity_overrun(
    entry_pressure_pa: Option<f64>,
    drainage_end_pc: f64,
) -> Option<String> {
    let entry = entry_pressure_pa?;
    (drainage_end_pc > entry).then(|| {
        format!(
            "a drainage ended at Pc = {drainage_end_pc:.0} Pa, above the microporosity entry \
             pressure {entry:.0} Pa; the model kept the microporosity water-filled, so Sw there \
             is overstated"
        )
    })
}

/// Warning when the network files' `oil_wet` column replaced a non-zero
/// oil-wet fraction of the study.
pub fn marks_replace_fraction(network: &Network, oil_wet_fraction: f64) -> Option<String> {
    (oil_wet_fraction > 0.0 && network.oil_wet_marks().is_some()).then(|| {
        format!(
            "the network files carry an oil_wet column; it decides which contacted elements \
             turn oil-wet, and wettability.oil_wet_fraction = {oil_wet_fraction} is not used"
        )
    })
}

/// Largest departure of one profile slab's water saturation from the whole
/// sample's at a recorded point before the point is reported as a
/// non-uniform state. Our threshold, above the largest departure of any
/// interior slab (all but the two at the faces) in the bundled Kestrel and
/// Tarnwick demo runs, 0.14 (measured; their slabs at the faces reach 0.48
/// in the inlet-only drainage).
pub const PROFILE_SPREAD: f64 = 0.2;

/// Warning when process `process` (1-based, of `kind`) passes through a
/// recorded point whose saturation profile along the flow axis departs from
/// the whole-sample saturation by more than [`PROFILE_SPREAD`] in some
/// slab: its Pc, kr and end points are whole-sample values of a non-uniform
/// state, the capillary end effect of core floods (Hassler & Brunner 1945,
/// Trans. AIME 160:114–123). Names the worst point and the slab range;
/// suggests drainage from every face when the drainage entered by the
/// inlet alone. `whole_sw[k]` and `slab_sw[k]` belong to point `k`.
pub fn nonuniform_profile(
    process: usize,
    kind: &str,
    whole_sw: &[f64],
    slab_sw: &[&[f64]],
    drained_from_inlet_only: bool,
) -> Option<String> {
    let mut worst: Option<(f64, usize)> = None;
    for (k, (&sw, slabs)) in whole_sw.iter().zip(slab_sw).enumerate() {
        let dev = slabs
            .iter()
            .filter(|x| x.is_finite())
            .map(|&x| (x - sw).abs())
            .fold(0.0, f64::max);
        if dev > PROFILE_SPREAD && worst.is_none_or(|(d, _)| dev > d) {
            worst = Some((dev, k));
        }
    }
    let (dev, k) = worst?;
    let finite = || slab_sw[k].iter().copied().filter(|x| x.is_finite());
    let lo = finite().fold(f64::INFINITY, f64::min);
    let hi = finite().fold(f64::NEG_INFINITY, f64::max);
    let remedy = if drained_from_inlet_only {
        "drain from every face (`drainage_faces = \"all\"`) or report saturations over an \
         interior window (`[output] interior_window`)"
    } else {
        "report saturations over an interior window (`[output] interior_window`)"
    };
    Some(format!(
        "process {process} ({kind}): the saturation is not uniform along the flow axis: at Sw = \
         {:.3} the {} profile slabs range from Sw {lo:.2} to {hi:.2} (up to {dev:.2} from the \
         whole sample); its Pc, kr and end points are whole-sample values of this state \
         (capillary end effect; see profiles.csv and sw-profile): {remedy}",
        whole_sw[k],
        slab_sw[k].len(),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_profile_beyond_the_spread_names_the_worst_point_and_a_uniform_one_is_silent() {
        // Slab saturations made up for the check: point 1 departs by 0.31.
        let whole = [0.9, 0.668, 0.2];
        let slabs: [&[f64]; 3] = [
            &[0.85, 0.95, f64::NAN],
            &[0.36, 0.61, 0.77, 0.80],
            &[0.2, 0.2, 0.2, 0.2],
        ];
        let w = nonuniform_profile(1, "drainage", &whole, &slabs, true).unwrap();
        assert!(w.contains("at Sw = 0.668"), "{w}");
        assert!(
            w.contains("from Sw 0.36 to 0.80") && w.contains("drainage_faces"),
            "{w}"
        );
        let w = nonuniform_profile(2, "imbibition", &whole, &slabs, false).unwrap();
        assert!(!w.contains("drainage_faces"), "{w}");
        assert!(nonuniform_profile(1, "drainage", &whole[..1], &slabs[..1], true).is_none());
        assert!(nonuniform_profile(1, "drainage", &whole[2..], &slabs[2..], true).is_none());
    }

    #[test]
    fn connate_water_warning_starts_below_a_tenth() {
        // 0.1–0.3 connate water in sandstones (common practice).
        assert!(low_initial_water(0.05).is_some());
        assert!(low_initial_water(0.15).is_none());
    }
}
