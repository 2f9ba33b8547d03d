#!/usr/bin/env python3
"""Overhead of a Python call against the binary, for the same study.

    target/py-venv/bin/python benches/python-overhead.py [STUDY] [--repeats N] [--bin PATH]

(scripts/test-python.sh makes that environment and installs the package.)
Runs, alternating so that the machine's load falls on both alike,
`ganglion --quiet run STUDY -o DIR` as a subprocess (as a user calls it) and
`ganglion.run_study(STUDY, output=DIR)` in this process, N times each (after
one untimed warm-up of each), and prints the median wall time of each and
their ratio, and the same for CPU time (user + system, all threads: the
child's rusage for the binary, process_time for the call), which the load of
a shared machine disturbs less than wall time. Both write the same files (the tests check they are byte for
byte equal). Also timed: the Python call without writing files, which is
what a notebook loop over parameters pays. Default study:
studies/kestrel-waterflood.toml (8000 pores, three processes with kr).
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import tempfile
import time
import warnings
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
    cpu_cli, cpu_py, cpu_only = [], [], []
    with tempfile.TemporaryDirectory(prefix="ganglion-overhead-") as tmp:
        out_cli, out_py = Path(tmp) / "cli", Path(tmp) / "py"

        def children_cpu() -> float:
            r = resource.getrusage(resource.RUSAGE_CHILDREN)
            return r.ru_utime + r.ru_stime

        def run_cli() -> tuple:
            c, t = children_cpu(), time.perf_counter()
            subprocess.run(
                [a.bin, "--quiet", "run", str(study), "-o", str(out_cli), "--overwrite"],
                check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, timeout=3600,
            )
            return time.perf_counter() - t, children_cpu() - c

        def run_py(output: Path | None) -> tuple:
            c, t = time.process_time(), time.perf_counter()
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                ganglion.run_study(study, output=output, overwrite=True)
            return time.perf_counter() - t, time.process_time() - c

        run_cli(), run_py(out_py)  # warm-up: page cache, thread pool
        for _ in range(a.repeats):
            for (wall, cpu), w, c in (
                (run_cli(), cli, cpu_cli),
                (run_py(out_py), py_files, cpu_py),
                (run_py(None), py_only, cpu_only),
            ):
                w.append(wall)
                c.append(cpu)

    med = statistics.median
    print(f"study {study} ({a.repeats} repeats each; {os.cpu_count()} cores, "
          f"load average {os.getloadavg()[0]:.1f})")
    print("                                     wall median [min-max]        CPU median")
    for name, w, c in (
        ("ganglion run (subprocess, files)", cli, cpu_cli),
        ("ganglion.run_study(output=...)", py_files, cpu_py),
        ("ganglion.run_study() (no files)", py_only, cpu_only),
    ):
        print(f"  {name:<34} {med(w):7.3f} s [{min(w):.3f}-{max(w):.3f}]   {med(c):7.3f} s")
    print(f"  ratio Python/binary, same files:  wall {med(py_files) / med(cli):.3f} "
          f"(minima {min(py_files) / min(cli):.3f}), CPU {med(cpu_py) / med(cpu_cli):.3f}")
    print(f"  ratio Python no files/binary:     wall {med(py_only) / med(cli):.3f} "
          f"(minima {min(py_only) / min(cli):.3f}), CPU {med(cpu_only) / med(cpu_cli):.3f}")


if __name__ == "__main__":
    main()
