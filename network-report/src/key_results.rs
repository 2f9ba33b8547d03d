//! The key results of a run, the handful of numbers a petrophysicist reads
//! first: one list, shown as a box at the top of the report and printed
//! by the command line. Names carry the chart markup `_{…}` for
//! subscripts ([`crate::plot::plain`] strips it for a terminal); values
//! are rounded with [`fixed`], so float noise never prints as `-0.0000`.

use network_core::run::RunResults;

/// `x` with `decimals` decimals, "n/a" when missing or not finite; a value
/// that rounds to zero prints as `0.000…` (never `-0.0000`).
pub fn fixed(x: Option<f64>, decimals: usize) -> String {
    match x.filter(|v| v.is_finite()) {
        None => "n/a".to_string(),
        Some(v) => {
            let s = format!("{v:.decimals$}");
            if s.trim_start_matches('-')
                .chars()
                .all(|c| c == '0' || c == '.')
            {
                format!("{:.decimals$}", 0.0)
            } else {
                s
            }
        }
    }
}

/// Why the USBM index can be missing, printed beside "n/a".
pub const USBM_MISSING: &str = "n/a: the index needs the areas under both the imbibition and the \
     secondary-drainage Pc curves, and one of them is zero or was not simulated";

/// The key results of `r` as (name, value) rows, in this order:
/// permeability, porosity, formation factor, Swi, Sni, Snr, krw at Snr,
/// krn at Swi, the single-point Land coefficient, and the Amott–Harvey
/// and USBM indices when the run computed them.
pub fn key_results(r: &RunResults) -> Vec<(String, String)> {
    let sp = r.single_phase.as_ref();
    let e = &r.end_points;
    let label = &r.study.fluids.nonaqueous_label;
    let n = if label.eq_ignore_ascii_case("oil") {
        "o"
    } else {
        "n"
    };
    let mut rows: Vec<(String, String)> = vec![
        (
            "permeability k".into(),
            match sp {
                Some(p) => format!(
                    "{} mD ({:.4e} m²)",
                    fixed(Some(p.permeability_md), 1),
                    p.permeability_m2
                ),
                None => "n/a".into(),
            },
        ),
        (
            "porosity φ".into(),
            fixed(sp.map(|p| p.porosity).or(Some(r.network.porosity)), 4),
        ),
        (
            "formation factor F".into(),
            fixed(sp.map(|p| p.formation_factor), 2),
        ),
        ("S_{wi} (end of primary drainage)".into(), fixed(e.swi, 4)),
        (format!("S_{{ni}} ({label})"), fixed(r.sni, 4)),
        (
            "S_{nr} (trapped, end of imbibition)".into(),
            fixed(e.snr, 4),
        ),
        ("k_{rw}(S_{nr})".into(), fixed(e.krw_at_snr, 4)),
        (format!("k_{{r{n}}}(S_{{wi}})"), fixed(e.krn_at_swi, 4)),
        (
            "Land C (single point: 1/S_{nr} − 1/S_{ni})".into(),
            fixed(e.land_coefficient, 3),
        ),
    ];
    if let Some(w) = &r.wettability_indices {
        rows.push(("Amott–Harvey index".into(), fixed(Some(w.amott_harvey), 3)));
        let usbm = if w.usbm.is_finite() {
            fixed(Some(w.usbm), 3)
        } else {
            USBM_MISSING.into()
        };
        rows.push(("USBM index".into(), usbm));
    }
    rows
}

/// [`key_results`] as aligned plain-text lines for a terminal, under a
/// heading that says they are model estimates.
pub fn key_results_text(r: &RunResults) -> String {
    let rows: Vec<(String, String)> = key_results(r)
        .into_iter()
        .map(|(k, v)| (crate::plot::plain(&k), v))
        .collect();
    let width = rows
        .iter()
        .map(|(k, _)| k.chars().count())
        .max()
        .unwrap_or(0);
    let mut out = String::from("key results (model estimates; all results in the output folder)\n");
    for (k, v) in rows {
        let pad = width - k.chars().count();
        out.push_str(&format!("  {k}{}  {v}\n", " ".repeat(pad)));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::fixed;

    #[test]
    fn fixed_rounds_noise_to_an_unsigned_zero() {
        assert_eq!(fixed(Some(-1.9e-15), 4), "0.0000");
        assert_eq!(fixed(Some(-0.00004), 4), "0.0000");
        assert_eq!(fixed(Some(-0.00006), 4), "-0.0001");
        assert_eq!(fixed(Some(f64::NAN), 2), "n/a");
        assert_eq!(fixed(None, 2), "n/a");
        assert_eq!(fixed(Some(129.46), 1), "129.5");
    }
}
