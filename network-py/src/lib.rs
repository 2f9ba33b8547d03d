//! `ganglion._core`: the compiled half of the `ganglion` Python package.
//!
//! Every function here is a thin layer over the library: networks are read
//! by `network_core::io`, studies parsed by `network_core::study`, runs made
//! by `network_core::run::run_study`, sweeps by `network_core::sweep`, and
//! result files written by `network-report` with the same calls as the
//! `ganglion` binary, so a file written from Python is byte for byte the
//! file the binary writes. The pure-Python modules of the package
//! (`python/ganglion/`) turn what is returned here into dataclasses.
//!
//! Rules kept at this boundary:
//! - bad input (a wrong type, a missing or refused key, a bad path) becomes
//!   a `GanglionError` (a `ValueError`) or a `TypeError`, with the message
//!   the binary prints; nothing here panics on input;
//! - long calls run with the interpreter lock released; the progress
//!   callback re-acquires it, at most a few times per second.

use std::path::{Path, PathBuf};

use network_core::io::result_set::{self, StagedSet};
use network_core::io::study::StudyInputError;
use network_core::io::{self};
use network_core::run::RunResults;
use network_core::study::Study;
use network_core::sweep::{SweepRun, SweepStudy};
use network_core::{Network, run::run_study};
use numpy::ndarray::Array2;
use numpy::{IntoPyArray, PyArray1};
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict, PyFloat, PyInt, PyList, PyString, PyTuple};

mod progress;

use progress::PyProgress;

pyo3::create_exception!(
    _core,
    GanglionError,
    PyValueError,
    "Bad input or a failed step of Ganglion: the message is the one the `ganglion` binary \
     prints (file, line, key and value where known)."
);

