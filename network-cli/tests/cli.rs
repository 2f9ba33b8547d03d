//! The `ganglion` program end to end, on the bundled sample networks.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

#[path = "cli/cluster.rs"]
mod cluster;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .unwrap()
        .to_path_buf()
}

fn ganglion(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_ganglion"))
        .args(args)
        .current_dir(root())
        .output()
        .expect("ganglion runs")
}

fn ok(args: &[&str]) -> Output {
    let o = ganglion(args);
    assert!(
        o.status.success(),
        "ganglion {args:?} failed:\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("ganglion-cli-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn no_temp_files(dir: &Path) {
    for e in walk(dir) {
        let name = e.file_name().unwrap().to_string_lossy().to_string();
        assert!(
            !name.contains(".tmp") && !name.starts_with('.'),
            "leftover {}",
            e.display()
        );
    }
}

fn walk(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            out.extend(walk(&p));
        } else {
            out.push(p);
        }
    }
    out
}

#[test]
fn generate_gives_identical_bytes_with_one_and_two_threads() {
    let d = scratch("gen");
    for t in ["1", "2"] {
        ok(&[
            "--quiet",
            "--threads",
            t,
            "generate",
            "-o",
            s(&d.join(format!("net{t}"))),
            "--size",
            "12x10x9",
            "--seed",
            "5",
        ]);
        ok(&[
            "--quiet",
            "--threads",
            t,
            "generate",
            "-o",
            s(&d.join(format!("net{t}.gnet"))),
            "--size",
            "12x10x9",
            "--seed",
            "5",
        ]);
    }
    for f in ["pores.csv", "throats.csv", "network.toml"] {
        let a = std::fs::read(d.join("net1").join(f)).unwrap();
        let b = std::fs::read(d.join("net2").join(f)).unwrap();
        assert_eq!(a, b, "{f} differs between 1 and 2 threads");
    }
    assert_eq!(
        std::fs::read(d.join("net1.gnet")).unwrap(),
        std::fs::read(d.join("net2.gnet")).unwrap()
    );
    no_temp_files(&d);
}

