"""Ganglion from Python: pore networks, studies and sweeps of two-phase flow.

The package calls the same library as the ``ganglion`` binary, so numbers
and written files are the binary's, bit for bit. Results are model
estimates of a quasi-static pore-network model, not measurements.

Quick start::

    import ganglion
    net = ganglion.load_network("sample-networks/tiny-lattice")
    print(net.inspect()["porosity"])
    result = ganglion.run_study("studies/kestrel-waterflood.toml")
    drainage = result.processes[0]
    print(drainage.sw, drainage.pc_pa)

Study input (``run_study``, ``run_sweep``):

- a :class:`pathlib.Path` (or any ``os.PathLike``) is a study file;
- a ``str`` holding a line break or ``=`` is TOML text; any other ``str``
  is a study file path;
- a ``dict`` is the study's tables and keys (nested dicts for tables, a
  list of dicts for ``[[process]]``); a ``None`` value counts as a missing
  key.

A relative ``network`` path in a study file resolves against the file's
folder, as in the binary. In a study given as text or a dict it resolves
against ``base_dir`` (default: the current working directory).

Errors: bad input raises :class:`GanglionError` (a ``ValueError``) with the
message the binary prints (file, line, key and value where known); an
argument of the wrong Python type raises ``TypeError``. The warnings the
binary prints on standard error are issued as :class:`GanglionWarning`
(filter them with the ``warnings`` module) and kept on the results.

Long calls release the interpreter lock. A ``progress`` callback is called
as ``progress(stage, done, total)`` at the start and end of each stage and
at most ten times a second in between (``total`` is 0 when unknown); an
exception it raises is re-raised when the call returns (a run cannot be
stopped half-way).
"""

from __future__ import annotations

import json
import os
import tempfile
import warnings as _warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Dict, List, Mapping, Optional, Tuple, Union

import numpy as np

from . import _core
from ._core import GanglionError

__all__ = [
    "GanglionError",
    "GanglionWarning",
    "Network",
    "ProcessCurve",
    "EndState",
    "Ganglia",
    "RunResult",
    "SweepResult",
    "load_network",
    "generate_network",
    "run_study",
    "run_sweep",
    "study_to_toml",
    "__version__",
]

__version__: str = _core.version()


class GanglionWarning(UserWarning):
    """An input that probably does not say what was meant, a model limit, or
    a suspicious feature of the network files: the warnings the binary
    prints on standard error. They are also kept on the results
    (``RunResult.warnings``, ``Network.warnings``)."""


def _emit(messages: List[str]) -> None:
    for m in messages:
        _warnings.warn(m, GanglionWarning, stacklevel=3)

#: ``progress(stage, done, total)``.
ProgressCallback = Callable[[str, int, int], Any]
#: A study file path, TOML text or a dict of tables and keys.
StudyInput = Union[str, "os.PathLike[str]", Mapping[str, Any]]


def _check_progress(progress: Optional[ProgressCallback]) -> None:
    if progress is not None and not callable(progress):
        raise TypeError(
            f"progress must be callable as progress(stage, done, total), "
            f"not {type(progress).__name__}"
        )


def _looks_like_text(s: str) -> bool:
    return "\n" in s or "=" in s


def study_to_toml(study: Mapping[str, Any]) -> str:
    """The TOML text of a study (or generator) given as a dict.

    Nested dicts become tables and lists of dicts arrays of tables
    (``[[process]]``); ``None`` values are left out. A value with no TOML
    form raises :class:`GanglionError` naming its dotted key.
    """
    if not isinstance(study, Mapping):
        raise TypeError(f"study must be a dict, not {type(study).__name__}")
    return _core.dict_to_toml(dict(study))


def _study_source(
    study: StudyInput, base_dir: Union[str, "os.PathLike[str]", None]
) -> Tuple[str, str, str, str]:
    """(kind, value, label, base_dir) for the compiled functions."""
    base = os.fspath(base_dir) if base_dir is not None else os.getcwd()
    if isinstance(study, Mapping):
        return "text", study_to_toml(study), "<study dict>", base
    if isinstance(study, os.PathLike) or (
        isinstance(study, str) and not _looks_like_text(study)
    ):
        if base_dir is not None:
            raise ValueError(
                "base_dir applies to a study given as TOML text or a dict; a study "
                "file's relative network path resolves against the file's folder"
            )
        return "path", os.fspath(study), os.fspath(study), base
    if isinstance(study, str):
        return "text", study, "<study text>", base
    raise TypeError(
        "study must be a study file path, TOML text or a dict, "
        f"not {type(study).__name__}"
    )


