"""The progress callback and the released interpreter lock."""

from __future__ import annotations

import threading
import time
from pathlib import Path

import pytest

import ganglion
from conftest import STUDIES, TINY_STUDY


def test_progress_callback_sees_stages_in_order(tiny_study_file: Path) -> None:
    calls = []
    ganglion.run_study(tiny_study_file, progress=lambda s, d, t: calls.append((s, d, t)))
    for stage, done, total in calls:
        assert isinstance(stage, str) and isinstance(done, int) and isinstance(total, int)
        assert 0 <= done <= total
    # Each process reports a stage that starts at 0 and finishes at its
    # total (network_core::run::process); the three processes of the study
    # appear in order.
    starts = [(s, t) for s, d, t in calls if d == 0]
    kinds = [s for s, _ in starts if s in ("drainage", "imbibition")]
    assert kinds == ["drainage", "imbibition", "drainage"], starts
    for stage, total in starts:
        if total > 0:
            assert (stage, total, total) in calls, (stage, total)
    assert any(s == "flow solves" for s, _, _ in calls)


def test_progress_of_generation_and_sweep(tmp_path: Path) -> None:
    seen = []
    ganglion.generate_network({"nx": 6, "ny": 6, "nz": 6}, progress=lambda *a: seen.append(a))
    assert seen
    sweep = []
    text = TINY_STUDY + "\n[sweep]\ninitial_water_saturations = [0.6]\nrealisations = 2\n"
    import shutil
    from conftest import SAMPLES

    shutil.copytree(SAMPLES / "tiny-lattice", tmp_path / "tiny-lattice")
    ganglion.run_sweep(text, base_dir=tmp_path, progress=lambda *a: sweep.append(a))
    assert ("sweep", 2, 2) in sweep


def test_exception_in_callback_is_raised_after_the_call(tiny_study_file: Path) -> None:
    calls = []

    def boom(stage: str, done: int, total: int) -> None:
        calls.append(stage)
        raise RuntimeError("stop here")

    with pytest.raises(RuntimeError, match="stop here"):
        ganglion.run_study(tiny_study_file, progress=boom)
    # After the first exception the callback is not called again.
    assert len(calls) == 1


def test_interpreter_lock_is_released_during_a_run() -> None:
    # While the run is inside the library, another Python thread must keep
    # running. If the lock were held, no iteration of the loop below could
    # happen between the worker's entry into and exit from the call.
    times = {}

    def work() -> None:
        times["enter"] = time.perf_counter()
        ganglion.run_study(STUDIES / "kestrel-waterflood.toml")
        times["exit"] = time.perf_counter()

    ticks = []
    t = threading.Thread(target=work)
    t.start()
    while t.is_alive():
        ticks.append(time.perf_counter())
        time.sleep(0.001)
    t.join()
    enter, exit_ = times["enter"], times["exit"]
    assert exit_ - enter > 0.05, "the run is too short to tell"
    inside = [x for x in ticks if enter + 0.01 < x < exit_ - 0.01]
    assert len(inside) >= 10, (len(inside), exit_ - enter)