#[test]
fn inspect_and_perm_print_the_documented_json_keys() {
    let o = ok(&["inspect", "sample-networks/tiny-lattice", "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in [
        "pores",
        "throats",
        "porosity",
        "mean_coordination",
        "spanning",
        "isolated_pores",
    ] {
        assert!(!v[k].is_null(), "inspect --json lacks {k}");
    }
    assert_eq!(v["pores"], 216);
    let o = ok(&[
        "perm",
        "sample-networks/tiny-lattice",
        "--axis",
        "x",
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in [
        "permeability_m2",
        "permeability_md",
        "porosity",
        "formation_factor",
        "flow_imbalance",
        "solver_iterations",
    ] {
        assert!(!v[k].is_null(), "perm --json lacks {k}");
    }
    assert!(v["flow_imbalance"].as_f64().unwrap() < 1e-8);
}

#[test]
fn convert_round_trips_a_network_bit_for_bit() {
    let d = scratch("convert");
    ok(&[
        "--quiet",
        "convert",
        "sample-networks/tiny-lattice",
        "-o",
        s(&d.join("t.gnet")),
    ]);
    ok(&[
        "--quiet",
        "convert",
        s(&d.join("t.gnet")),
        "-o",
        s(&d.join("back")),
    ]);
    for f in ["pores.csv", "throats.csv"] {
        let a = std::fs::read(root().join("sample-networks/tiny-lattice").join(f)).unwrap();
        let b = std::fs::read(d.join("back").join(f)).unwrap();
        assert_eq!(a, b, "{f}");
    }
}

fn write_study(dir: &Path, body: &str) -> PathBuf {
    let p = dir.join("study.toml");
    let net = root().join("sample-networks/tiny-lattice");
    std::fs::write(&p, format!("network = {:?}\n{body}", s(&net))).unwrap();
    p
}

const SMALL_STUDY: &str = r#"
seed = 3
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[[process]]
kind = "drainage"
until_sw = 0.2
pc_steps = 20
kr_points = 6
[[process]]
kind = "imbibition"
until_pc_pa = -2.0e4
kr_points = 6
"#;

#[test]
fn run_writes_summary_curves_and_ganglia() {
    let d = scratch("run");
    let st = write_study(&d, SMALL_STUDY);
    let out = d.join("out");
    ok(&["--quiet", "run", s(&st), "-o", s(&out)]);
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    for k in [
        "sni",
        "snr",
        "pore_volume_m3",
        "processes",
        "study",
        "program",
        "network",
        "end_points",
        "fits",
    ] {
        assert!(!v[k].is_null(), "summary lacks {k}");
    }
    assert!(!v["network"]["hash"].as_str().unwrap().is_empty());
    let p0 = &v["processes"][0];
    for k in ["kind", "final_pc_pa", "final_sw", "breakthrough_pc_pa"] {
        assert!(p0.get(k).is_some(), "process lacks {k}");
    }
    assert!((p0["final_sw"].as_f64().unwrap() - 0.2).abs() < 0.02);
    let curves = std::fs::read_to_string(out.join("curves.csv")).unwrap();
    let header: Vec<&str> = curves.lines().next().unwrap().split(',').collect();
    for c in ["process", "step", "pc_pa", "sw", "krw", "krn", "ri"] {
        assert!(header.contains(&c), "curves.csv lacks {c}");
    }
    let ganglia = std::fs::read_to_string(out.join("ganglia.csv")).unwrap();
    assert!(ganglia.starts_with("id,volume_m3,pores,throats,"));
    let ee = &v["end_effects"];
    assert_eq!(ee["drainage_faces"], "inlet");
    assert_eq!(ee["profile_slabs"], 10);
    assert!(ee["interior_window"].is_null());
    let profiles = std::fs::read_to_string(out.join("profiles.csv")).unwrap();
    assert!(profiles.starts_with("process,kind,step,pc_pa,sw,slab,"));
    assert_eq!(
        profiles.lines().count(),
        1 + 10 * (curves.lines().count() - 1)
    );
    assert!(out.join("sw-profile.svg").exists());
    no_temp_files(&out);
}

#[test]
fn run_writes_binary_vtk_by_default_identical_with_any_thread_count_and_text_with_vtk_ascii() {
    let d = scratch("vtk");
    let st = write_study(&d, SMALL_STUDY);
    let run = |name: &str, threads: &str, extra: &[&str]| {
        let out = d.join(name);
        let mut args = vec![
            "--quiet",
            "--threads",
            threads,
            "run",
            s(&st),
            "-o",
            s(&out),
        ];
        args.extend_from_slice(&["--no-png"]);
        args.extend_from_slice(extra);
        ok(&args);
        out
    };
    let one = run("one", "1", &[]);
    let two = run("two", "2", &[]);
    let text = run("text", "2", &["--vtk-ascii"]);
    for f in ["state-1-drainage.vtp", "state-2-imbibition.vtp"] {
        let b1 = std::fs::read(one.join(f)).unwrap();
        assert_eq!(
            b1,
            std::fs::read(two.join(f)).unwrap(),
            "{f}: 1 vs 2 threads"
        );
        let at = b1
            .windows(29)
            .position(|w| w == b"<AppendedData encoding=\"raw\">")
            .expect("appended data");
        let header = std::str::from_utf8(&b1[..at]).expect("text header");
        assert!(header.contains("format=\"appended\"") && !header.contains("format=\"ascii\""));
        let a = String::from_utf8(std::fs::read(text.join(f)).unwrap()).expect("text file");
        assert!(!a.contains("<AppendedData") && a.contains("format=\"ascii\""));
        assert!(a.contains("Name=\"array_meanings\""));
        // The same piece header in both encodings.
        let piece = |t: &str| {
            t[t.find("<Piece").unwrap()..]
                .lines()
                .next()
                .unwrap()
                .to_string()
        };
        assert_eq!(piece(header), piece(&a));
    }
    // Both flags together are a usage error.
    let o = ganglion(&[
        "run",
        s(&st),
        "-o",
        s(&d.join("x")),
        "--no-vtk",
        "--vtk-ascii",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--vtk-ascii"));
}

#[test]
fn bad_inputs_exit_with_one_and_name_the_problem() {
    let d = scratch("bad");
    // A network whose pores.csv has a negative radius on line 3.
    let net = d.join("net");
    ok(&[
        "--quiet",
        "convert",
        "sample-networks/tiny-lattice",
        "-o",
        s(&net),
    ]);
    let pores = std::fs::read_to_string(net.join("pores.csv")).unwrap();
    let mut lines: Vec<String> = pores.lines().map(str::to_owned).collect();
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = header.iter().position(|&h| h == "radius_m").unwrap();
    let mut f: Vec<String> = lines[2].split(',').map(str::to_owned).collect();
    f[col] = "-1e-6".into();
    lines[2] = f.join(",");
    std::fs::write(net.join("pores.csv"), lines.join("\n") + "\n").unwrap();
    let o = ganglion(&["inspect", s(&net)]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("pores.csv:3") && err.contains("radius_m"),
        "{err}"
    );
    // A study with a negative tension.
    let st = write_study(
        &d,
        &SMALL_STUDY.replace(
            "seed = 3",
            "seed = 3\n[fluids]\ninterfacial_tension_n_per_m = -0.1",
        ),
    );
    let o = ganglion(&["run", s(&st), "-o", s(&d.join("out"))]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("fluids.interfacial_tension_n_per_m") && err.contains("line 5"),
        "{err}"
    );
    assert!(
        !d.join("out").exists(),
        "a refused study left output behind"
    );
    // A usage error.
    let o = ganglion(&["inspect"]);
    assert_eq!(o.status.code(), Some(2));
    let o = ganglion(&["frobnicate"]);
    assert_eq!(o.status.code(), Some(2));
}

const SWEEP: &str = r#"
seed = 3
[wettability]
receding_contact_angle_deg = [0.0, 10.0]
advancing_contact_angle_deg = [30.0, 50.0]
[boundary]
imbibition_faces = "both"
[[process]]
kind = "drainage"
until_pc_pa = 1.0e5
[[process]]
kind = "imbibition"
until_pc_pa = -1.0e5
[sweep]
initial_water_saturations = [0.8, 0.5, 0.2]
realisations = 2
"#;

#[test]
fn sweep_resumes_and_merges_cases_run_one_by_one_in_any_order() {
    let d = scratch("sweep");
    let st = write_study(&d, SWEEP);
    // Reference: a whole sweep with two threads and one with one thread.
    let full = d.join("full");
    ok(&["--quiet", "--threads", "2", "sweep", s(&st), "-o", s(&full)]);
    let one = d.join("one");
    ok(&["--quiet", "--threads", "1", "sweep", s(&st), "-o", s(&one)]);
    let reference = std::fs::read_to_string(full.join("summary.json")).unwrap();
    assert_eq!(
        reference,
        std::fs::read_to_string(one.join("summary.json")).unwrap()
    );
    // Cases one at a time, backwards, then collect.
    let parts = d.join("parts");
    let list = ok(&["sweep", s(&st), "-o", s(&parts), "--list-cases"]);
    let n = String::from_utf8_lossy(&list.stdout).lines().count();
    assert_eq!(n, 6);
    for k in (0..n).rev() {
        ok(&[
            "--quiet",
            "sweep",
            s(&st),
            "-o",
            s(&parts),
            "--case",
            &k.to_string(),
        ]);
    }
    ok(&["--quiet", "collect", s(&parts)]);
    assert_eq!(
        reference,
        std::fs::read_to_string(parts.join("summary.json")).unwrap()
    );
    // An interrupted sweep (two cases done) restarted: only the rest runs.
    let resumed = d.join("resumed");
    ok(&["--quiet", "sweep", s(&st), "-o", s(&resumed), "--case", "1"]);
    ok(&["--quiet", "sweep", s(&st), "-o", s(&resumed), "--case", "4"]);
    let before = std::fs::metadata(resumed.join("cases/case-00001.json"))
        .unwrap()
        .modified()
        .unwrap();
    let o = ok(&["sweep", s(&st), "-o", s(&resumed)]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("6 cases, 2 already finished, 4 to run"),
        "{err}"
    );
    let after = std::fs::metadata(resumed.join("cases/case-00001.json"))
        .unwrap()
        .modified()
        .unwrap();
    assert_eq!(before, after, "a finished case was recomputed");
    assert_eq!(
        reference,
        std::fs::read_to_string(resumed.join("summary.json")).unwrap()
    );
    no_temp_files(&resumed);
    // The report: one self-contained file holding every figure the sweep
    // wrote, the caution box, no scripts and nothing fetched from outside
    // (common practice for an offline report); identical when resumed.
    let html = std::fs::read_to_string(full.join("report.html")).unwrap();
    let svg_files = std::fs::read_dir(&full)
        .unwrap()
        .filter(|e| {
            e.as_ref()
                .unwrap()
                .path()
                .extension()
                .is_some_and(|x| x == "svg")
        })
        .count();
    assert!(svg_files >= 3, "only {svg_files} figures");
    assert_eq!(html.matches("<svg").count(), svg_files);
    assert!(html.contains("Caution: model estimates"));
    assert!(html.contains("Land C"));
    for bad in [
        "<script", "<link", "<img", "<iframe", "src=", "url(", "@import",
    ] {
        assert!(!html.contains(bad), "report.html contains {bad}");
    }
    let no_ns = html.replace("http://www.w3.org/", "");
    assert!(!no_ns.contains("http://") && !no_ns.contains("https://"));
    assert_eq!(
        html,
        std::fs::read_to_string(resumed.join("report.html")).unwrap()
    );
}

#[test]
fn readme_main_command_runs_on_the_bundled_sample() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let line = readme
        .lines()
        .find(|l| {
            l.trim_start()
                .starts_with("cargo run --release -p network-cli -- run ")
        })
        .expect("README names the main command");
    let args: Vec<&str> = line
        .split("-- ")
        .nth(1)
        .unwrap()
        .split_whitespace()
        .collect();
    // Same command, into a scratch folder.
    let d = scratch("readme");
    let mut a: Vec<String> = args.iter().map(|x| x.to_string()).collect();
    let o = a
        .iter()
        .position(|x| x == "-o")
        .expect("-o in the main command");
    a[o + 1] = s(&d.join("out")).to_string();
    let mut full = vec!["--quiet".to_string()];
    full.extend(a);
    let refs: Vec<&str> = full.iter().map(String::as_str).collect();
    ok(&refs);
    assert!(d.join("out/summary.json").exists());
    // The README says the command can be run again (it replaces its own
    // earlier set).
    ok(&refs);
    complete_manifest(&d.join("out"));
}

#[test]
fn run_prints_key_results_on_stdout_and_warnings_on_stderr_even_when_quiet() {
    let d = scratch("streams");
    // A primary drainage to 100 Pa (meant as 100 kPa): a warning.
    let st = write_study(
        &d,
        &SMALL_STUDY.replace("until_sw = 0.2", "until_pc_pa = 100.0"),
    );
    for quiet in [false, true] {
        let out = d.join(format!("out-{quiet}"));
        let mut args = vec!["run", s(&st), "-o", s(&out), "--no-png", "--no-vtk"];
        if quiet {
            args.insert(0, "-q");
        }
        let o = ok(&args);
        let (stdout, stderr) = (
            String::from_utf8_lossy(&o.stdout).to_string(),
            String::from_utf8_lossy(&o.stderr).to_string(),
        );
        for key in [
            "permeability k",
            "porosity φ",
            "formation factor F",
            "Swi",
            "Sni",
            "Snr",
            "krw(Snr)",
            "kro(Swi)",
            "Land C (single point",
        ] {
            assert!(stdout.contains(key), "stdout lacks {key}:\n{stdout}");
        }
        assert!(!stdout.contains("warning"), "{stdout}");
        assert!(!stdout.contains("-0.0000"), "{stdout}");
        assert!(
            stderr.contains("warning: process 1 (drainage): until_pc_pa = 100 Pa is below"),
            "quiet={quiet}: {stderr}"
        );
        // Progress lines only without -q.
        assert_eq!(stderr.contains("results in"), !quiet, "{stderr}");
        let v: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap())
                .unwrap();
        assert!(
            v["warnings"]
                .as_array()
                .unwrap()
                .iter()
                .any(|w| w.as_str().unwrap().contains("lowest entry pressure")),
            "{}",
            v["warnings"]
        );
        let html = std::fs::read_to_string(out.join("report.html")).unwrap();
        assert!(html.contains("lowest entry pressure"));
    }
}

#[test]
fn sweep_prints_land_per_group_on_stdout() {
    let d = scratch("sweep-stdout");
    let st = write_study(&d, SWEEP);
    let o = ok(&["-q", "sweep", s(&st), "-o", s(&d.join("out"))]);
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert!(stdout.contains("group 0 (base): 6 cases"), "{stdout}");
    assert!(
        stdout.contains("Land C") && stdout.contains("points"),
        "{stdout}"
    );
    assert!(!String::from_utf8_lossy(&o.stderr).contains("results in"));
}

#[test]
fn help_says_what_the_tool_computes_and_generate_shows_defaults() {
    let o = ok(&["--help"]);
    let first = String::from_utf8_lossy(&o.stdout)
        .lines()
        .next()
        .unwrap()
        .to_string();
    assert!(
        first.starts_with("Computes capillary pressure, residual trapping"),
        "{first}"
    );
    let o = ok(&["generate", "--help"]);
    let h = String::from_utf8_lossy(&o.stdout);
    for flag in [
        "--spacing-m",
        "--target-coordination",
        "--flow-axis",
        "--clay-fraction",
    ] {
        assert!(h.contains(flag), "{flag}");
    }
    let d = network_core::generate::LatticeSpec::default();
    assert!(h.contains(&format!("[default: {}", d.spacing_m)), "{h}");
    assert!(h.contains("[default: 20x20x20"), "{h}");
    // The old flag, in µm, is refused with its new name.
    let o = ganglion(&["generate", "-o", "/nonexistent/x", "--spacing-um", "85"]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("renamed --spacing-m") && err.contains("85e-6"),
        "{err}"
    );
}

#[test]
fn template_prints_a_study_that_runs() {
    let d = scratch("template");
    let o = ok(&["template", "study"]);
    let text = String::from_utf8(o.stdout).unwrap();
    // The template's network path, resolved as from a study in studies/.
    let net = root().join("sample-networks/tiny-lattice");
    let text = text.replace(
        "\"../sample-networks/tiny-lattice\"",
        &format!("{:?}", s(&net)),
    );
    let st = d.join("study.toml");
    std::fs::write(&st, &text).unwrap();
    let r = ganglion(&[
        "-q",
        "run",
        s(&st),
        "-o",
        s(&d.join("out")),
        "--no-png",
        "--no-vtk",
    ]);
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    for kind in ["sweep", "generator"] {
        let o = ok(&["template", kind]);
        assert!(String::from_utf8_lossy(&o.stdout).contains("docs/keys.md"));
    }
}

/// The Pc column (the last) of the data rows of the first keyword table of a
/// `.inc` file, and its "Pc unit" header.
fn inc_pc(text: &str) -> (String, Vec<f64>) {
    let unit = text
        .lines()
        .find_map(|l| l.strip_prefix("-- Pc unit: "))
        .expect("Pc unit header")
        .split_whitespace()
        .next()
        .unwrap()
        .to_string();
    let pc = text
        .lines()
        .skip_while(|l| !matches!(l.trim(), "SWOF" | "SWFN"))
        .skip(1)
        .take_while(|l| l.trim() != "/")
        .filter(|l| !l.trim_start().starts_with("--"))
        .map(|l| l.split_whitespace().last().unwrap().parse().unwrap())
        .collect();
    (unit, pc)
}

#[test]
fn table_units_convert_the_keyword_tables_and_refuse_unknown_units() {
    let d = scratch("table-units");
    let st = write_study(&d, SMALL_STUDY);
    let mut by_unit = Vec::new();
    for unit in ["bar", "kpa", "psi"] {
        let out = d.join(unit);
        ok(&[
            "--quiet",
            "run",
            s(&st),
            "-o",
            s(&out),
            "--no-png",
            "--no-vtk",
            "--table-units",
            unit,
        ]);
        let text = std::fs::read_to_string(out.join("table-drainage.inc")).unwrap();
        let (named, pc) = inc_pc(&text);
        assert!(
            named.eq_ignore_ascii_case(unit),
            "{unit}: header says {named}"
        );
        by_unit.push(pc);
    }
    // 1 bar = 1e5 Pa (definition), 1 kPa = 1e3 Pa, 1 psi = 6894.757 Pa
    // (NIST SP 811, appendix B conversion factors). The files print seven
    // significant digits (rounding error up to 5e-7 relative each), so the
    // same Pa must agree to 1e-6 relative.
    let pa = [1.0e5, 1.0e3, 6894.757];
    assert!(by_unit[0].len() > 3);
    for (k, pc) in by_unit.iter().enumerate() {
        assert_eq!(pc.len(), by_unit[0].len());
        for (v, bar) in pc.iter().zip(&by_unit[0]) {
            let (a, b) = (v * pa[k], bar * pa[0]);
            assert!((a - b).abs() <= 1e-6 * b.abs().max(1.0), "{a} Pa vs {b} Pa");
        }
    }
    let bad = ganglion(&[
        "run",
        s(&st),
        "-o",
        s(&d.join("atm")),
        "--table-units",
        "atm",
    ]);
    assert_eq!(bad.status.code(), Some(2));
    let err = String::from_utf8_lossy(&bad.stderr);
    assert!(
        err.contains("--table-units") && err.contains("atm"),
        "{err}"
    );
    assert!(
        !d.join("atm").exists(),
        "nothing may be written before a refusal"
    );
}

/// The manifest of a result folder, parsed, with `ganglion verify` passing.
fn complete_manifest(out: &Path) -> serde_json::Value {
    let v = ganglion(&["verify", s(out)]);
    assert!(
        v.status.success(),
        "{} is not a complete set:\n{}",
        out.display(),
        String::from_utf8_lossy(&v.stderr)
    );
    serde_json::from_str(&std::fs::read_to_string(out.join("ganglion-manifest.json")).unwrap())
        .unwrap()
}

#[test]
fn issue_18_run_killed_during_its_write_phase_leaves_the_previous_or_the_new_complete_set() {
    let d = scratch("kill");
    let st = write_study(&d, SMALL_STUDY);
    // Two different complete sets (the tables differ in length), recorded
    // in folders of their own.
    let variant = |k: usize| if k.is_multiple_of(2) { "21" } else { "31" };
    let mut reference = Vec::new();
    let mut elapsed = Vec::new();
    for k in 0..2 {
        let out = d.join(format!("ref{k}"));
        let t0 = std::time::Instant::now();
        ok(&[
            "-q",
            "run",
            s(&st),
            "-o",
            s(&out),
            "--table-points",
            variant(k),
        ]);
        elapsed.push(t0.elapsed());
        reference.push(complete_manifest(&out)["files"].clone());
    }
    assert_ne!(reference[0], reference[1]);
    let t_run = elapsed.iter().max().unwrap().as_secs_f64();
    let out = d.join("out");
    ok(&[
        "-q",
        "run",
        s(&st),
        "-o",
        s(&out),
        "--table-points",
        variant(0),
    ]);
    let mut current = 0;
    // Kill times spread over the whole run (the write phase is its tail),
    // from a fixed-seed linear congruential sequence.
    let mut state: u64 = 18;
    let mut outcomes = [0usize; 2];
    for it in 1..=8 {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let frac = (state >> 11) as f64 / (1u64 << 53) as f64;
        let next = it % 2;
        let mut child = Command::new(env!("CARGO_BIN_EXE_ganglion"))
            .args([
                "-q",
                "run",
                s(&st),
                "-o",
                s(&out),
                "--overwrite",
                "--table-points",
                variant(next),
            ])
            .current_dir(root())
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(std::time::Duration::from_secs_f64(
            0.3 * t_run + frac * t_run,
        ));
        let _ = child.kill(); // SIGKILL on Unix
        let _ = child.wait();
        let files = complete_manifest(&out)["files"].clone();
        if files == reference[current] {
            outcomes[0] += 1;
        } else {
            assert_eq!(
                files, reference[next],
                "iteration {it}: the folder holds neither the previous nor the new set"
            );
            outcomes[1] += 1;
            current = next;
        }
    }
    // A killed run leaves at most its staging folder beside the target;
    // the next run removes it.
    ok(&["-q", "run", s(&st), "-o", s(&out), "--overwrite"]);
    let mut names: Vec<String> = std::fs::read_dir(&d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["out", "ref0", "ref1", "study.toml"], "{outcomes:?}");
    no_temp_files(&out);
}

#[test]
fn issue_18_run_refuses_a_folder_of_other_files_and_our_set_without_overwrite() {
    let d = scratch("refuse");
    let st = write_study(&d, SMALL_STUDY);
    let foreign = d.join("thesis");
    std::fs::create_dir_all(&foreign).unwrap();
    std::fs::write(foreign.join("chapter1.tex"), "keep me").unwrap();
    for extra in [&[][..], &["--overwrite"][..]] {
        let mut args = vec!["-q", "run", s(&st), "-o", s(&foreign)];
        args.extend_from_slice(extra);
        let o = ganglion(&args);
        assert_eq!(o.status.code(), Some(1));
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains("not ours"), "{err}");
    }
    assert_eq!(std::fs::read_dir(&foreign).unwrap().count(), 1);
    let out = d.join("out");
    ok(&["-q", "run", s(&st), "-o", s(&out), "--table-points", "31"]);
    let o = ganglion(&["-q", "run", s(&st), "-o", s(&out)]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--overwrite"));
    // A rerun with fewer files replaces the whole set: no file of the
    // earlier run (here the PNG copies) stays beside the new ones.
    ok(&[
        "-q",
        "run",
        s(&st),
        "-o",
        s(&out),
        "--overwrite",
        "--no-png",
    ]);
    assert!(
        walk(&out)
            .iter()
            .all(|p| p.extension().is_none_or(|e| e != "png"))
    );
    complete_manifest(&out);
    std::fs::write(out.join("curves.csv"), "edited").unwrap();
    let v = ganglion(&["verify", s(&out)]);
    assert_eq!(v.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&v.stderr).contains("curves.csv"));
}

#[test]
fn issue_18_sweep_refuses_a_folder_of_other_files_and_a_run_result_set() {
    let d = scratch("sweep-foreign");
    let st = write_study(&d, SWEEP);
    let foreign = d.join("thesis");
    std::fs::create_dir_all(&foreign).unwrap();
    std::fs::write(foreign.join("chapter1.tex"), "keep me").unwrap();
    for extra in [&[][..], &["--case", "0"][..]] {
        let mut args = vec!["-q", "sweep", s(&st), "-o", s(&foreign)];
        args.extend_from_slice(extra);
        let o = ganglion(&args);
        assert_eq!(o.status.code(), Some(1));
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains("no sweep of ours"), "{err}");
    }
    assert_eq!(std::fs::read_dir(&foreign).unwrap().count(), 1);
    // A run's result set is ours but not a sweep.
    let rd = d.join("r");
    std::fs::create_dir_all(&rd).unwrap();
    let run_study = write_study(&rd, SMALL_STUDY);
    let run_out = d.join("run-out");
    ok(&[
        "-q",
        "run",
        s(&run_study),
        "-o",
        s(&run_out),
        "--no-png",
        "--no-vtk",
    ]);
    let before = walk(&run_out);
    let o = ganglion(&["-q", "sweep", s(&st), "-o", s(&run_out)]);
    assert_eq!(o.status.code(), Some(1));
    assert_eq!(walk(&run_out), before);
    complete_manifest(&run_out);
}

#[test]
fn issue_18_sweep_merged_outputs_are_sealed_last_and_an_interrupted_merge_shows() {
    let d = scratch("sweep-seal");
    let st = write_study(&d, SWEEP);
    let out = d.join("out");
    ok(&["-q", "sweep", s(&st), "-o", s(&out)]);
    let m = complete_manifest(&out);
    assert_eq!(m["kind"], "sweep");
    let sources = m["sources"].as_array().unwrap();
    assert!(sources.iter().any(|e| e["path"] == "sweep-cases.json"));
    assert!(sources.iter().any(|e| e["path"] == "cases/case-00000.json"));
    // A merge killed after removing the manifest, with a stale temporary
    // of a dead writer (pid 0) left in cases/.
    std::fs::remove_file(out.join("ganglion-manifest.json")).unwrap();
    std::fs::write(out.join("cases/.case-00000.json.0-1.tmp"), "{").unwrap();
    assert_eq!(ganglion(&["verify", s(&out)]).status.code(), Some(1));
    ok(&["-q", "collect", s(&out)]);
    complete_manifest(&out);
    no_temp_files(&out);
}

#[test]
fn issue_18_negative_generate_values_reach_our_range_check_which_names_the_flag() {
    let d = scratch("negative-flags");
    let out = d.join("net");
    for (flag, value, code) in [
        ("--seed", "-1", 2),
        ("--spacing-m", "-85e-6", 1),
        ("--target-coordination", "-2", 1),
        ("--clay-fraction", "-0.1", 1),
        ("--size", "-3x3x3", 1),
    ] {
        let mut args = vec!["generate", "-o", s(&out), flag, value];
        if flag != "--size" {
            args.extend(["--size", "4x4x4"]);
        }
        let o = ganglion(&args);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(code), "{flag} {value}: {err}");
        assert!(err.contains(flag), "{flag} {value}: {err}");
        assert!(
            !err.contains("unexpected argument"),
            "{flag} {value}: {err}"
        );
        assert!(!out.exists(), "{flag} {value}: wrote before refusing");
    }
}