class Network:
    """A pore network: immutable, loaded from files or generated.

    Elements (pores and throats) share one index space in results: pores are
    ``0 .. n_pores-1`` and throats follow.
    """

    __slots__ = ("_handle",)

    def __init__(self, handle: "_core.NetworkHandle") -> None:
        if not isinstance(handle, _core.NetworkHandle):
            raise TypeError(
                "use ganglion.load_network or ganglion.generate_network to make a Network"
            )
        self._handle = handle

    @property
    def name(self) -> str:
        """Network name."""
        return self._handle.name

    @property
    def n_pores(self) -> int:
        """Number of pores."""
        return self._handle.n_pores

    @property
    def n_throats(self) -> int:
        """Number of throats."""
        return self._handle.n_throats

    @property
    def hash(self) -> str:
        """Content hash (16 hex digits), as echoed in ``summary.json``."""
        return self._handle.hash

    @property
    def warnings(self) -> List[str]:
        """Warnings met while reading the network files."""
        return self._handle.warnings

    @property
    def source(self) -> str:
        """Where the network came from."""
        return self._handle.source

    def inspect(self) -> Dict[str, Any]:
        """The report of ``ganglion inspect --json``, as a dict.

        Counts, porosity, pore volume, coordination histogram, connectivity,
        radius / shape-factor / volume statistics of pores and throats (SI
        units) and the reading warnings.
        """
        report: Dict[str, Any] = json.loads(self._handle.inspect_json())
        return report

    def pores(self) -> Dict[str, Any]:
        """Pore columns: ``x_m``, ``y_m``, ``z_m``, ``radius_m``,
        ``shape_factor``, ``volume_m3``, ``clay_volume_m3`` (float64 arrays)
        and ``boundary`` (list of str, as in ``pores.csv``: ``"inlet"``,
        ``"outlet"`` or ``""``), ready for ``pandas.DataFrame``."""
        return self._handle.pore_columns()

    def throats(self) -> Dict[str, np.ndarray]:
        """Throat columns: ``pore_1``, ``pore_2`` (int64 pore indices),
        ``radius_m``, ``shape_factor``, ``volume_m3``, ``clay_volume_m3``,
        ``length_m`` (float64)."""
        return self._handle.throat_columns()

    def write_csv(self, path: Union[str, "os.PathLike[str]"]) -> None:
        """Writes the network as a CSV folder (created if missing)."""
        self._handle.write_csv(os.fspath(path))

    def write_gnet(self, path: Union[str, "os.PathLike[str]"]) -> None:
        """Writes the network as a binary ``.gnet`` file."""
        self._handle.write_gnet(os.fspath(path))

    def __repr__(self) -> str:
        return (
            f"Network(name={self.name!r}, n_pores={self.n_pores}, "
            f"n_throats={self.n_throats}, hash={self.hash!r})"
        )


def load_network(path: Union[str, "os.PathLike[str]"]) -> Network:
    """Loads a network: a CSV folder or a binary ``.gnet`` file.

    Raises :class:`GanglionError` for a missing path or invalid files (every
    problem with file, line and column).
    """
    if not isinstance(path, (str, os.PathLike)):
        raise TypeError(f"path must be str or os.PathLike, not {type(path).__name__}")
    net = Network(_core.load_network(os.fspath(path)))
    _emit(net.warnings)
    return net


def generate_network(
    params: Union[str, "os.PathLike[str]", Mapping[str, Any]],
    *,
    progress: Optional[ProgressCallback] = None,
) -> Network:
    """Generates a lattice network from generator parameters.

    ``params`` is a generator file path, TOML text (a ``str`` with a line
    break or ``=``) or a dict of its keys (``ganglion template generator``
    lists them; missing keys take their defaults). The same parameters and
    seed give the same network, bit for bit.
    """
    _check_progress(progress)
    if isinstance(params, Mapping):
        return Network(
            _core.generate_network("text", study_to_toml(params), "<generator dict>", progress)
        )
    if isinstance(params, os.PathLike) or (
        isinstance(params, str) and not _looks_like_text(params)
    ):
        p = os.fspath(params)
        return Network(_core.generate_network("path", p, p, progress))
    if isinstance(params, str):
        return Network(_core.generate_network("text", params, "<generator text>", progress))
    raise TypeError(
        "params must be a generator file path, TOML text or a dict, "
        f"not {type(params).__name__}"
    )


