//! Writers of run results: `summary.json`, `curves.csv`, `ganglia.csv`,
//! `profiles.csv`.
//! Each file is written to a temporary sibling and renamed into place, so an
//! interrupted run never leaves a half-written result.

use std::fmt::Write as _;
use std::path::Path;

use network_core::io::atomic::write_atomic;
use network_core::run::RunResults;
use network_core::run::fractional_flow::fractional_flow;
use network_core::study::ProcessKind;

use crate::ReportError;

fn io_err(path: &Path, e: std::io::Error) -> ReportError {
    ReportError::Io {
        path: path.to_path_buf(),
        source: e,
    }
}

/// The `curves.csv` text: one row per recorded point. With an interior
/// window (`[output] interior_window`) three more columns give the
/// saturations over the window: `sw_interior`, `sn_interior`,
/// `sn_trapped_interior` (empty where the window holds no pore volume).
/// Column `fw` is the fractional flow of water
/// `1/(1 + krn·μw/(krw·μn))` at the imbibition points where the flow was
/// solved, from the point's own kr and the study's viscosities (empty
/// elsewhere; see `network_core::run::fractional_flow`).
pub fn curves_csv(results: &RunResults) -> String {
    let window = results
        .profile_layout
        .as_ref()
        .is_some_and(|l| l.window.is_some());
    let mut s = String::from(
        "process,kind,step,pc_pa,sw,sn,sn_trapped,sw_trapped,sw_corners,sn_layers,events,krw,krn,ri,fw",
    );
    s.push_str(if window {
        ",sw_interior,sn_interior,sn_trapped_interior\n"
    } else {
        "\n"
    });
    for (i, o) in results.outcomes.iter().enumerate() {
        for (k, p) in o.points.iter().enumerate() {
            let t = &p.saturation;
            let (krw, krn, ri) = match p.flow {
                Some(f) => (f.krw.to_string(), f.krn.to_string(), f.ri.to_string()),
                None => (String::new(), String::new(), String::new()),
            };
            let fw = match p.flow {
                Some(f) if o.kind == ProcessKind::Imbibition => fractional_flow(
                    f.krw,
                    f.krn,
                    results.study.fluids.water_viscosity_pa_s,
                    results.study.fluids.nonaqueous_viscosity_pa_s,
                )
                .map_or(String::new(), |v| v.to_string()),
                _ => String::new(),
            };
            let interior = if window {
                match results
                    .profiles
                    .get(i)
                    .and_then(|v| v.get(k))
                    .and_then(|pp| pp.interior)
                {
                    Some(w) => format!(",{},{},{}", w.sw, w.sn, w.sn_trapped),
                    None => ",,,".to_string(),
                }
            } else {
                String::new()
            };
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{},{},{},{},{},{krw},{krn},{ri},{fw}{interior}",
                i + 1,
                o.kind.as_str(),
                k,
                p.pc_pa,
                t.sw,
                t.sn,
                t.sn_trapped,
                t.sw_trapped,
                t.sw_corners,
                t.sn_layers,
                p.events
            );
        }
    }
    s
}

/// The `profiles.csv` text: the saturation profile along the flow axis at
/// every recorded point, one row per point and slab (long format). Columns:
/// process (1-based), kind, step (the point's row in `curves.csv` for that
/// process), `pc_pa`, whole-sample `sw`, slab (0 at the inlet), slab start
/// and end along the flow axis (m, in the network's coordinates), the
/// slab's pore volume (m³, clay included), its water saturation and its
/// trapped non-aqueous saturation (fractions of the slab's pore volume).
/// The pore-volume-weighted mean of `slab_sw` over a point's slabs is its
/// `sw`.
pub fn profiles_csv(results: &RunResults) -> String {
    let mut s = String::from(
        "process,kind,step,pc_pa,sw,slab,slab_start_m,slab_end_m,slab_pore_volume_m3,slab_sw,slab_sn_trapped\n",
    );
    let Some(layout) = &results.profile_layout else {
        return s;
    };
    let edges = &layout.slab_edges_m;
    for (i, o) in results.outcomes.iter().enumerate() {
        let Some(profiles) = results.profiles.get(i) else {
            continue;
        };
        for (k, (p, pp)) in o.points.iter().zip(profiles).enumerate() {
            for (j, (sw, snt)) in pp.slab_sw.iter().zip(&pp.slab_sn_trapped).enumerate() {
                let _ = writeln!(
                    s,
                    "{},{},{},{},{},{},{},{},{},{},{}",
                    i + 1,
                    o.kind.as_str(),
                    k,
                    p.pc_pa,
                    p.saturation.sw,
                    j,
                    edges[j],
                    edges[j + 1],
                    layout.slab_pore_volume_m3[j],
                    sw,
                    snt
                );
            }
        }
    }
    s
}

/// The `ganglia.csv` text: one row per trapped ganglion.
pub fn ganglia_csv(results: &RunResults) -> String {
    let mut s = String::from(
        "id,volume_m3,pores,throats,x_min_m,y_min_m,z_min_m,x_max_m,y_max_m,z_max_m\n",
    );
    for g in &results.ganglia {
        let b = g.bbox_m;
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{},{}",
            g.id, g.volume_m3, g.pores, g.throats, b[0], b[1], b[2], b[3], b[4], b[5]
        );
    }
    s
}

/// Writes `summary.json`, `curves.csv`, `ganglia.csv` and `profiles.csv`
/// into `dir`
/// (created if missing).
pub fn write_run_results(results: &RunResults, dir: &Path) -> Result<(), ReportError> {
    std::fs::create_dir_all(dir).map_err(|e| io_err(dir, e))?;
    let summary = serde_json::to_string_pretty(results).map_err(|e| {
        io_err(
            &dir.join("summary.json"),
            std::io::Error::new(std::io::ErrorKind::InvalidData, e),
        )
    })?;
    for (name, text) in [
        ("curves.csv", curves_csv(results)),
        ("ganglia.csv", ganglia_csv(results)),
        ("profiles.csv", profiles_csv(results)),
        ("summary.json", summary + "\n"),
    ] {
        let p = dir.join(name);
        write_atomic(&p, text.as_bytes()).map_err(|e| io_err(&p, e))?;
    }
    Ok(())
}
