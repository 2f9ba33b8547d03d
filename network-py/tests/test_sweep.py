"""Sweeps from Python: the binary's files byte for byte, the same numbers
from a path, text or a dict, and resume."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np

import ganglion
from conftest import SAMPLES, TINY_DICT, TINY_SWEEP, run_cli, tree_bytes


def sweep_dir(tmp_path: Path) -> Path:
    shutil.copytree(SAMPLES / "tiny-lattice", tmp_path / "tiny-lattice")
    study = tmp_path / "sweep.toml"
    study.write_text(TINY_SWEEP)
    return study


def test_sweep_files_are_the_binary_files(tmp_path: Path, ganglion_bin: Path) -> None:
    study = sweep_dir(tmp_path)
    run_cli(ganglion_bin, "sweep", str(study), "-o", str(tmp_path / "cli"))
    r = ganglion.run_sweep(study, tmp_path / "py")
    a, b = tree_bytes(tmp_path / "cli"), tree_bytes(tmp_path / "py")
    assert sorted(a) == sorted(b)
    for name in a:
        assert a[name] == b[name], name
    assert r.summary == json.loads((tmp_path / "py" / "summary.json").read_text())
    # 2 initial saturations x 2 realisations.
    assert r.summary["cases_total"] == 4 and len(r.cases) == 4 and r.missing == []
    assert r.case_index.tolist() == [0, 1, 2, 3]
    assert r.sni.dtype == np.float64 and r.sni.shape == (4,)
    assert r.snr.tolist() == [c["snr"] for c in r.cases]


def test_sweep_from_text_and_dict_equals_from_path(tmp_path: Path) -> None:
    study = sweep_dir(tmp_path)
    from_path = ganglion.run_sweep(study)
    from_text = ganglion.run_sweep(TINY_SWEEP, base_dir=tmp_path)
    d = {
        **TINY_DICT,
        "title": "tiny lattice sweep (test input)",
        "sweep": {"initial_water_saturations": [0.7, 0.4], "realisations": 2},
    }
    from_dict = ganglion.run_sweep(d, base_dir=tmp_path)
    assert from_path.output is None
    assert from_path.summary == from_text.summary == from_dict.summary
    assert from_path.cases == from_text.cases == from_dict.cases


def test_sweep_resumes_finished_cases(tmp_path: Path) -> None:
    study = sweep_dir(tmp_path)
    out = tmp_path / "out"
    first = ganglion.run_sweep(study, out)
    case0 = out / "cases"
    files = sorted(p.name for p in case0.iterdir())
    assert len(files) == 4
    stamp = {p.name: p.stat().st_mtime_ns for p in case0.iterdir()}
    seen = []
    again = ganglion.run_sweep(study, out, progress=lambda *a: seen.append(a))
    assert again.summary == first.summary
    # Nothing left to run: the sweep stage has no work.
    assert ("sweep", 0, 0) in seen
    assert {p.name: p.stat().st_mtime_ns for p in case0.iterdir()} == stamp


def test_sweep_on_one_and_two_threads_is_the_same(tmp_path: Path) -> None:
    study = sweep_dir(tmp_path)
    one = ganglion.run_sweep(study, tmp_path / "one", threads=1)
    two = ganglion.run_sweep(study, tmp_path / "two", threads=2)
    assert one.summary == two.summary and one.cases == two.cases
    assert tree_bytes(tmp_path / "one") == tree_bytes(tmp_path / "two")
