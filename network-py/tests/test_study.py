"""Running studies: a path, TOML text and a dict give the same results,
the arrays are the numbers the binary writes, and the written files are the
binary's byte for byte (API equivalence)."""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import numpy as np
import pytest

import ganglion
from conftest import SAMPLES, STUDIES, TINY_DICT, TINY_STUDY, run_cli, tree_bytes

CURVE_FIELDS = (
    "pc_pa sw sn sn_trapped sw_trapped sw_corners sn_layers krw krn ri"
).split()


def same_arrays(a: np.ndarray, b: np.ndarray) -> bool:
    return a.dtype == b.dtype and a.shape == b.shape and np.array_equal(a, b, equal_nan=True)


def assert_same_results(a: ganglion.RunResult, b: ganglion.RunResult) -> None:
    assert a.summary == b.summary
    assert len(a.processes) == len(b.processes)
    for p, q in zip(a.processes, b.processes):
        for f in CURVE_FIELDS + ["events"]:
            assert same_arrays(getattr(p, f), getattr(q, f)), (p.kind, f)
        assert same_arrays(p.profile_sw, q.profile_sw)
    for s, t in zip(a.end_states, b.end_states):
        for f in ("oil", "layers", "ganglion", "water_trapped", "water_saturation"):
            assert same_arrays(getattr(s, f), getattr(t, f)), f
    for f in ("id", "volume_m3", "pores", "throats", "bbox_m"):
        assert same_arrays(getattr(a.ganglia, f), getattr(b.ganglia, f)), f


def test_path_text_and_dict_give_identical_results(tiny_study_file: Path) -> None:
    base = tiny_study_file.parent
    from_path = ganglion.run_study(tiny_study_file)
    from_pathlike_str = ganglion.run_study(str(tiny_study_file))
    from_text = ganglion.run_study(TINY_STUDY, base_dir=base)
    from_dict = ganglion.run_study(TINY_DICT, base_dir=base)
    assert_same_results(from_path, from_pathlike_str)
    assert_same_results(from_path, from_text)
    assert_same_results(from_path, from_dict)
    # The network given already loaded gives the same again.
    net = ganglion.load_network(SAMPLES / "tiny-lattice")
    assert_same_results(from_path, ganglion.run_study(TINY_DICT, network=net))


def test_dict_is_the_study_text_when_tomllib_reads_it() -> None:
    tomllib = pytest.importorskip("tomllib")
    as_lists = dict(TINY_DICT)
    as_lists["wettability"] = {k: list(v) for k, v in TINY_DICT["wettability"].items()}
    assert tomllib.loads(TINY_STUDY) == as_lists
    assert tomllib.loads(ganglion.study_to_toml(TINY_DICT)) == as_lists


def test_element_water_saturations_add_up_to_the_process_saturation(
    tiny_study_file: Path,
) -> None:
    r = ganglion.run_study(tiny_study_file)
    net = ganglion.load_network(tiny_study_file.parent / "tiny-lattice")
    pores, throats = net.pores(), net.throats()
    # Each element's pore volume is its volume plus its clay (the engine's
    # definition of saturation, network_core::engine::saturation).
    pv = np.concatenate([
        pores["volume_m3"] + pores["clay_volume_m3"],
        throats["volume_m3"] + throats["clay_volume_m3"],
    ])
    for e, p in zip(r.end_states, r.processes):
        sw = e.water_saturation
        assert sw.dtype == np.float32 and sw.shape == pv.shape
        assert np.all((sw >= 0.0) & (sw <= 1.0))
        # Water-filled centres without layers hold water only.
        assert np.all(sw[~e.oil & (e.layers == 0)] == 1.0)
        # The pore-volume-weighted mean is the process's final Sw, up to
        # the single precision of the per-element values (2^-24 relative).
        mean = float(np.dot(sw.astype(np.float64), pv) / pv.sum())
        assert abs(mean - p.sw[-1]) < 1e-6, (p.kind, mean, p.sw[-1])


