"""Shared fixtures: the repository root, the `ganglion` binary and a small
study on the bundled tiny network."""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(os.environ.get("GANGLION_ROOT", Path(__file__).resolve().parents[2]))
SAMPLES = ROOT / "sample-networks"
STUDIES = ROOT / "studies"

# A small study on the 216-pore sample: primary drainage, imbibition and a
# second drainage with relative permeability, so every result kind (curves,
# kr, RI, ganglia, end states, indices) is present and a run takes well
# under a second. Values are invented demo inputs.
TINY_STUDY = """\
title = "tiny lattice cycle (test input)"
network = "tiny-lattice"
seed = 5

[fluids]
interfacial_tension_n_per_m = 0.030
nonaqueous_label = "oil"

[wettability]
receding_contact_angle_deg = [0.0, 20.0]
advancing_contact_angle_deg = [40.0, 60.0]

[[process]]
kind = "drainage"
until_pc_pa = 2.0e4
pc_steps = 12
kr_points = 6

[[process]]
kind = "imbibition"
until_pc_pa = -2.0e4
pc_steps = 12
kr_points = 6

[[process]]
kind = "drainage"
until_pc_pa = 2.0e4
pc_steps = 8
kr_points = 4
"""

TINY_SWEEP = TINY_STUDY.replace(
    'title = "tiny lattice cycle (test input)"',
    'title = "tiny lattice sweep (test input)"',
) + """
[sweep]
initial_water_saturations = [0.7, 0.4]
realisations = 2
"""


@pytest.fixture(scope="session")
def ganglion_bin() -> Path:
    """The `ganglion` binary the package is compared against."""
    env = os.environ.get("GANGLION_BIN")
    if env:
        p = Path(env)
    else:
        found = shutil.which("ganglion")
        p = Path(found) if found else ROOT / "target" / "release" / "ganglion"
    assert p.is_file(), f"the ganglion binary is needed at {p} (set GANGLION_BIN)"
    return p


@pytest.fixture()
def tiny_study_file(tmp_path: Path) -> Path:
    """TINY_STUDY as a file in the sample-networks folder's parent layout:
    a copy of the tiny network beside it, so its relative path resolves."""
    shutil.copytree(SAMPLES / "tiny-lattice", tmp_path / "tiny-lattice")
    p = tmp_path / "tiny.toml"
    p.write_text(TINY_STUDY)
    return p


def run_cli(binary: Path, *args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    """Runs the binary quietly; fails the test on a non-zero exit."""
    r = subprocess.run(
        [str(binary), "--quiet", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=600,
    )
    assert r.returncode == 0, f"ganglion {' '.join(args)} failed:\n{r.stderr}"
    return r


def tree_bytes(folder: Path) -> dict:
    """Every file under `folder`, relative path → bytes."""
    return {
        str(p.relative_to(folder)): p.read_bytes()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }

# TINY_STUDY as a dict, written out by hand (not parsed from the text), so
# the dict path of the package is checked against the text path.
TINY_DICT = {
    "title": "tiny lattice cycle (test input)",
    "network": "tiny-lattice",
    "seed": 5,
    "fluids": {"interfacial_tension_n_per_m": 0.030, "nonaqueous_label": "oil"},
    "wettability": {
        "receding_contact_angle_deg": [0.0, 20.0],
        "advancing_contact_angle_deg": (40.0, 60.0),
    },
    "process": [
        {"kind": "drainage", "until_pc_pa": 2.0e4, "pc_steps": 12, "kr_points": 6},
        {"kind": "imbibition", "until_pc_pa": -2.0e4, "pc_steps": 12, "kr_points": 6},
        {"kind": "drainage", "until_pc_pa": 2.0e4, "pc_steps": 8, "kr_points": 4},
    ],
}