/// Runs `ganglion args` reporting its peak resident memory (`VmHWM`).
fn peak_of(args: &[&str]) -> u64 {
    let o = Command::new(env!("CARGO_BIN_EXE_ganglion"))
        .args(args)
        .current_dir(root())
        .env("GANGLION_PRINT_PEAK_MEMORY", "1")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{args:?}: {err}");
    err.lines()
        .find_map(|l| l.strip_prefix("peak resident memory: "))
        .and_then(|l| l.strip_suffix(" bytes"))
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("{args:?}: no peak in {err}"))
}

#[test]
fn issue_18_memory_estimate_is_within_a_factor_two_of_the_measured_peak() {
    use network_core::memory;
    let d = scratch("memory");
    // 10^4 pores (run, perm, generate) and 10^5 pores (generate, perm).
    for n in [22usize, 46] {
        let net = d.join(format!("net{n}.gnet"));
        let size = format!("{n}x{n}x{n}");
        let gen_peak = peak_of(&[
            "-q",
            "generate",
            "-o",
            s(&net),
            "--size",
            &size,
            "--seed",
            "3",
        ]);
        let loaded = network_core::io::read_network(&net).unwrap().network;
        let (np, nt) = (loaded.n_pores() as u64, loaded.n_throats() as u64);
        let bonds = 3 * (n as u64 - 1) * (n as u64) * (n as u64);
        let mut checks = vec![
            (
                "generate",
                memory::for_generate(np, bonds, nt).total(),
                gen_peak,
            ),
            (
                "perm",
                memory::for_perm(np, nt).total(),
                peak_of(&["-q", "perm", s(&net)]),
            ),
        ];
        if n == 22 {
            let st = d.join("study.toml");
            std::fs::write(
                &st,
                format!(
                    "network = {:?}\n{}",
                    s(&net),
                    SMALL_STUDY.replace("kr_points = 6", "kr_points = 10")
                ),
            )
            .unwrap();
            let out = d.join("out");
            let peak = peak_of(&["-q", "run", s(&st), "-o", s(&out), "--no-png"]);
            checks.push(("run", memory::for_run(np, nt).total(), peak));
        }
        for (what, estimate, peak) in checks {
            let ratio = estimate as f64 / peak as f64;
            assert!(
                (0.5..=2.0).contains(&ratio),
                "{what} on {np} pores: estimate {estimate} B, measured peak {peak} B (ratio {ratio:.2})"
            );
        }
    }
}