/// The message of an error and its causes, as the binary prints it
/// (`caused by:` lines), without the leading `error: `.
fn chain(e: &(dyn std::error::Error + 'static)) -> String {
    let mut s = e.to_string();
    let mut src = e.source();
    while let Some(c) = src {
        s.push_str("\n  caused by: ");
        s.push_str(&c.to_string());
        src = c.source();
    }
    s
}

fn ganglion_err(e: &(dyn std::error::Error + 'static)) -> PyErr {
    GanglionError::new_err(chain(e))
}

/// A context line over an error, as the binary's `with_context` gives.
fn ganglion_err_ctx(context: String, e: &(dyn std::error::Error + 'static)) -> PyErr {
    GanglionError::new_err(format!("{context}\n  caused by: {}", chain(e)))
}

/// Runs `f` on a pool of `threads` worker threads, or on the global pool
/// (as many threads as cores) for `None`. Results do not depend on the
/// number of threads.
fn on_threads<T: Send>(threads: Option<usize>, f: impl FnOnce() -> T + Send) -> PyResult<T> {
    match threads {
        None => Ok(f()),
        Some(0) => Err(GanglionError::new_err("threads 0: must be at least 1")),
        Some(n) => {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(n)
                .build()
                .map_err(|e| GanglionError::new_err(format!("could not start {n} threads: {e}")))?;
            Ok(pool.install(f))
        }
    }
}

/// A network held by Python: the immutable network, its content hash, the
/// warnings met while reading it and where it came from.
#[pyclass(module = "ganglion._core", name = "NetworkHandle", frozen)]
struct NetworkHandle {
    network: Network,
    hash: String,
    warnings: Vec<String>,
    source: String,
}

#[pymethods]
impl NetworkHandle {
    /// Network name (from its files or the generator).
    #[getter]
    fn name(&self) -> String {
        self.network.info().name.clone()
    }

    /// Number of pores.
    #[getter]
    fn n_pores(&self) -> usize {
        self.network.n_pores()
    }

    /// Number of throats.
    #[getter]
    fn n_throats(&self) -> usize {
        self.network.n_throats()
    }

    /// Content hash (16 hex digits), as in `summary.json`.
    #[getter]
    fn hash(&self) -> String {
        self.hash.clone()
    }

    /// Warnings met while reading the network files.
    #[getter]
    fn warnings(&self) -> Vec<String> {
        self.warnings.clone()
    }

    /// Where the network came from (a path, or the generator).
    #[getter]
    fn source(&self) -> String {
        self.source.clone()
    }

    /// The `ganglion inspect --json` object, as JSON text.
    fn inspect_json(&self, py: Python<'_>) -> PyResult<String> {
        py.detach(|| {
            network_core::stats::inspect_json(&self.network, &self.warnings)
                .and_then(|v| serde_json::to_string(&v))
        })
        .map_err(|e| ganglion_err(&e))
    }

    /// Pore columns as NumPy arrays (SI units).
    fn pore_columns<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let p = self.network.pores();
        let d = PyDict::new(py);
        for (k, v) in [
            ("x_m", &p.x),
            ("y_m", &p.y),
            ("z_m", &p.z),
            ("radius_m", &p.radius),
            ("shape_factor", &p.shape_factor),
            ("volume_m3", &p.volume),
            ("clay_volume_m3", &p.clay_volume),
        ] {
            d.set_item(k, PyArray1::from_slice(py, v))?;
        }
        // As in pores.csv: "inlet", "outlet" or "" (interior).
        let boundary: Vec<&str> = p.boundary.iter().map(|b| b.as_str()).collect();
        d.set_item("boundary", boundary)?;
        Ok(d)
    }

    /// Throat columns as NumPy arrays (SI units); `pore_1`, `pore_2` are
    /// pore indices.
    fn throat_columns<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let t = self.network.throats();
        let d = PyDict::new(py);
        let ends = |side: usize| -> Vec<i64> { t.pores.iter().map(|p| p[side] as i64).collect() };
        d.set_item("pore_1", ends(0).into_pyarray(py))?;
        d.set_item("pore_2", ends(1).into_pyarray(py))?;
        for (k, v) in [
            ("radius_m", &t.radius),
            ("shape_factor", &t.shape_factor),
            ("volume_m3", &t.volume),
            ("clay_volume_m3", &t.clay_volume),
            ("length_m", &t.length),
        ] {
            d.set_item(k, PyArray1::from_slice(py, v))?;
        }
        Ok(d)
    }

    /// Writes the network as a CSV folder.
    fn write_csv(&self, py: Python<'_>, path: PathBuf) -> PyResult<()> {
        py.detach(|| io::write_csv(&self.network, &path))
            .map_err(|e| ganglion_err(&e))
    }

    /// Writes the network as a binary `.gnet` file.
    fn write_gnet(&self, py: Python<'_>, path: PathBuf) -> PyResult<()> {
        py.detach(|| io::write_binary(&self.network, &path))
            .map_err(|e| ganglion_err(&e))
    }
}

/// Loads a network: a CSV folder or a binary `.gnet` file.
#[pyfunction]
fn load_network(py: Python<'_>, path: PathBuf) -> PyResult<NetworkHandle> {
    let loaded = py
        .detach(|| io::read_network(&path))
        .map_err(|e| ganglion_err_ctx(format!("cannot load network {}", path.display()), &e))?;
    let hash = io::network_hash(&loaded.network);
    Ok(NetworkHandle {
        hash,
        warnings: loaded.warnings.iter().map(ToString::to_string).collect(),
        network: loaded.network,
        source: path.display().to_string(),
    })
}

/// Generates a network from generator parameters: `kind` "path" (value
/// is a generator file) or "text" (value is TOML text, named `label` in
/// errors).
#[pyfunction]
#[pyo3(signature = (kind, value, label, progress=None))]
fn generate_network(
    py: Python<'_>,
    kind: &str,
    value: String,
    label: String,
    progress: Option<Py<PyAny>>,
) -> PyResult<NetworkHandle> {
    let spec = py
        .detach(|| match kind {
            "path" => Ok(io::study::read_lattice_spec(Path::new(&value))),
            "text" => Ok(io::study::parse_lattice_spec(&value, Path::new(&label))),
            other => Err(other.to_string()),
        })
        .map_err(|k| PyValueError::new_err(format!("kind {k:?}: use \"path\" or \"text\"")))?
        .map_err(|e| ganglion_err(&e))?;
    let reporter = PyProgress::new(progress);
    let net = py
        .detach(|| network_core::generate::generate(&spec, &reporter))
        .map_err(|e| ganglion_err(&e))?;
    reporter.take_error()?;
    let source = match kind {
        "path" => value,
        _ => label,
    };
    Ok(NetworkHandle {
        hash: io::network_hash(&net),
        warnings: Vec::new(),
        network: net,
        source: format!("generated from {source}"),
    })
}

/// Converts a Python dict (of dicts, lists, str, int, float, bool) to TOML
/// text, naming the dotted key of any value that has no TOML form.
#[pyfunction]
fn dict_to_toml(obj: &Bound<'_, PyAny>) -> PyResult<String> {
    let table = match to_toml(obj, "", 0)? {
        toml::Value::Table(t) => t,
        _ => {
            return Err(PyTypeError::new_err(
                "a study or parameter dict must be a dict",
            ));
        }
    };
    toml::to_string(&table)
        .map_err(|e| GanglionError::new_err(format!("cannot write the dict as TOML: {e}")))
}

/// Deepest nesting of tables and lists a dict may have (a study has three
/// levels); deeper (or self-containing) input is refused instead of
/// recursing without end.
const MAX_DEPTH: usize = 32;

fn to_toml(obj: &Bound<'_, PyAny>, key: &str, depth: usize) -> PyResult<toml::Value> {
    if depth > MAX_DEPTH {
        return Err(GanglionError::new_err(format!(
            "key `{key}`: nested more than {MAX_DEPTH} levels deep (does a dict or list \
             contain itself?)"
        )));
    }
    let at = |k: &str| {
        if key.is_empty() {
            k.to_string()
        } else {
            format!("{key}.{k}")
        }
    };
    if obj.is_instance_of::<PyBool>() {
        return Ok(toml::Value::Boolean(obj.extract::<bool>()?));
    }
    if obj.is_instance_of::<PyInt>() {
        return obj.extract::<i64>().map(toml::Value::Integer).map_err(|_| {
            GanglionError::new_err(format!("key `{key}`: the integer does not fit in 64 bits"))
        });
    }
    if obj.is_instance_of::<PyFloat>() {
        return Ok(toml::Value::Float(obj.extract::<f64>()?));
    }
    if let Ok(s) = obj.cast::<PyString>() {
        return Ok(toml::Value::String(s.extract::<String>()?));
    }
    if let Ok(d) = obj.cast::<PyDict>() {
        let mut t = toml::Table::new();
        for (k, v) in d.iter() {
            let Ok(ks) = k.cast::<PyString>() else {
                return Err(GanglionError::new_err(format!(
                    "key `{}`: table keys must be str, not {}",
                    at(&k.repr().map(|r| r.to_string()).unwrap_or_default()),
                    type_name(&k)
                )));
            };
            let ks = ks.extract::<String>()?;
            let child = at(&ks);
            if v.is_none() {
                // TOML has no null: a None value means "not given", as a
                // missing key does.
                continue;
            }
            t.insert(ks, to_toml(&v, &child, depth + 1)?);
        }
        return Ok(toml::Value::Table(t));
    }
    if obj.is_instance_of::<PyList>() || obj.is_instance_of::<PyTuple>() {
        let mut items = Vec::new();
        for (i, v) in obj.try_iter()?.enumerate() {
            items.push(to_toml(&v?, &format!("{key}[{i}]"), depth + 1)?);
        }
        return Ok(toml::Value::Array(items));
    }
    // NumPy scalars and other numbers: integers through __index__, others
    // through __float__.
    if obj.hasattr("__index__")?
        && let Ok(i) = obj.extract::<i64>()
    {
        return Ok(toml::Value::Integer(i));
    }
    if obj.hasattr("__float__")?
        && !obj.hasattr("__len__")?
        && let Ok(x) = obj.extract::<f64>()
    {
        return Ok(toml::Value::Float(x));
    }
    Err(GanglionError::new_err(format!(
        "key `{key}`: a value of type {} has no TOML form (use str, int, float, bool, list or dict)",
        type_name(obj)
    )))
}

fn type_name(obj: &Bound<'_, PyAny>) -> String {
    obj.get_type()
        .name()
        .map(|n| n.to_string())
        .unwrap_or_else(|_| "?".into())
}

/// Where a study came from: a file, or text with a folder against which a
/// relative network path resolves.
enum Source {
    File(PathBuf),
    Text {
        text: String,
        label: String,
        base_dir: PathBuf,
    },
}

impl Source {
    fn new(kind: &str, value: String, label: String, base_dir: PathBuf) -> PyResult<Source> {
        match kind {
            "path" => Ok(Source::File(PathBuf::from(value))),
            "text" => Ok(Source::Text {
                text: value,
                label,
                base_dir,
            }),
            other => Err(PyValueError::new_err(format!(
                "study kind {other:?}: use \"path\" or \"text\""
            ))),
        }
    }

    /// The path against whose folder the network path resolves: the study
    /// file, or a name inside `base_dir` for text.
    fn study_path(&self) -> PathBuf {
        match self {
            Source::File(p) => p.clone(),
            Source::Text {
                label, base_dir, ..
            } => base_dir.join(label),
        }
    }

    fn read_study(&self) -> Result<Study, StudyInputError> {
        match self {
            Source::File(p) => io::study::read_study(p),
            Source::Text { text, .. } => {
                Study::parse(text).map_err(|errors| StudyInputError::Refused {
                    path: self.label_path(),
                    errors,
                })
            }
        }
    }

    fn label_path(&self) -> PathBuf {
        match self {
            Source::File(p) => p.clone(),
            Source::Text { label, .. } => PathBuf::from(label),
        }
    }

    fn text(&self) -> PyResult<String> {
        match self {
            Source::File(p) => std::fs::read_to_string(p).map_err(|e| {
                GanglionError::new_err(format!(
                    "cannot read study {}\n  caused by: {e}",
                    p.display()
                ))
            }),
            Source::Text { text, .. } => Ok(text.clone()),
        }
    }

    /// For a study given as text, where its network path came from (the
    /// line of the `network` key in the text and the base folder).
    fn text_origin(&self, study: &Study) -> Option<String> {
        let Source::Text {
            text,
            label,
            base_dir,
        } = self
        else {
            return None;
        };
        let line = text
            .lines()
            .position(|l| {
                l.split_once('=')
                    .is_some_and(|(k, _)| k.trim().trim_matches('"') == "network")
            })
            .map(|i| i + 1);
        let at = match line {
            Some(l) => format!("{label}:{l}"),
            None => label.clone(),
        };
        Some(if Path::new(&study.network).is_absolute() {
            format!(" (network = \"{}\" at {at})", study.network)
        } else {
            format!(
                " (network = \"{}\" at {at}; a relative path in a study given as text or a \
                 dict is taken relative to base_dir, {})",
                study.network,
                base_dir.display()
            )
        })
    }
}

/// The network of a study, with its hash and warnings.
fn study_network(source: &Source, study: &Study) -> PyResult<(Network, String, Vec<String>)> {
    match io::study::study_network(&source.study_path(), study, 0) {
        Ok(n) => Ok((n.network, n.hash, n.warnings)),
        Err(mut e) => {
            if let Some(o) = source.text_origin(study) {
                match &mut e {
                    StudyInputError::Network { origin, .. }
                    | StudyInputError::Generate { origin, .. } => *origin = o,
                    _ => {}
                }
            }
            Err(ganglion_err(&e))
        }
    }
}

/// Options of the result files, as the binary's `run` flags.
struct FileOptions {
    output: PathBuf,
    png: bool,
    vtk: bool,
    vtk_ascii: bool,
    table_points: usize,
    table_units: String,
    overwrite: bool,
}

/// Runs a study. `kind` is "path" (value is a study file) or "text" (value
/// is TOML text, named `label` in errors, its relative network path
/// resolved against `base_dir`). With `output`, writes the files of
/// `ganglion run` there. Returns the pieces the Python side assembles.
#[pyfunction]
#[pyo3(signature = (kind, value, label, base_dir, network=None, progress=None, output=None, png=true, vtk=true, vtk_ascii=false, table_points=21, table_units="bar".to_string(), threads=None, overwrite=false))]
#[allow(clippy::too_many_arguments)] // one per Python keyword argument
fn run_study_raw<'py>(
    py: Python<'py>,
    kind: &str,
    value: String,
    label: String,
    base_dir: PathBuf,
    network: Option<PyRef<'py, NetworkHandle>>,
    progress: Option<Py<PyAny>>,
    output: Option<PathBuf>,
    png: bool,
    vtk: bool,
    vtk_ascii: bool,
    table_points: usize,
    table_units: String,
    threads: Option<usize>,
    overwrite: bool,
) -> PyResult<Bound<'py, PyDict>> {
    let files = match output {
        Some(output) => {
            if table_points < 2 {
                return Err(GanglionError::new_err(format!(
                    "table_points {table_points}: must be at least 2"
                )));
            }
            Some(FileOptions {
                output,
                png,
                vtk,
                vtk_ascii,
                table_points,
                table_units,
                overwrite,
            })
        }
        None => None,
    };
    let units = match &files {
        Some(f) => Some(
            network_report::saturation_tables::TableUnits::parse(&f.table_units).ok_or_else(
                || {
                    GanglionError::new_err(format!(
                        "{:?} is not a table unit: use bar, kpa or psi",
                        f.table_units
                    ))
                },
            )?,
        ),
        None => None,
    };
    let source = Source::new(kind, value, label, base_dir)?;
    let study = py
        .detach(|| source.read_study())
        .map_err(|e| ganglion_err(&e))?;
    // The output folder is refused before the run is spent on it, as by
    // the binary (a folder of other files; our set without `overwrite`).
    if let Some(f) = &files {
        result_set::check_target(&f.output, f.overwrite).map_err(|e| {
            ganglion_err_ctx(
                format!("cannot write results to {}", f.output.display()),
                &e,
            )
        })?;
    }
    // A network given from Python is borrowed, not copied.
    let loaded;
    let (net, hash, net_warnings): (&Network, String, Vec<String>) = match network.as_deref() {
        Some(n) => (&n.network, n.hash.clone(), n.warnings.clone()),
        None => {
            loaded = py.detach(|| study_network(&source, &study))?;
            (&loaded.0, loaded.1.clone(), loaded.2.clone())
        }
    };
    let reporter = PyProgress::new(progress);
    let results = py.detach(|| {
        on_threads(threads, || {
            let mut r = run_study(net, &study, &reporter);
            r.network.hash = hash;
            r
        })
    })?;
    reporter.take_error()?;
    if let (Some(f), Some(units)) = (&files, units) {
        py.detach(|| -> PyResult<()> {
            let opts = network_report::ArtifactOptions {
                png: f.png,
                vtk: f.vtk,
                vtk_encoding: if f.vtk_ascii {
                    network_report::vtk::VtkEncoding::Ascii
                } else {
                    network_report::vtk::VtkEncoding::Binary
                },
                table_points: f.table_points,
                table_units: units,
            };
            let set = StagedSet::begin(&f.output, "run", f.overwrite).map_err(|e| {
                ganglion_err_ctx(
                    format!("cannot write results to {}", f.output.display()),
                    &e,
                )
            })?;
            network_report::write_run_set(&results, net, set, &opts).map_err(|e| {
                ganglion_err_ctx(
                    format!("cannot write results to {}", f.output.display()),
                    &e,
                )
            })?;
            Ok(())
        })?;
    }
    run_to_dict(py, &results, net, net_warnings)
}

