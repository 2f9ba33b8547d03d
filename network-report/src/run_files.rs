//! Writers of run results: `summary.json`, `curves.csv`, `ganglia.csv`.
//! Each file is written to a temporary sibling and renamed into place, so an
//! interrupted run never leaves a half-written result.

use std::fmt::Write as _;
use std::path::Path;

use network_core::io::atomic::write_atomic;
use network_core::run::RunResults;

use crate::ReportError;

fn io_err(path: &Path, e: std::io::Error) -> ReportError {
    ReportError::Io {
        path: path.to_path_buf(),
        source: e,
    }
}

/// The `curves.csv` text: one row per recorded point.
pub fn curves_csv(results: &RunResults) -> String {
    let mut s = String::from(
        "process,kind,step,pc_pa,sw,sn,sn_trapped,sw_trapped,sw_corners,sn_layers,events,krw,krn,ri\n",
    );
    for (i, o) in results.outcomes.iter().enumerate() {
        for (k, p) in o.points.iter().enumerate() {
            let t = &p.saturation;
            let (krw, krn, ri) = match p.flow {
                Some(f) => (f.krw.to_string(), f.krn.to_string(), f.ri.to_string()),
                None => (String::new(), String::new(), String::new()),
            };
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{},{},{},{},{},{krw},{krn},{ri}",
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

/// Writes `summary.json`, `curves.csv` and `ganglia.csv` into `dir`
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
        ("summary.json", summary + "\n"),
    ] {
        let p = dir.join(name);
        write_atomic(&p, text.as_bytes()).map_err(|e| io_err(&p, e))?;
    }
    Ok(())
}
