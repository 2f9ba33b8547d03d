//! The "Process results", "End effects", "Wettability indices" and
//! "Trapped ganglia" sections of the run report.

use super::{EventCounts, ProcessKind, RunResults, kpa, process_label};
use crate::html::{Html, input_number, key_values, note, number, paragraph, subheading, table};

fn event_rows(counts: &[&EventCounts]) -> Vec<Vec<String>> {
    type Getter = fn(&EventCounts) -> u64;
    let fixed: [(&str, Getter); 11] = [
        ("Pores invaded in drainage", |c| c.drainage_pores),
        ("Throats invaded in drainage", |c| c.drainage_throats),
        ("Piston-like filling, pores", |c| c.piston_pores),
        ("Piston-like filling, throats", |c| c.piston_throats),
        ("Snap-off, pores", |c| c.snap_off_pores),
        ("Snap-off, throats", |c| c.snap_off_throats),
        ("Oil layers formed", |c| c.layers_formed),
        ("Oil-layer collapses", |c| c.layer_collapses),
        ("Non-aqueous clusters trapped", |c| c.trapped_oil_clusters),
        ("Water clusters trapped", |c| c.trapped_water_clusters),
        ("Trapped clusters reconnected", |c| c.reconnections),
    ];
    let mut rows: Vec<Vec<String>> = Vec::new();
    for (name, get) in fixed.iter().take(6) {
        let mut row = vec![name.to_string()];
        row.extend(counts.iter().map(|c| get(c).to_string()));
        rows.push(row);
    }
    let max_n = counts
        .iter()
        .map(|c| c.cooperative.len())
        .max()
        .unwrap_or(0);
    for n in 2..max_n {
        if counts
            .iter()
            .all(|c| c.cooperative.get(n).copied().unwrap_or(0) == 0)
        {
            continue;
        }
        let mut row = vec![format!("Cooperative pore filling I{n}")];
        row.extend(
            counts
                .iter()
                .map(|c| c.cooperative.get(n).copied().unwrap_or(0).to_string()),
        );
        rows.push(row);
    }
    for (name, get) in fixed.iter().skip(6) {
        let mut row = vec![name.to_string()];
        row.extend(counts.iter().map(|c| get(c).to_string()));
        rows.push(row);
    }
    rows
}

pub(super) fn processes(r: &RunResults) -> Html {
    let kinds: Vec<ProcessKind> = r.processes.iter().map(|p| p.kind).collect();
    let rows: Vec<Vec<String>> = r
        .processes
        .iter()
        .enumerate()
        .map(|(i, p)| {
            vec![
                process_label(&kinds, i),
                kpa(p.final_pc_pa),
                number(p.final_sw, 4),
                number(p.final_sn_trapped, 4),
                p.breakthrough_pc_pa.map_or("n/a".to_string(), kpa),
                p.points.to_string(),
                if p.target_unreached {
                    "not reached".to_string()
                } else {
                    "reached".to_string()
                },
            ]
        })
        .collect();
    let mut h = table(
        &[
            "Process",
            "Final P_{c} (kPa)",
            "Final S_{w}",
            "Trapped S_{n}",
            "Breakthrough P_{c} (kPa)",
            "Points",
            "Stop",
        ],
        &rows,
    );
    h.push(subheading("Events by mechanism"));
    let counts: Vec<&EventCounts> = r.processes.iter().map(|p| &p.events).collect();
    let labels: Vec<String> = (0..kinds.len()).map(|i| process_label(&kinds, i)).collect();
    let mut headers: Vec<&str> = vec!["Mechanism"];
    headers.extend(labels.iter().map(|s| s.as_str()));
    h.push(table(&headers, &event_rows(&counts)));
    h
}