fn f64s<'py>(py: Python<'py>, v: Vec<f64>) -> Bound<'py, PyArray1<f64>> {
    v.into_pyarray(py)
}

fn run_to_dict<'py>(
    py: Python<'py>,
    r: &RunResults,
    net: &Network,
    net_warnings: Vec<String>,
) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new(py);
    let summary = serde_json::to_string(r).map_err(|e| ganglion_err(&e))?;
    d.set_item("summary_json", summary)?;
    d.set_item("network_warnings", net_warnings)?;
    d.set_item("n_pores", net.n_pores())?;
    d.set_item("n_throats", net.n_throats())?;
    let procs = PyList::empty(py);
    for (i, o) in r.outcomes.iter().enumerate() {
        let p = PyDict::new(py);
        p.set_item("kind", o.kind.as_str())?;
        let col = |f: &dyn Fn(&network_core::run::process::Point) -> f64| -> Vec<f64> {
            o.points.iter().map(f).collect()
        };
        let nan = f64::NAN;
        p.set_item("pc_pa", f64s(py, col(&|x| x.pc_pa)))?;
        p.set_item("sw", f64s(py, col(&|x| x.saturation.sw)))?;
        p.set_item("sn", f64s(py, col(&|x| x.saturation.sn)))?;
        p.set_item("sn_trapped", f64s(py, col(&|x| x.saturation.sn_trapped)))?;
        p.set_item("sw_trapped", f64s(py, col(&|x| x.saturation.sw_trapped)))?;
        p.set_item("sw_corners", f64s(py, col(&|x| x.saturation.sw_corners)))?;
        p.set_item("sn_layers", f64s(py, col(&|x| x.saturation.sn_layers)))?;
        p.set_item(
            "krw",
            f64s(py, col(&|x| x.flow.as_ref().map_or(nan, |f| f.krw))),
        )?;
        p.set_item(
            "krn",
            f64s(py, col(&|x| x.flow.as_ref().map_or(nan, |f| f.krn))),
        )?;
        p.set_item(
            "ri",
            f64s(py, col(&|x| x.flow.as_ref().map_or(nan, |f| f.ri))),
        )?;
        let events: Vec<i64> = o.points.iter().map(|x| x.events as i64).collect();
        p.set_item("events", events.into_pyarray(py))?;
        p.set_item("final_pc_pa", o.final_pc_pa)?;
        p.set_item("breakthrough_pc_pa", o.breakthrough_pc_pa)?;
        p.set_item("target_unreached", o.target_unreached)?;
        // Saturation profiles: one row per recorded point, one column per
        // slab along the flow axis.
        if let Some(profiles) = r.profiles.get(i) {
            let n_slabs = profiles.first().map_or(0, |x| x.slab_sw.len());
            let rows = profiles.len();
            let mut sw = Vec::with_capacity(rows * n_slabs);
            let mut snt = Vec::with_capacity(rows * n_slabs);
            let mut ragged = false;
            for pp in profiles {
                ragged |= pp.slab_sw.len() != n_slabs || pp.slab_sn_trapped.len() != n_slabs;
                sw.extend_from_slice(&pp.slab_sw);
                snt.extend_from_slice(&pp.slab_sn_trapped);
            }
            if !ragged {
                let shape = (rows, n_slabs);
                let a = Array2::from_shape_vec(shape, sw).map_err(|e| ganglion_err(&e))?;
                let b = Array2::from_shape_vec(shape, snt).map_err(|e| ganglion_err(&e))?;
                p.set_item("profile_sw", a.into_pyarray(py))?;
                p.set_item("profile_sn_trapped", b.into_pyarray(py))?;
            }
        }
        // End state of the process, per element (pores first, then
        // throats).
        if let Some(s) = r.end_states.get(i) {
            p.set_item("oil", s.oil.clone().into_pyarray(py))?;
            p.set_item("layers", s.layers.clone().into_pyarray(py))?;
            let g: Vec<i64> = s
                .ganglion
                .iter()
                .map(|&g| if g == u32::MAX { -1 } else { g as i64 })
                .collect();
            p.set_item("ganglion", g.into_pyarray(py))?;
            p.set_item("water_trapped", s.water_trapped.clone().into_pyarray(py))?;
            p.set_item(
                "water_saturation",
                s.water_saturation.clone().into_pyarray(py),
            )?;
            match &s.water_pressure {
                Some(w) => p.set_item("water_pressure", PyArray1::from_slice(py, w))?,
                None => p.set_item("water_pressure", py.None())?,
            }
        }
        procs.append(p)?;
    }
    d.set_item("processes", procs)?;
    if let Some(layout) = &r.profile_layout {
        d.set_item(
            "slab_edges_m",
            PyArray1::from_slice(py, &layout.slab_edges_m),
        )?;
    }
    let g = PyDict::new(py);
    let ids: Vec<i64> = r.ganglia.iter().map(|x| x.id as i64).collect();
    let vols: Vec<f64> = r.ganglia.iter().map(|x| x.volume_m3).collect();
    let pores: Vec<i64> = r.ganglia.iter().map(|x| x.pores as i64).collect();
    let throats: Vec<i64> = r.ganglia.iter().map(|x| x.throats as i64).collect();
    let bbox: Vec<f64> = r.ganglia.iter().flat_map(|x| x.bbox_m).collect();
    g.set_item("id", ids.into_pyarray(py))?;
    g.set_item("volume_m3", vols.into_pyarray(py))?;
    g.set_item("pores", pores.into_pyarray(py))?;
    g.set_item("throats", throats.into_pyarray(py))?;
    let bbox = Array2::from_shape_vec((r.ganglia.len(), 6), bbox).map_err(|e| ganglion_err(&e))?;
    g.set_item("bbox_m", bbox.into_pyarray(py))?;
    d.set_item("ganglia", g)?;
    Ok(d)
}