@dataclass(frozen=True)
class ProcessCurve:
    """The recorded points of one process, one array entry per point (the
    first point is the starting state). Saturations are fractions of the pore
    volume; ``krw``, ``krn`` and ``ri`` are NaN at points where they were not
    computed."""

    #: ``primary_drainage``, ``imbibition``, ``secondary_drainage``, ...
    kind: str
    #: Capillary pressure, Pa.
    pc_pa: np.ndarray
    #: Water saturation.
    sw: np.ndarray
    #: Non-aqueous saturation, ``1 - sw``.
    sn: np.ndarray
    #: Trapped non-aqueous saturation.
    sn_trapped: np.ndarray
    #: Trapped water saturation.
    sw_trapped: np.ndarray
    #: Water in corners of non-aqueous-filled elements.
    sw_corners: np.ndarray
    #: Non-aqueous phase in layers.
    sn_layers: np.ndarray
    #: Water relative permeability.
    krw: np.ndarray
    #: Non-aqueous relative permeability (``kro`` for oil).
    krn: np.ndarray
    #: Resistivity index ``Rt/Ro`` (inf where water does not span).
    ri: np.ndarray
    #: Events applied since the process started.
    events: np.ndarray
    #: Capillary pressure at the end, Pa.
    final_pc_pa: float
    #: Breakthrough capillary pressure, Pa, if it happened.
    breakthrough_pc_pa: Optional[float]
    #: The saturation target was not reached in the pressure range.
    target_unreached: bool
    #: Water saturation per slab along the flow axis, ``(points, slabs)``.
    profile_sw: Optional[np.ndarray] = None
    #: Trapped non-aqueous saturation per slab, ``(points, slabs)``.
    profile_sn_trapped: Optional[np.ndarray] = None

    @property
    def kro(self) -> np.ndarray:
        """``krn`` under the name used when the non-aqueous phase is oil."""
        return self.krn

    def to_dict(self) -> Dict[str, np.ndarray]:
        """The per-point columns, for ``pandas.DataFrame(curve.to_dict())``."""
        names = (
            "pc_pa sw sn sn_trapped sw_trapped sw_corners sn_layers krw krn ri events"
        ).split()
        return {n: getattr(self, n) for n in names}


@dataclass(frozen=True)
class EndState:
    """Occupancy and water saturation at the end of one process, per element
    (pores first, then throats)."""

    #: Process kind.
    kind: str
    #: The element's centre holds the non-aqueous phase (bool).
    oil: np.ndarray
    #: Oil-layer corner mask per element (uint8, bit k: corner k).
    layers: np.ndarray
    #: Trapped-ganglion id per element (int64, -1: none).
    ganglion: np.ndarray
    #: Water trapped in the element (bool).
    water_trapped: np.ndarray
    #: Water saturation of the element: its water, clay included, over its
    #: pore volume (float32).
    water_saturation: np.ndarray
    #: Water pressure per pore for a unit pressure drop across the sample
    #: (float64, NaN where water does not flow); None without kr solves.
    water_pressure: Optional[np.ndarray]


@dataclass(frozen=True)
class Ganglia:
    """Trapped non-aqueous ganglia at the end of the first imbibition, one
    entry per ganglion."""

    #: Id (0, 1, ... in element order), int64.
    id: np.ndarray
    #: Volume, m3.
    volume_m3: np.ndarray
    #: Pores holding it, int64.
    pores: np.ndarray
    #: Throats holding it, int64.
    throats: np.ndarray
    #: Bounding box ``[x_min, y_min, z_min, x_max, y_max, z_max]``, m,
    #: shape ``(n, 6)``.
    bbox_m: np.ndarray

    def __len__(self) -> int:
        return int(self.id.shape[0])

    def to_dict(self) -> Dict[str, np.ndarray]:
        """Columns for ``pandas.DataFrame`` (the box split in six)."""
        d: Dict[str, np.ndarray] = {
            "id": self.id,
            "volume_m3": self.volume_m3,
            "pores": self.pores,
            "throats": self.throats,
        }
        for k, n in enumerate(("x_min", "y_min", "z_min", "x_max", "y_max", "z_max")):
            d[f"{n}_m"] = self.bbox_m[:, k]
        return d


