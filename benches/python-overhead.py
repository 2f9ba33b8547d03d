#!/usr/bin/env python3
"""Overhead of a Python call against the binary, for the same study.

    target/py-venv/bin/python benches/python-overhead.py [STUDY] [--repeats N] [--bin PATH]

(scripts/test-python.sh makes that environment and installs the package.)
Runs, alternating so that the machine's load falls on both alike,
`ganglion --quiet run STUDY -o DIR` as a subprocess (as a user calls it) and
`ganglion.run_study(STUDY, output=DIR)` in this process, N times each (after
one untimed warm-up of each), and prints the median wall time of each and
their ratio. Both write the same files (the tests check they are byte for
byte equal). Also timed: the Python call without writing files, which is
what a notebook loop over parameters pays. Default study:
studies/kestrel-waterflood.toml (8000 pores, three processes with kr).
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import tempfile
import time
from pathlib import Path

import ganglion

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("study", nargs="?", default=str(ROOT / "studies" / "kestrel-waterflood.toml"))
    ap.add_argument("--repeats", type=int, default=7)
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    ap.add_argument("--bin", default=str(target / "release" / "ganglion"))
    a = ap.parse_args()
    study = Path(a.study)

    cli, py_files, py_only = [], [], []
    with tempfile.TemporaryDirectory(prefix="ganglion-overhead-") as tmp:
        out_cli, out_py = Path(tmp) / "cli", Path(tmp) / "py"

        def run_cli() -> float:
            t = time.perf_counter()
            subprocess.run(
                [a.bin, "--quiet", "run", str(study), "-o", str(out_cli)],
                check=True, stdout=subprocess.DEVNULL, timeout=3600,
            )
            return time.perf_counter() - t

        def run_py(output: Path | None) -> float:
            t = time.perf_counter()
            ganglion.run_study(study, output=output)
            return time.perf_counter() - t

        run_cli(), run_py(out_py)  # warm-up: page cache, thread pool
        for _ in range(a.repeats):
            cli.append(run_cli())
            py_files.append(run_py(out_py))
            py_only.append(run_py(None))

    m_cli, m_py, m_only = (statistics.median(x) for x in (cli, py_files, py_only))
    print(f"study {study} ({a.repeats} repeats each, medians; {os.cpu_count()} cores)")
    print(f"  ganglion run (subprocess, files)   {m_cli:8.3f} s   [{min(cli):.3f}-{max(cli):.3f}]")
    print(f"  ganglion.run_study(output=...)     {m_py:8.3f} s   [{min(py_files):.3f}-{max(py_files):.3f}]")
    print(f"  ganglion.run_study() (no files)    {m_only:8.3f} s   [{min(py_only):.3f}-{max(py_only):.3f}]")
    print(f"  ratio Python/binary, same files    {m_py / m_cli:8.3f}")
    print(f"  ratio Python no files/binary       {m_only / m_cli:8.3f}")


if __name__ == "__main__":
    main()
