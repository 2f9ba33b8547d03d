//! The "Inputs" and "Network" sections of the run report.

use super::{ProcessKind, RunResults, StopAt, angle_range, kpa, process_label, yes_no};
use crate::html::{Html, input_number, key_values, number, subheading, table};

pub(super) fn inputs(r: &RunResults) -> Html {
    let s = &r.study;
    let f = &s.fluids;
    let w = &s.wettability;
    let m = &s.mechanisms;
    let mut h = Html::new();
    h.push(subheading("Fluids"));
    h.push(key_values(&[
        (
            "Interfacial tension σ (N/m)",
            input_number(f.interfacial_tension_n_per_m),
        ),
        (
            "Water viscosity (Pa·s)",
            input_number(f.water_viscosity_pa_s),
        ),
        (
            "Non-aqueous phase",
            f.nonaqueous_label.clone(), // escaped by key_values
        ),
        (
            "Non-aqueous viscosity (Pa·s)",
            input_number(f.nonaqueous_viscosity_pa_s),
        ),
        (
            "Brine conductivity (S/m)",
            input_number(f.water_conductivity_s_per_m),
        ),
    ]));
    h.push(subheading("Wettability"));
    h.push(key_values(&[
        (
            "Receding contact angle (drainage)",
            angle_range(w.receding_contact_angle_deg),
        ),
        (
            "Advancing contact angle, water-wet",
            angle_range(w.advancing_contact_angle_deg),
        ),
        (
            "Oil-wet fraction of contacted elements",
            input_number(w.oil_wet_fraction),
        ),
        (
            "Oil-wet selection",
            format!("{:?}", w.oil_wet_selection).to_lowercase(),
        ),
        (
            "Advancing contact angle, oil-wet",
            angle_range(w.oil_wet_advancing_contact_angle_deg),
        ),
        (
            "Receding contact angle, oil-wet",
            angle_range(w.oil_wet_receding_contact_angle_deg),
        ),
    ]));
    h.push(subheading("Boundaries, mechanisms and flow"));
    h.push(key_values(&[
        ("Outlet", format!("{:?}", s.outlet).to_lowercase()),
        (
            "Faces open to the displaced phase in imbibition",
            format!("{:?}", s.imbibition_faces).to_lowercase(),
        ),
        (
            "Faces the non-aqueous phase enters in drainage",
            s.drainage_faces.as_str().to_string(),
        ),
        ("Snap-off", yes_no(m.snap_off)),
        ("Oil layers", yes_no(m.oil_layers)),
        (
            "Cooperative-filling weights a₂, a₃, …",
            m.cooperative_weights
                .iter()
                .map(|x| input_number(*x))
                .collect::<Vec<_>>()
                .join(", "),
        ),
        (
            "Relative permeability and resistivity",
            yes_no(s.flow.relative_permeability),
        ),
        (
            "Flow axis",
            s.flow.axis.map_or("network's flow axis".to_string(), |a| {
                a.as_str().to_string()
            }),
        ),
        (
            "Clay tortuosity factor",
            input_number(s.flow.clay_tortuosity),
        ),
        ("Solver tolerance", input_number(s.flow.solver_tolerance)),
        ("Seed", s.seed.to_string()),
    ]));
    h.push(subheading("Processes"));
    let kinds: Vec<ProcessKind> = s.processes.iter().map(|p| p.kind).collect();
    let rows: Vec<Vec<String>> = s
        .processes
        .iter()
        .enumerate()
        .map(|(i, p)| {
            vec![
                process_label(&kinds, i),
                match p.stop {
                    StopAt::Pc(pc) => format!("P_{{c}} = {} kPa", kpa(pc)),
                    StopAt::Sw(sw) => format!("S_{{w}} = {}", input_number(sw)),
                },
                p.pc_steps.to_string(),
                p.kr_points.to_string(),
            ]
        })
        .collect();
    h.push(table(
        &["Process", "Stops at", "Pressure steps", "k_{r} points"],
        &rows,
    ));
    h
}

pub(super) fn network(r: &RunResults) -> Html {
    let n = &r.network;
    let mut rows = vec![
        ("Name", n.name.clone()),
        (
            "Hash",
            if n.hash.is_empty() {
                "not recorded".to_string()
            } else {
                n.hash.clone()
            },
        ),
        ("Pores", n.pores.to_string()),
        ("Throats", n.throats.to_string()),
        ("Pore volume (m³)", number(n.pore_volume_m3, 4)),
        ("Porosity (fraction)", number(n.porosity, 4)),
    ];
    match &r.single_phase {
        Some(p) => {
            rows.push(("Flow axis", p.axis.as_str().to_string()));
            rows.push(("Permeability (mD)", number(p.permeability_md, 4)));
            rows.push(("Permeability (m²)", number(p.permeability_m2, 4)));
            rows.push(("Formation factor F (–)", number(p.formation_factor, 4)));
        }
        None => {
            rows.push(("Permeability (mD)", "n/a".into()));
            rows.push(("Formation factor F (–)", "n/a".into()));
        }
    }
    key_values(&rows)
}