@dataclass(frozen=True)
class RunResult:
    """Everything a study run gives, as plain Python objects."""

    #: The content of ``summary.json``: inputs echoed, network facts,
    #: per-process summaries, end points, fits, indices, warnings.
    summary: Dict[str, Any]
    #: Recorded curves, one per process.
    processes: List[ProcessCurve]
    #: Occupancy at the end of each process.
    end_states: List[EndState]
    #: Trapped ganglia at the end of the first imbibition.
    ganglia: Ganglia
    #: Slab edges along the flow axis, m (for the profiles).
    slab_edges_m: Optional[np.ndarray]
    #: Warnings met while reading the network files.
    network_warnings: List[str]
    #: Number of pores and throats of the network.
    n_pores: int
    n_throats: int
    #: The folder written, when an output folder was given.
    output: Optional[Path] = None

    @property
    def warnings(self) -> List[str]:
        """Warnings of the run (inputs that probably do not say what was
        meant, model limits)."""
        return list(self.summary.get("warnings", []))

    @property
    def sni(self) -> Optional[float]:
        """Initial non-aqueous saturation (end of primary drainage)."""
        return self.summary.get("sni")

    @property
    def snr(self) -> Optional[float]:
        """Residual (trapped) non-aqueous saturation after the first
        imbibition."""
        return self.summary.get("snr")

    @property
    def end_points(self) -> Dict[str, Any]:
        """End points of the curves (``swi``, ``snr``, ``krw_at_snr``, ...)."""
        return dict(self.summary.get("end_points", {}))


@dataclass(frozen=True)
class SweepResult:
    """A merged sweep: statistics per parameter group and one record per
    finished case."""

    #: The sweep's ``summary.json``: Land fits and trapping curve per group.
    summary: Dict[str, Any]
    #: One dict per finished case (case, Sni, Snr, kr end points, curves).
    cases: List[Dict[str, Any]]
    #: Numbers of cases not finished (failed cases raise instead).
    missing: List[int]
    #: The sweep folder, when one was given.
    output: Optional[Path] = None
    #: Case numbers of ``cases``, int64.
    case_index: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    #: Sni of each case (NaN where missing).
    sni: np.ndarray = field(default_factory=lambda: np.zeros(0))
    #: Snr of each case (NaN where missing).
    snr: np.ndarray = field(default_factory=lambda: np.zeros(0))


def _opt_float(v: Optional[float]) -> float:
    return float("nan") if v is None else float(v)


def _run_result(raw: Dict[str, Any], output: Optional[Path]) -> RunResult:
    processes: List[ProcessCurve] = []
    end_states: List[EndState] = []
    for p in raw["processes"]:
        processes.append(
            ProcessCurve(
                kind=p["kind"],
                pc_pa=p["pc_pa"],
                sw=p["sw"],
                sn=p["sn"],
                sn_trapped=p["sn_trapped"],
                sw_trapped=p["sw_trapped"],
                sw_corners=p["sw_corners"],
                sn_layers=p["sn_layers"],
                krw=p["krw"],
                krn=p["krn"],
                ri=p["ri"],
                events=p["events"],
                final_pc_pa=p["final_pc_pa"],
                breakthrough_pc_pa=p["breakthrough_pc_pa"],
                target_unreached=p["target_unreached"],
                profile_sw=p.get("profile_sw"),
                profile_sn_trapped=p.get("profile_sn_trapped"),
            )
        )
        if "oil" in p:
            end_states.append(
                EndState(
                    kind=p["kind"],
                    oil=p["oil"],
                    layers=p["layers"],
                    ganglion=p["ganglion"],
                    water_trapped=p["water_trapped"],
                    water_saturation=p["water_saturation"],
                    water_pressure=p["water_pressure"],
                )
            )
    g = raw["ganglia"]
    return RunResult(
        summary=json.loads(raw["summary_json"]),
        processes=processes,
        end_states=end_states,
        ganglia=Ganglia(
            id=g["id"],
            volume_m3=g["volume_m3"],
            pores=g["pores"],
            throats=g["throats"],
            bbox_m=g["bbox_m"],
        ),
        slab_edges_m=raw.get("slab_edges_m"),
        network_warnings=list(raw["network_warnings"]),
        n_pores=raw["n_pores"],
        n_throats=raw["n_throats"],
        output=output,
    )