/// Runs a sweep into `output` (resuming finished cases) and merges it,
/// writing the files of `ganglion sweep`. Returns the summary and case
/// results as JSON text and the numbers of missing cases.
#[pyfunction]
#[pyo3(signature = (kind, value, label, base_dir, output, progress=None, threads=None))]
#[allow(clippy::too_many_arguments)] // one per Python keyword argument
fn run_sweep_raw<'py>(
    py: Python<'py>,
    kind: &str,
    value: String,
    label: String,
    base_dir: PathBuf,
    output: PathBuf,
    progress: Option<Py<PyAny>>,
    threads: Option<usize>,
) -> PyResult<Bound<'py, PyDict>> {
    let source = Source::new(kind, value, label, base_dir)?;
    let text = source.text()?;
    let name = source.label_path();
    let sweep = SweepStudy::parse(&text).map_err(|e| {
        let lines: Vec<String> =
            e.0.iter()
                .map(|x| format!("{}: {x}", name.display()))
                .collect();
        GanglionError::new_err(format!("the sweep was refused:\n  {}", lines.join("\n  ")))
    })?;
    let study_path = source.study_path();
    // For a study given as text or a dict, the cases would name their
    // network's folder as that of a study file; check the first case's
    // network here, where the message can say it came from base_dir.
    if matches!(source, Source::Text { .. })
        && let Some(first) = sweep.cases().first()
    {
        let study = first.study();
        py.detach(|| study_network(&source, &study).map(|_| ()))?;
    }
    let reporter = PyProgress::new(progress);
    let collected = py.detach(|| -> PyResult<network_core::sweep::Collected> {
        let prepared = SweepRun::prepare(&study_path, &sweep, &output)
            .map_err(|e| ganglion_err_ctx(format!("cannot prepare {}", output.display()), &e))?;
        on_threads(threads, || prepared.run_unfinished(&reporter))?
            .map_err(|e| ganglion_err(&e))?;
        let c = network_core::sweep::collect(&output).map_err(|e| ganglion_err(&e))?;
        let title = network_report::sweep_title(&c.results);
        network_report::write_sweep_set(&title, &c.summary, &c.results, &output, true).map_err(
            |e| {
                ganglion_err_ctx(
                    format!("cannot write the sweep results to {}", output.display()),
                    &e,
                )
            },
        )?;
        Ok(c)
    })?;
    reporter.take_error()?;
    let d = PyDict::new(py);
    d.set_item(
        "summary_json",
        serde_json::to_string(&collected.summary).map_err(|e| ganglion_err(&e))?,
    )?;
    d.set_item(
        "cases_json",
        serde_json::to_string(&collected.results).map_err(|e| ganglion_err(&e))?,
    )?;
    d.set_item("missing", collected.missing)?;
    Ok(d)
}

/// Version of the library the extension was built from.
#[pyfunction]
fn version() -> &'static str {
    env!("CARGO_PKG_VERSION")
}

/// The compiled module.
#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("GanglionError", m.py().get_type::<GanglionError>())?;
    m.add_class::<NetworkHandle>()?;
    m.add_function(wrap_pyfunction!(load_network, m)?)?;
    m.add_function(wrap_pyfunction!(generate_network, m)?)?;
    m.add_function(wrap_pyfunction!(dict_to_toml, m)?)?;
    m.add_function(wrap_pyfunction!(run_study_raw, m)?)?;
    m.add_function(wrap_pyfunction!(run_sweep_raw, m)?)?;
    m.add_function(wrap_pyfunction!(version, m)?)?;
    Ok(())
}
