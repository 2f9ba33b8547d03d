//! The "End points and fitted models" section of the run report:
//! end-point saturations, relative-permeability fits and Archie exponents.

use super::{FitQuality, Fitted, ProcessKind, RunResults, opt, process_label};
use crate::html::{Html, key_values, note, number, paragraph, subheading, table};

fn quality(q: &FitQuality) -> (String, String) {
    (number(q.rmse, 3), opt(q.rmse_ln, 3))
}

pub(super) fn fits(r: &RunResults) -> Html {
    let e = &r.end_points;
    let label = &r.study.fluids.nonaqueous_label;
    let mut h = key_values(&[
        (
            "S_{wi}, water saturation after primary drainage",
            opt(e.swi, 4),
        ),
        (
            "S_{ni}, non-aqueous saturation after primary drainage",
            opt(r.sni, 4),
        ),
        ("S_{nr}, trapped after the first imbibition", opt(e.snr, 4)),
        (
            "Non-aqueous saturation left after the first imbibition",
            opt(r.sn_end_imbibition, 4),
        ),
        (
            "k_{rw} at the end of the first imbibition",
            opt(e.krw_at_snr, 4),
        ),
        (
            "k_{rn} at the end of primary drainage",
            opt(e.krn_at_swi, 4),
        ),
        (
            "Land coefficient from this run's single point, C = 1/Snr − 1/Sni (Land 1968; \
             a trapping curve over several Sni needs a sweep)",
            opt(e.land_coefficient, 4),
        ),
    ]);
    let kinds: Vec<ProcessKind> = r.outcomes.iter().map(|o| o.kind).collect();
    if r.fits.is_empty() {
        h.push(subheading("Relative-permeability fits"));
        h.push(paragraph(
            "No process has enough computed relative-permeability points for a fit.",
        ));
    }
    for pf in &r.fits {
        let name = if pf.process >= 1 && pf.process <= kinds.len() {
            process_label(&kinds, pf.process - 1)
        } else {
            format!("{} {}", pf.process, pf.kind.as_str())
        };
        h.push(subheading(&format!(
            "Relative-permeability fits, {name} (S_{{wi}} {}, S_{{or}} {})",
            number(pf.swi, 3),
            number(pf.sor, 3)
        )));
        let mut rows: Vec<Vec<String>> = Vec::new();
        for (phase, corey, let_fit) in [
            ("water", &pf.corey_water, &pf.let_water),
            (label.as_str(), &pf.corey_nonaqueous, &pf.let_nonaqueous),
        ] {
            rows.push(match corey {
                Fitted::Ok(c) => {
                    let (rmse, rmse_ln) = quality(&c.quality);
                    vec![
                        phase.to_string(),
                        "Corey".into(),
                        format!(
                            "kr_max {}, exponent {}",
                            number(c.params.kr_max, 4),
                            number(c.params.exponent, 4)
                        ),
                        rmse,
                        rmse_ln,
                    ]
                }
                Fitted::Failed { error } => vec![
                    phase.to_string(),
                    "Corey".into(),
                    format!("not fitted: {error}"),
                    "n/a".into(),
                    "n/a".into(),
                ],
            });
            rows.push(match let_fit {
                Fitted::Ok(l) => {
                    let (rmse, rmse_ln) = quality(&l.quality);
                    let mut p = format!(
                        "kr_max {}, L {}, E {}, T {}",
                        number(l.params.kr_max, 4),
                        number(l.params.l, 4),
                        number(l.params.e, 4),
                        number(l.params.t, 4)
                    );
                    if l.at_bound {
                        p.push_str(" (a parameter at its bound)");
                    }
                    vec![phase.to_string(), "LET".into(), p, rmse, rmse_ln]
                }
                Fitted::Failed { error } => vec![
                    phase.to_string(),
                    "LET".into(),
                    format!("not fitted: {error}"),
                    "n/a".into(),
                    "n/a".into(),
                ],
            });
        }
        h.push(table(
            &[
                "Phase",
                "Model",
                "Parameters",
                "RMSE of k_{r}",
                "RMSE of ln k_{r}",
            ],
            &rows,
        ));
    }
    if !r.fits.is_empty() {
        h.push(note(
            "Modified Corey power law (Corey 1954) and LET correlation (Lomeland, Ebeltoft \
             & Thomas 2005), least squares in kr, on the normalised saturation \
             Swn = (Sw − Swi)/(1 − Swi − Sor).",
        ));
    }
    h.push(subheading("Archie exponents"));
    let archie_row = |name: &str, f: Option<&Fitted<network_core::fit::ArchieFit>>| match f {
        Some(Fitted::Ok(a)) => vec![
            name.to_string(),
            number(a.exponent, 4),
            number(a.prefactor, 4),
            a.n_points.to_string(),
            number(a.rmse_ln, 3),
        ],
        Some(Fitted::Failed { error }) => vec![
            name.to_string(),
            format!("not fitted: {error}"),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
        ],
        None => vec![
            name.to_string(),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
            "n/a".into(),
        ],
    };
    let a = r.archie.as_ref();
    h.push(table(
        &["Exponent", "Value", "Prefactor", "Points", "RMSE ln"],
        &[
            archie_row("cementation m, F = a φ^(−m)", a.map(|a| &a.cementation_m)),
            archie_row(
                "saturation n, RI = b S_{w}^(−n), primary drainage",
                a.map(|a| &a.saturation_n),
            ),
        ],
    ));
    h
}