def run_study(
    study: StudyInput,
    *,
    base_dir: Union[str, "os.PathLike[str]", None] = None,
    network: Optional[Network] = None,
    output: Union[str, "os.PathLike[str]", None] = None,
    progress: Optional[ProgressCallback] = None,
    png: bool = True,
    vtk: bool = True,
    vtk_ascii: bool = False,
    table_points: int = 21,
    table_units: str = "bar",
    threads: Optional[int] = None,
    overwrite: bool = False,
) -> RunResult:
    """Runs every process of a study on its network.

    ``study`` is a study file, TOML text or a dict (see the module docs for
    how a ``str`` is read and where relative network paths resolve).
    ``network`` replaces the study's network by one already loaded (its
    hash is echoed in the results). With ``output``, the folder receives the
    files of ``ganglion run`` (byte for byte the binary's); ``png``,
    ``vtk``, ``vtk_ascii``, ``table_points`` and ``table_units`` are the
    binary's ``--no-png``, ``--no-vtk``, ``--vtk-ascii``, ``--table-points``
    and ``--table-units``. Like the binary, the files are written as one
    set (staged beside ``output``, swapped into place, manifest
    ``ganglion-manifest.json``); a folder of other files is refused, and an
    earlier result set is replaced only with ``overwrite=True``.
    ``threads`` is the number of worker threads (default: one per core);
    results are the same bits with any number. ``base_dir`` is refused with
    a study file, whose relative network path resolves against its folder.
    """
    _check_progress(progress)
    if network is not None and not isinstance(network, Network):
        raise TypeError(f"network must be a ganglion.Network, not {type(network).__name__}")
    kind, value, label, base = _study_source(study, base_dir)
    out = None if output is None else Path(os.fspath(output))
    raw = _core.run_study_raw(
        kind,
        value,
        label,
        base,
        network=None if network is None else network._handle,
        progress=progress,
        output=None if out is None else os.fspath(out),
        png=bool(png),
        vtk=bool(vtk),
        vtk_ascii=bool(vtk_ascii),
        table_points=table_points,
        table_units=table_units,
        threads=threads,
        overwrite=bool(overwrite),
    )
    result = _run_result(raw, out)
    _emit(result.network_warnings if network is None else [])
    _emit(result.warnings)
    return result


def run_sweep(
    study: StudyInput,
    output: Union[str, "os.PathLike[str]", None] = None,
    *,
    base_dir: Union[str, "os.PathLike[str]", None] = None,
    progress: Optional[ProgressCallback] = None,
    threads: Optional[int] = None,
) -> SweepResult:
    """Runs every case of a study's ``[sweep]`` in parallel and merges them.

    With ``output``, the folder receives the files of ``ganglion sweep``
    (byte for byte the binary's) and a later call with the same study skips
    the cases already finished there; without it, the cases run in a
    temporary folder removed afterwards. A failed case raises
    :class:`GanglionError` after the others finished (and were kept).
    ``threads`` is the number of cases run at once (default: one per core).
    """
    _check_progress(progress)
    kind, value, label, base = _study_source(study, base_dir)

    def run(folder: str) -> Dict[str, Any]:
        return _core.run_sweep_raw(kind, value, label, base, folder, progress, threads)

    if output is None:
        with tempfile.TemporaryDirectory(prefix="ganglion-sweep-") as tmp:
            raw = run(tmp)
        out = None
    else:
        out = Path(os.fspath(output))
        raw = run(os.fspath(out))
    cases = json.loads(raw["cases_json"])
    return SweepResult(
        summary=json.loads(raw["summary_json"]),
        cases=cases,
        missing=list(raw["missing"]),
        output=out,
        case_index=np.array([c["case"]["index"] for c in cases], dtype=np.int64),
        sni=np.array([_opt_float(c["sni"]) for c in cases], dtype=np.float64),
        snr=np.array([_opt_float(c["snr"]) for c in cases], dtype=np.float64),
    )