#[test]
fn issue_18_generate_beyond_the_available_memory_is_refused_with_both_figures_before_writing() {
    let d = scratch("memory-refusal");
    let out = d.join("big.gnet");
    let o = Command::new(env!("CARGO_BIN_EXE_ganglion"))
        .args(["generate", "-o", s(&out), "--size", "400x400x400"])
        .env("GANGLION_MEMORY_LIMIT", "8G")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(
        err.contains("needs about") && err.contains("is available"),
        "{err}"
    );
    assert!(
        err.contains("GANGLION_MEMORY_LIMIT=8G")
            || err.contains("MemAvailable")
            || err.contains("cgroup"),
        "{err}"
    );
    assert!(!out.exists());
}

#[test]
fn issue_18_pore_volume_of_1e308_is_refused_at_load_and_writes_nothing() {
    let d = scratch("huge-volume");
    let net = d.join("net");
    std::fs::create_dir_all(&net).unwrap();
    let src = root().join("sample-networks/tiny-lattice");
    for f in ["network.toml", "throats.csv"] {
        std::fs::copy(src.join(f), net.join(f)).unwrap();
    }
    // Pore 0 (line 2) gets a volume of 1e308 m³.
    let pores = std::fs::read_to_string(src.join("pores.csv")).unwrap();
    let header: Vec<&str> = pores.lines().next().unwrap().split(',').collect();
    let col = header.iter().position(|h| *h == "volume_m3").unwrap();
    let mut lines: Vec<String> = pores.lines().map(str::to_owned).collect();
    let mut row: Vec<String> = lines[1].split(',').map(str::to_owned).collect();
    row[col] = "1e308".into();
    lines[1] = row.join(",");
    std::fs::write(net.join("pores.csv"), lines.join("\n") + "\n").unwrap();
    let st = d.join("study.toml");
    std::fs::write(&st, format!("network = {:?}\n{SMALL_STUDY}", s(&net))).unwrap();
    let out = d.join("results").join("out");
    let started = std::time::Instant::now();
    let o = ganglion(&["-q", "run", s(&st), "-o", s(&out)]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(
        err.contains("porosity") && err.contains("volume_m3"),
        "{err}"
    );
    assert!(
        started.elapsed().as_secs() < 60,
        "took {:?}",
        started.elapsed()
    );
    assert!(
        !d.join("results").exists(),
        "nothing may be written before a refusal"
    );
    let o = ganglion(&["inspect", s(&net)]);
    assert_eq!(o.status.code(), Some(1));
}

#[test]
fn issue_18_huge_thread_counts_are_capped_and_table_points_bounded() {
    let o = ok(&[
        "--threads",
        "100000",
        "inspect",
        "sample-networks/tiny-lattice",
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("--threads 100000: capped at"), "{err}");
    let d = scratch("table-points");
    let st = write_study(&d, SMALL_STUDY);
    let out = d.join("out");
    let o = ganglion(&["run", s(&st), "-o", s(&out), "--table-points", "1000000000"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--table-points 1000000000"));
    assert!(!out.exists());
}

#[test]
fn synthetic_image_extracts_to_a_network_that_loads_and_matches_the_image() {
    let d = scratch("extract");
    let img = d.join("rock.raw");
    ok(&[
        "synth-image",
        "-o",
        s(&img),
        "--size",
        "48x40x36",
        "--porosity",
        "0.3",
        "--seed",
        "2",
    ]);
    let net = d.join("net");
    let o = ok(&[
        "extract",
        s(&img),
        "-o",
        s(&net),
        "--flow-axis",
        "x",
        "--json",
        "-q",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let ex = &v["extraction"];
    // The network's pore volume over its bulk volume is the image porosity
    // (pores hold every pore voxel; bulk is the image volume).
    let o = ok(&["inspect", s(&net), "--json"]);
    let rep: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(rep["pores"].as_u64(), ex["n_pores"].as_u64(), "{rep}");
    let (a, b) = (
        rep["porosity"].as_f64().unwrap(),
        ex["porosity"].as_f64().unwrap(),
    );
    assert!((a - b).abs() < 1e-12, "{a} vs {b}");
    assert!(v["permeability_m2"].as_f64().unwrap() > 0.0);
    assert!(d.join("net.regions.vti").exists());
    no_temp_files(&d);
    // The same image as .npy needs a voxel size: exit code 1 and a message
    // naming the file and the flag.
    let npy = d.join("rock.npy");
    ok(&["synth-image", "-o", s(&npy), "--size", "20", "--seed", "2"]);
    let o = ganglion(&["extract", s(&npy), "-o", s(&d.join("n2"))]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("rock.npy") && err.contains("--voxel-size-m"),
        "{err}"
    );
    // An undeclared label is named with its voxel.
    let o = ganglion(&[
        "extract",
        s(&npy),
        "--voxel-size-m",
        "1e-6",
        "--pore-label",
        "5",
        "-o",
        s(&d.join("n3")),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("holds label 1") && err.contains("voxel (x="),
        "{err}"
    );
}

#[test]
fn imaged_ganglia_are_counted_and_written() {
    // A 10³ raw image: water (1) everywhere, solid (0) on the z = 0 slice,
    // oil (2) in three blobs: a 2×2×2 cube, a 1×1×4 bar and a single voxel
    // touching the cube only at a corner. By the neighbourhood definitions:
    // 3 ganglia with 6-connectivity, 2 with 26; oil saturation 13 / 900
    // (pore space: the 900 voxels above the solid slice).
    let d = scratch("ganglia");
    let mut v = vec![1u8; 1000];
    let idx = |x: usize, y: usize, z: usize| x + 10 * (y + 10 * z);
    for x in 0..10 {
        for y in 0..10 {
            v[idx(x, y, 0)] = 0;
        }
    }
    for z in 3..5 {
        for y in 3..5 {
            for x in 3..5 {
                v[idx(x, y, z)] = 2;
            }
        }
    }
    v[idx(5, 5, 5)] = 2;
    for z in 2..6 {
        v[idx(8, 1, z)] = 2;
    }
    let img = d.join("res.raw");
    std::fs::write(&img, &v).unwrap();
    std::fs::write(
        d.join("res.raw.toml"),
        "dims = [10, 10, 10]\nvoxel_size_m = 2e-6\npore_label = -1\nwater_label = 1\noil_label = 2\n",
    )
    .unwrap();
    let out = d.join("out6");
    let o = ok(&["ganglia-image", s(&img), "-o", s(&out)]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("ganglia            3"), "{text}");
    let j: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("imaged-phase.json")).unwrap())
            .unwrap();
    assert_eq!(j["n_ganglia"], 3);
    assert!((j["oil_saturation"].as_f64().unwrap() - 13.0 / 900.0).abs() < 1e-15);
    let csv = std::fs::read_to_string(out.join("imaged-ganglia.csv")).unwrap();
    assert_eq!(csv.lines().count(), 4);
    let out = d.join("out26");
    let o = ok(&[
        "ganglia-image",
        s(&img),
        "-o",
        s(&out),
        "--connectivity",
        "26",
    ]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("ganglia            2"));
    // Beside a run's trapped ganglia: the figure is written, and a bad
    // volume in ganglia.csv is refused with file and line.
    let run = d.join("run");
    std::fs::create_dir_all(&run).unwrap();
    std::fs::write(
        run.join("ganglia.csv"),
        "id,volume_m3,pores\n0,1e-15,3\n1,4e-15,7\n",
    )
    .unwrap();
    std::fs::write(run.join("summary.json"), "{\"snr\": 0.31}").unwrap();
    let o = ok(&[
        "ganglia-image",
        s(&img),
        "-o",
        s(&out),
        "--compare",
        s(&run),
    ]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("2 trapped ganglia, Snr 0.3100"));
    let svg = std::fs::read_to_string(out.join("ganglia-imaged-vs-simulated.svg")).unwrap();
    assert!(
        svg.starts_with("<svg") && svg.contains("simulated, 2 ganglia"),
        "{}",
        &svg[..200]
    );
    std::fs::write(run.join("ganglia.csv"), "id,volume_m3\n0,1e-15\n1,oops\n").unwrap();
    let o = ganglion(&[
        "ganglia-image",
        s(&img),
        "-o",
        s(&out),
        "--compare",
        s(&run),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("ganglia.csv:3") && err.contains("oops"),
        "{err}"
    );
    no_temp_files(&d);
}

#[test]
fn bundled_sample_image_is_what_its_command_makes_and_extracts() {
    let d = scratch("sample-image");
    let again = d.join("again.npy");
    ok(&[
        "synth-image",
        "-o",
        s(&again),
        "--size",
        "120",
        "--porosity",
        "0.2",
        "--grain-radius",
        "5,11",
        "--voxel-size-m",
        "3e-6",
        "--seed",
        "7",
        "-q",
    ]);
    let bundled = root().join("sample-images/sandstone-120.npy");
    assert!(std::fs::read(&bundled).unwrap() == std::fs::read(&again).unwrap());
    let o = ok(&[
        "extract",
        s(&bundled),
        "--voxel-size-m",
        "3e-6",
        "-o",
        s(&d.join("net.gnet")),
        "--json",
        "--no-regions",
        "-q",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    // Porosity as the README of sample-images states it (4 decimals).
    let phi = v["extraction"]["porosity"].as_f64().unwrap();
    assert!((phi - 0.1995).abs() < 5e-5, "{phi}");
    assert!(v["extraction"]["n_inlet"].as_u64().unwrap() > 0);
}

#[test]
fn extraction_files_are_identical_with_one_and_two_threads() {
    let d = scratch("extract-threads");
    let img = d.join("rock.npy");
    ok(&[
        "synth-image",
        "-o",
        s(&img),
        "--size",
        "50x44x40",
        "--porosity",
        "0.25",
        "--seed",
        "4",
        "-q",
    ]);
    let mut outputs = Vec::new();
    for t in ["1", "2"] {
        let net = d.join(format!("net-{t}.gnet"));
        ok(&[
            "extract",
            s(&img),
            "--voxel-size-m",
            "2e-6",
            "-o",
            s(&net),
            "--threads",
            t,
            "-q",
        ]);
        let vti = d.join(format!("net-{t}.gnet.regions.vti"));
        outputs.push((std::fs::read(&net).unwrap(), std::fs::read(&vti).unwrap()));
    }
    assert!(
        outputs[0] == outputs[1],
        "files differ between 1 and 2 threads"
    );
}

#[test]
fn micp_writes_curve_and_figures_and_overlays_a_measured_curve() {
    let dir = scratch("micp");
    let measured = dir.join("measured.csv");
    std::fs::write(
        &measured,
        "# invented plug\npressure_psi,mercury_saturation\n5,0.0\n50,0.5\n500,0.9\n",
    )
    .unwrap();
    let out = dir.join("out");
    let o = ok(&[
        "micp",
        "sample-networks/tiny-lattice",
        "-o",
        s(&out),
        "--measured",
        s(&measured),
    ]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("misfit to measured"), "{text}");
    let csv = std::fs::read_to_string(out.join("micp.csv")).unwrap();
    assert!(
        csv.contains("pressure_pa,pressure_psi,mercury_saturation,throat_radius_m,ds_dlog10_r")
    );
    let svg = std::fs::read_to_string(out.join("micp.svg")).unwrap();
    assert!(svg.contains("measured"));
    assert!(out.join("pore-throat-sizes.svg").is_file());
    no_temp_files(&out);
    // A measured file in percent is refused with file and line.
    std::fs::write(&measured, "pressure_psi,mercury_saturation\n5,0\n50,55\n").unwrap();
    let o = ganglion(&[
        "micp",
        "sample-networks/tiny-lattice",
        "-o",
        s(&out),
        "--measured",
        s(&measured),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("measured.csv, line 3") && err.contains("55"),
        "{err}"
    );
}

#[test]
fn calibrate_writes_the_fit_and_refuses_what_it_cannot_match() {
    let dir = scratch("calibrate");
    // Measured curve: the sample's own simulated MICP at pressures 0.7 times
    // lower (a network 1/0.7 times larger), every fifth step.
    let micp_out = dir.join("micp");
    ok(&["micp", "sample-networks/tiny-lattice", "-o", s(&micp_out)]);
    let sim = std::fs::read_to_string(micp_out.join("micp.csv")).unwrap();
    let mut measured = String::from("pressure_pa,mercury_saturation\n");
    for (i, line) in sim
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .enumerate()
    {
        if i % 5 == 4 {
            let f: Vec<&str> = line.split(',').collect();
            let p: f64 = f[0].parse().unwrap();
            measured.push_str(&format!("{},{}\n", 0.7 * p, f[2]));
        }
    }
    std::fs::write(dir.join("plug.csv"), measured).unwrap();
    let lab = dir.join("lab.toml");
    std::fs::write(
        &lab,
        "porosity = 0.17\npermeability_md = 400.0\nmicp_curve = \"plug.csv\"\n",
    )
    .unwrap();
    let out = dir.join("out");
    let o = ok(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        s(&lab),
        "-o",
        s(&out),
    ]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("length factor") && text.contains("MICP misfit"),
        "{text}"
    );
    for f in [
        "calibration.json",
        "calibration.svg",
        "micp.csv",
        "network.gnet",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("calibration.json")).unwrap())
            .unwrap();
    assert_eq!(json["accepted"], serde_json::Value::Bool(true));
    // A permeability 10⁴ times too high cannot be matched together with
    // the curve: the fit compromises and at least one misfit exceeds its
    // limit. Exit 1, the reason printed, no network written.
    std::fs::write(
        &lab,
        "porosity = 0.17\npermeability_md = 4.0e6\nmicp_curve = \"plug.csv\"\n",
    )
    .unwrap();
    let out2 = dir.join("out2");
    let o = ganglion(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        s(&lab),
        "-o",
        s(&out2),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("cannot be matched")
            && (err.contains("permeability") || err.contains("MICP misfit")),
        "{err}"
    );
    assert!(!out2.join("network.gnet").exists());
    assert!(out2.join("calibration.svg").is_file());
}

#[test]
fn calibrate_fits_the_advancing_angles_and_refuses_an_unreachable_residual() {
    let dir = scratch("calibrate-angles");
    let demo = root().join("docs/examples");
    std::fs::copy(
        demo.join("plug-demo-micp.csv"),
        dir.join("plug-demo-micp.csv"),
    )
    .unwrap();
    let base = std::fs::read_to_string(demo.join("plug-demo.toml")).unwrap();
    let lab = dir.join("lab.toml");
    // Values the model gives on the demo network with an advancing range
    // near 91–111° (see the README example); the fit must find a range
    // whose misfits are within the limits.
    std::fs::write(
        &lab,
        format!(
            "{base}\n[waterflood]\ninitial_water_saturation = 0.25\nresidual_nonwetting_saturation = 0.48\namott_water_index = 0.6\n"
        ),
    )
    .unwrap();
    let out = dir.join("out");
    let o = ok(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        s(&lab),
        "-o",
        s(&out),
    ]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("advancing angles") && text.contains("Amott water index"),
        "{text}"
    );
    for f in ["angle-scan.csv", "angle-fit.svg", "network.gnet"] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("calibration.json")).unwrap())
            .unwrap();
    let a = &json["wettability"]["advancing_contact_angle_deg"];
    let lo = a[0].as_f64().unwrap();
    assert!((80.0..100.0).contains(&lo), "{a}");
    assert!(
        json["wettability"]["residual_nonwetting_misfit"]
            .as_f64()
            .unwrap()
            .abs()
            <= 0.03
    );
    // A residual saturation of 0.95 after a flood from Swi = 0.25 is
    // impossible (common practice: more than the 0.75 that entered): exit 1,
    // the value named, no network written.
    std::fs::write(
        &lab,
        format!(
            "{base}\n[waterflood]\ninitial_water_saturation = 0.25\nresidual_nonwetting_saturation = 0.95\n"
        ),
    )
    .unwrap();
    let out2 = dir.join("out2");
    let o = ganglion(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        s(&lab),
        "-o",
        s(&out2),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("residual_nonwetting_saturation = 0.95") && err.contains("angle-fit.svg"),
        "{err}"
    );
    assert!(!out2.join("network.gnet").exists());
    // A bad key value is refused with file, line and value.
    std::fs::write(
        &lab,
        format!("{base}\n[waterflood]\ninitial_water_saturation = 0.25\namott_water_index = 60\n"),
    )
    .unwrap();
    let o = ganglion(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        s(&lab),
        "-o",
        s(&out2),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    let line = base.lines().count() + 4;
    assert!(
        err.contains(&format!("lab.toml, line {line}")) && err.contains("amott_water_index = 60"),
        "{err}"
    );
}

#[test]
fn readme_rock_matching_example_runs_on_the_bundled_files() {
    let dir = scratch("rock-example");
    ok(&[
        "micp",
        "sample-networks/tiny-lattice",
        "-o",
        s(&dir.join("micp-out")),
        "--measured",
        "docs/examples/plug-demo-micp.csv",
    ]);
    let o = ok(&[
        "calibrate",
        "sample-networks/tiny-lattice",
        "--lab",
        "docs/examples/plug-demo.toml",
        "-o",
        s(&dir.join("cal-out")),
    ]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("calibrated network"));
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    assert!(readme.contains("--lab docs/examples/plug-demo.toml"));
}

#[test]
fn calibrate_from_a_generator_file_fits_the_pore_shape() {
    // Data made from a generated irregular network with pore Weibull shape
    // 3.5; calibrating from the same generator file with shape 1.8 must
    // pick 3.5 among the candidates and list them all.
    let dir = scratch("calibrate-shape");
    let gen_truth = dir.join("truth.toml");
    std::fs::write(
        &gen_truth,
        "nx = 8\nny = 8\nnz = 8\npore_radius = { min_m = 5e-6, max_m = 4e-5, shape = 3.5, scale = 0.3 }\n[irregular]\n",
    )
    .unwrap();
    let truth = dir.join("truth.gnet");
    ok(&["generate", "--spec", s(&gen_truth), "-o", s(&truth)]);
    let m = dir.join("m");
    ok(&["micp", s(&truth), "-o", s(&m)]);
    let sim = std::fs::read_to_string(m.join("micp.csv")).unwrap();
    let mut measured = String::from("pressure_pa,mercury_saturation\n");
    for (i, line) in sim
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .enumerate()
    {
        if i % 4 == 3 {
            let f: Vec<&str> = line.split(',').collect();
            measured.push_str(&format!("{},{}\n", f[0], f[2]));
        }
    }
    std::fs::write(dir.join("m.csv"), measured).unwrap();
    let perm = ganglion(&["perm", s(&truth), "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&perm.stdout).unwrap();
    let lab = dir.join("lab.toml");
    std::fs::write(
        &lab,
        format!(
            "porosity = {}\npermeability_md = {}\nmicp_curve = \"m.csv\"\n",
            v["porosity"], v["permeability_md"]
        ),
    )
    .unwrap();
    let gen_base = dir.join("base.toml");
    std::fs::write(&gen_base, "nx = 8\nny = 8\nnz = 8\n[irregular]\n").unwrap();
    let out = dir.join("out");
    let o = ok(&[
        "calibrate",
        "--spec",
        s(&gen_base),
        "--fit-pore-shape",
        "--lab",
        s(&lab),
        "-o",
        s(&out),
    ]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("pore-radius shape        3.5"), "{text}");
    let csv = std::fs::read_to_string(out.join("pore-shape-candidates.csv")).unwrap();
    assert_eq!(csv.lines().count(), 8);
    assert!(out.join("network.gnet").is_file());
}
