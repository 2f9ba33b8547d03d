"""The README's example runs as a script."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from conftest import ROOT


def test_quickstart_example_runs(tmp_path: Path) -> None:
    script = ROOT / "network-py" / "examples" / "quickstart.py"
    # Run where the relative paths of the example resolve, writing into
    # the test's own folder.
    (tmp_path / "sample-networks").symlink_to(ROOT / "sample-networks")
    r = subprocess.run(
        [sys.executable, str(script)], cwd=tmp_path, env=dict(os.environ),
        capture_output=True, text=True, timeout=600,
    )
    assert r.returncode == 0, r.stderr
    assert "Snr" in r.stdout and "trapped ganglia" in r.stdout
    assert (tmp_path / "out" / "quickstart" / "summary.json").is_file()
    # The README carries the same example.
    readme = (ROOT / "README.md").read_text()
    body = script.read_text().split("# --- example ---\n", 1)[1]
    assert body.strip() in readme
