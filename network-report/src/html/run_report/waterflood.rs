//! The "Waterflood (Buckley–Leverett)" section of the run report.

use super::{Fitted, ProcessKind, RunResults, process_label};
use crate::html::{Html, key_values, note, number, paragraph, table};

pub(super) fn waterflood(r: &RunResults) -> Html {
    let w = match &r.waterflood {
        None => {
            return paragraph(
                "n/a: no imbibition with relative permeabilities at two or more water \
                 saturations.",
            );
        }
        Some(Fitted::Failed { error }) => {
            return paragraph(&format!("Not computed: {error}."));
        }
        Some(Fitted::Ok(w)) => w,
    };
    let kinds: Vec<ProcessKind> = r.processes.iter().map(|p| p.kind).collect();
    let label = &r.study.fluids.nonaqueous_label;
    let mut h = key_values(&[
        (
            "Relative permeabilities of",
            process_label(&kinds, w.process - 1),
        ),
        (
            "Viscosities μw, μn (mPa·s)",
            format!(
                "{}, {}",
                number(w.water_viscosity_pa_s * 1.0e3, 4),
                number(w.nonaqueous_viscosity_pa_s * 1.0e3, 4)
            ),
        ),
        (
            "End-point mobility ratio M",
            number(w.endpoint_mobility_ratio, 4),
        ),
        (
            "Initial S_{w} (start of imbibition)",
            number(w.initial_sw, 4),
        ),
        ("Highest S_{w} (1 − S_{nr})", number(w.max_sw, 4)),
        ("Shock-front S_{w}", number(w.shock_front_sw, 4)),
        ("f_{w} at the shock front", number(w.shock_front_fw, 4)),
        (
            "Breakthrough (pore volumes injected)",
            number(w.breakthrough_pv, 4),
        ),
        (
            "Ultimate recovery (fraction of initial in place)",
            number(w.ultimate_recovery, 4),
        ),
    ]);
    let mut rows = vec![state_row("breakthrough", &w.at_breakthrough)];
    rows.extend(
        w.at_pv
            .iter()
            .map(|s| state_row(&format!("{} PV", number(s.pv_injected, 3)), s)),
    );
    h.push(table(
        &[
            "Injected",
            "Pore volumes",
            "Average S_{w}",
            "Outlet S_{w}",
            "Water cut",
            &format!("Recovery of {label} (fraction of initial in place)"),
        ],
        &rows,
    ));
    h.push(note(&format!(
        "One-dimensional waterflood of a homogeneous medium starting at the initial Sw, \
         from the fractional flow fw = 1/(1 + krn·μw/(krw·μn)) of the simulated relative \
         permeabilities (Buckley & Leverett 1942) and Welge's tangent construction (Welge \
         1952); capillary pressure and gravity are neglected. These are the only results \
         that use the viscosities. The {label} is assumed to be at 1 − Sw initially."
    )));
    h
}

fn state_row(name: &str, s: &network_core::run::fractional_flow::FloodState) -> Vec<String> {
    vec![
        name.to_string(),
        number(s.pv_injected, 4),
        number(s.average_sw, 4),
        number(s.outlet_sw, 4),
        number(s.water_cut, 4),
        number(s.recovery, 4),
    ]
}