pub(super) fn wettability(r: &RunResults) -> Html {
    match &r.wettability_indices {
        Some(w) => {
            let mut h = key_values(&[
                ("Amott water index Iw", number(w.amott_water, 4)),
                ("Amott oil index Io", number(w.amott_oil, 4)),
                ("Amott–Harvey index Iw − Io", number(w.amott_harvey, 4)),
                (
                    "USBM index log10(A1/A2)",
                    if w.usbm.is_finite() {
                        number(w.usbm, 4)
                    } else {
                        crate::key_results::USBM_MISSING.to_string()
                    },
                ),
            ]);
            h.push(note(
                "Computed from the simulated imbibition and secondary-drainage curves; \
                 n/a where a curve or an area is missing.",
            ));
            h
        }
        None => paragraph("n/a: no imbibition was run."),
    }
}

pub(super) fn ganglia(r: &RunResults) -> Html {
    let label = &r.study.fluids.nonaqueous_label;
    let Some(g) = &r.ganglion_stats else {
        return paragraph("n/a: no imbibition was run.");
    };
    let pv = r.pore_volume_m3;
    let mut h = key_values(&[
        ("Number of trapped ganglia", g.count.to_string()),
        ("Total trapped volume (m³)", number(g.total_volume_m3, 4)),
        (
            "Total trapped volume (fraction of pore volume)",
            if pv > 0.0 {
                number(g.total_volume_m3 / pv, 4)
            } else {
                "n/a".into()
            },
        ),
        ("Mean volume (m³)", number(g.mean_volume_m3, 4)),
        ("Largest volume (m³)", number(g.max_volume_m3, 4)),
    ]);
    if !g.pores_histogram.is_empty() {
        let rows: Vec<Vec<String>> = g
            .pores_histogram
            .iter()
            .enumerate()
            .map(|(k, c)| {
                let lo = 1u64 << k;
                let hi = (1u64 << (k + 1)) - 1;
                let range = if k == 0 {
                    "0–1".to_string()
                } else {
                    format!("{lo}–{hi}")
                };
                vec![range, c.to_string()]
            })
            .collect();
        h.push(subheading("Ganglia by number of pores"));
        h.push(table(&["Pores", "Ganglia"], &rows));
        h.push(note(&format!(
            "Trapped clusters of {label} at the end of the first imbibition; the first bin \
             also holds ganglia held in throats only."
        )));
    }
    h
}

/// The "End effects" section: drainage faces, profile slabs, interior
/// window, and the end points over the whole sample and the window.
pub(super) fn end_effects(r: &RunResults) -> Html {
    let e = &r.end_effects;
    let mut h = paragraph(&format!(
        "The non-aqueous phase entered by {} in drainage. The saturation profile \
         (profiles.csv, figure sw-profile) cuts the sample into {} equal slabs along the \
         flow axis {}; saturations that differ near the faces are end effects.",
        match e.drainage_faces.as_str() {
            "all" => "every external face",
            _ => "the inlet face",
        },
        e.profile_slabs,
        e.flow_axis.as_str()
    ));
    let fmt = |v: Option<f64>| v.map_or("n/a".to_string(), |x| number(x, 4));
    let mut rows = vec![vec![
        "Whole sample".to_string(),
        fmt(e.whole_sample.swi),
        fmt(e.whole_sample.sni),
        fmt(e.whole_sample.snr),
    ]];
    match (&e.interior_window, &e.interior) {
        (Some(w), Some(i)) => rows.push(vec![
            format!(
                "Interior window {}–{} of the length ({} % of the pore volume)",
                input_number(w.fraction[0]),
                input_number(w.fraction[1]),
                number(100.0 * w.pore_volume_fraction, 3)
            ),
            fmt(i.swi),
            fmt(i.sni),
            fmt(i.snr),
        ]),
        _ => h.push(note(
            "No interior window was set ([output] interior_window): whole-sample values only.",
        )),
    }
    h.push(table(&["Region", "S_{wi}", "S_{ni}", "S_{nr}"], &rows));
    h
}