def test_relative_network_of_text_resolves_against_cwd_by_default(
    tiny_study_file: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.chdir(tiny_study_file.parent)
    a = ganglion.run_study(TINY_STUDY)
    b = ganglion.run_study(tiny_study_file)
    assert a.summary == b.summary


def test_arrays_have_documented_shapes_and_dtypes(tiny_study_file: Path) -> None:
    r = ganglion.run_study(tiny_study_file)
    assert [p.kind for p in r.processes] == [
        s["kind"] for s in r.summary["processes"]
    ]
    n_elements = r.n_pores + r.n_throats
    for p, s in zip(r.processes, r.summary["processes"]):
        n = s["points"]
        for f in CURVE_FIELDS:
            a = getattr(p, f)
            assert isinstance(a, np.ndarray) and a.dtype == np.float64 and a.shape == (n,), f
        assert p.events.dtype == np.int64 and p.events.shape == (n,)
        assert p.profile_sw is not None and p.profile_sw.shape[0] == n
        assert p.profile_sw.shape[1] + 1 == r.slab_edges_m.shape[0]
        # sn is 1 - sw by definition (network_core::engine::Saturation).
        np.testing.assert_allclose(p.sn, 1.0 - p.sw, rtol=0, atol=1e-12)
        assert p.final_pc_pa == s["final_pc_pa"]
        # kr where computed: as many finite krw as the process asked for
        # points with kr, at most.
        assert np.isfinite(p.krw).sum() >= 1
    assert len(r.end_states) == len(r.processes)
    for e in r.end_states:
        assert e.oil.dtype == np.bool_ and e.oil.shape == (n_elements,)
        assert e.layers.dtype == np.uint8 and e.layers.shape == (n_elements,)
        assert e.ganglion.dtype == np.int64 and e.ganglion.shape == (n_elements,)
        assert e.water_trapped.dtype == np.bool_ and e.water_trapped.shape == (n_elements,)
        assert e.water_saturation.dtype == np.float32
        assert e.water_saturation.shape == (n_elements,)
        assert e.water_pressure is not None and e.water_pressure.shape == (r.n_pores,)
    g = r.ganglia
    assert g.bbox_m.shape == (len(g), 6) and g.bbox_m.dtype == np.float64
    assert g.id.dtype == np.int64
    # The ganglia are the trapped ones of the first imbibition's end state:
    # as many ids there (elements marked with a ganglion) as rows here.
    imb = r.processes.index(next(p for p in r.processes if p.kind == "imbibition"))
    marked = r.end_states[imb].ganglion
    assert len(g) == r.summary["ganglion_stats"]["count"]
    assert len(g) == len(np.unique(marked[marked >= 0]))
    assert r.sni == r.summary["sni"] and r.snr == r.summary["snr"]
    frame = g.to_dict()
    assert set(frame) >= {"id", "volume_m3", "x_min_m", "z_max_m"}


def test_arrays_equal_the_curves_csv_of_the_binary(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    out = tmp_path / "cli"
    run_cli(ganglion_bin, "run", str(tiny_study_file), "-o", str(out), "--no-png", "--no-vtk")
    r = ganglion.run_study(tiny_study_file)
    rows = list(csv.DictReader(io.StringIO((out / "curves.csv").read_text())))
    for i, p in enumerate(r.processes):
        # curves.csv numbers processes from 1.
        mine = [row for row in rows if int(row["process"]) == i + 1]
        assert len(mine) == p.sw.shape[0]
        for f in CURVE_FIELDS:
            col = np.array(
                [float(row[f]) if row[f] != "" else math.nan for row in mine], dtype=np.float64
            )
            assert same_arrays(col, getattr(p, f)), (i, f)


def test_output_folder_is_byte_identical_to_the_binary(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    cli = tmp_path / "cli"
    py = tmp_path / "py"
    run_cli(ganglion_bin, "run", str(tiny_study_file), "-o", str(cli))
    r = ganglion.run_study(tiny_study_file, output=py)
    assert r.output == py
    a, b = tree_bytes(cli), tree_bytes(py)
    assert sorted(a) == sorted(b)
    assert "summary.json" in a and "report.html" in a
    for name in a:
        assert a[name] == b[name], name


def test_output_options_are_the_binary_flags(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    cli = tmp_path / "cli"
    py = tmp_path / "py"
    run_cli(
        ganglion_bin, "run", str(tiny_study_file), "-o", str(cli),
        "--no-png", "--no-vtk", "--table-points", "11", "--table-units", "psi",
    )
    ganglion.run_study(
        tiny_study_file, output=py, png=False, vtk=False, table_points=11, table_units="psi"
    )
    assert tree_bytes(cli) == tree_bytes(py)
    assert not any(n.endswith(".png") or n.endswith(".vtp") for n in tree_bytes(py))


def test_vtk_ascii_is_the_binary_flag(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    cli = tmp_path / "cli"
    py = tmp_path / "py"
    run_cli(ganglion_bin, "run", str(tiny_study_file), "-o", str(cli), "--no-png", "--vtk-ascii")
    ganglion.run_study(tiny_study_file, output=py, png=False, vtk_ascii=True)
    a, b = tree_bytes(cli), tree_bytes(py)
    assert a == b
    vtps = [n for n in b if n.endswith(".vtp")]
    assert vtps and all(b'format="ascii"' in b[n] for n in vtps)
    assert not any(b"<AppendedData" in b[n] for n in vtps)


def test_summary_equals_the_written_summary_json(tiny_study_file: Path, tmp_path: Path) -> None:
    import json

    r = ganglion.run_study(tiny_study_file, output=tmp_path / "o", png=False, vtk=False)
    assert r.summary == json.loads((tmp_path / "o" / "summary.json").read_text())


def test_demo_study_runs_as_the_binary(tmp_path: Path, ganglion_bin: Path) -> None:
    study = STUDIES / "kestrel-waterflood.toml"
    cli = tmp_path / "cli"
    run_cli(ganglion_bin, "run", str(study), "-o", str(cli), "--no-png", "--no-vtk")
    r = ganglion.run_study(study, output=tmp_path / "py", png=False, vtk=False)
    assert tree_bytes(cli) == tree_bytes(tmp_path / "py")
    assert r.processes[0].kro is r.processes[0].krn


def test_one_and_two_threads_give_the_same_bits(tiny_study_file: Path) -> None:
    # DEVELOPERS.md: serial and parallel runs match bit for bit.
    one = ganglion.run_study(tiny_study_file, threads=1)
    two = ganglion.run_study(tiny_study_file, threads=2)
    assert_same_results(one, two)
    with pytest.raises(ganglion.GanglionError, match="at least 1"):
        ganglion.run_study(tiny_study_file, threads=0)


def test_a_second_run_into_the_same_folder_needs_overwrite(
    tiny_study_file: Path, tmp_path: Path
) -> None:
    out = tmp_path / "o"
    ganglion.run_study(tiny_study_file, output=out, png=False, vtk=False)
    assert (out / "ganglion-manifest.json").is_file()
    with pytest.raises(ganglion.GanglionError, match="overwrite"):
        ganglion.run_study(tiny_study_file, output=out, png=False, vtk=False)
    # Replacing the set leaves no file of the earlier one: this run writes
    # the VTK end states, then one without them removes them all.
    ganglion.run_study(tiny_study_file, output=out, png=False, overwrite=True)
    assert any(p.suffix == ".vtp" for p in out.rglob("*"))
    ganglion.run_study(tiny_study_file, output=out, png=False, vtk=False, overwrite=True)
    assert not any(p.suffix == ".vtp" for p in out.rglob("*"))


def test_a_folder_of_other_files_is_refused_before_the_run(
    tiny_study_file: Path, tmp_path: Path
) -> None:
    out = tmp_path / "thesis"
    out.mkdir()
    (out / "chapter1.tex").write_text("keep me")
    with pytest.raises(ganglion.GanglionError, match="not ours"):
        ganglion.run_study(tiny_study_file, output=out, overwrite=True)
    assert [p.name for p in out.iterdir()] == ["chapter1.tex"]
