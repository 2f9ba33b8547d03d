"""Bad input from Python: an exception with the binary's message (file,
line, key), never a crash of the interpreter."""

from __future__ import annotations

import subprocess
from pathlib import Path

import pytest

import ganglion
from conftest import TINY_DICT, TINY_STUDY


def cli_error(binary: Path, *args: str) -> str:
    r = subprocess.run(
        [str(binary), "--quiet", *args], capture_output=True, text=True, timeout=600
    )
    assert r.returncode == 1, r.stderr
    assert r.stderr.startswith("error: ")
    return r.stderr[len("error: "):].rstrip("\n")


def test_refused_study_file_has_the_binary_message(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    bad = tiny_study_file.parent / "bad.toml"
    bad.write_text(TINY_STUDY.replace("interfacial_tension_n_per_m = 0.030",
                                      "interfacial_tension_n_per_m = -0.030"))
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_study(bad)
    msg = str(err.value)
    assert msg == cli_error(ganglion_bin, "run", str(bad), "-o", str(tmp_path / "o"))
    # File, line and key are named.
    line = TINY_STUDY.splitlines().index("interfacial_tension_n_per_m = 0.030") + 1
    assert "bad.toml" in msg and f"line {line}:" in msg
    assert "fluids.interfacial_tension_n_per_m" in msg
    assert isinstance(err.value, ValueError)


def test_refused_text_names_line_and_key() -> None:
    text = TINY_STUDY.replace("pc_steps = 12", 'pc_steps = "twelve"', 1)
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_study(text)
    msg = str(err.value)
    assert "<study text>" in msg and "pc_steps" in msg, msg
    line = TINY_STUDY.splitlines().index("pc_steps = 12") + 1
    assert f"line {line}" in msg, msg


def test_dict_with_a_wrong_type_names_the_key() -> None:
    d = {**TINY_DICT, "fluids": {"interfacial_tension_n_per_m": "strong"}}
    with pytest.raises(ganglion.GanglionError, match="interfacial_tension_n_per_m"):
        ganglion.run_study(d)


def test_dict_with_an_unknown_key_is_refused_by_name() -> None:
    d = {**TINY_DICT, "fluids": {"interfacial_tension": 0.03}}
    with pytest.raises(ganglion.GanglionError, match="interfacial_tension"):
        ganglion.run_study(d)


def test_dict_value_without_toml_form_names_the_key() -> None:
    d = {**TINY_DICT, "wettability": {"receding_contact_angle_deg": [0.0, object()]}}
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_study(d)
    assert "wettability.receding_contact_angle_deg[1]" in str(err.value)
    with pytest.raises(ganglion.GanglionError, match="table keys must be str"):
        ganglion.run_study({**TINY_DICT, 3: "x"})


def test_missing_key_is_named() -> None:
    d = {k: v for k, v in TINY_DICT.items() if k != "network"}
    with pytest.raises(ganglion.GanglionError, match="network"):
        ganglion.run_study(d)
    # None counts as missing.
    with pytest.raises(ganglion.GanglionError, match="network"):
        ganglion.run_study({**TINY_DICT, "network": None})


def test_bad_network_path_names_the_path_and_base_dir(tmp_path: Path) -> None:
    d = {**TINY_DICT, "network": "nowhere-net"}
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_study(d, base_dir=tmp_path)
    msg = str(err.value)
    assert "nowhere-net" in msg and str(tmp_path) in msg and "base_dir" in msg, msg


def test_bad_network_path_in_a_file_is_the_binary_message(
    tmp_path: Path, ganglion_bin: Path
) -> None:
    study = tmp_path / "s.toml"
    study.write_text(TINY_STUDY.replace('network = "tiny-lattice"', 'network = "gone"'))
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_study(study)
    assert str(err.value) == cli_error(ganglion_bin, "run", str(study), "-o", str(tmp_path / "o"))
    assert "s.toml:2" in str(err.value)


def test_missing_study_file(tmp_path: Path) -> None:
    with pytest.raises(ganglion.GanglionError, match="cannot read study"):
        ganglion.run_study(tmp_path / "absent.toml")


def test_wrong_argument_types_raise_type_error(tiny_study_file: Path) -> None:
    with pytest.raises(TypeError):
        ganglion.run_study(42)  # type: ignore[arg-type]
    with pytest.raises(TypeError):
        ganglion.run_study(tiny_study_file, progress="not callable")  # type: ignore[arg-type]
    with pytest.raises(TypeError):
        ganglion.run_study(tiny_study_file, network="tiny-lattice")  # type: ignore[arg-type]
    with pytest.raises(TypeError):
        ganglion.run_study(tiny_study_file, table_points="many")  # type: ignore[arg-type]
    with pytest.raises(ValueError, match="base_dir"):
        ganglion.run_study(tiny_study_file, base_dir=".")


def test_bad_output_options_are_refused(tiny_study_file: Path, tmp_path: Path) -> None:
    with pytest.raises(ganglion.GanglionError, match="table unit"):
        ganglion.run_study(tiny_study_file, output=tmp_path / "o", table_units="atm")
    with pytest.raises(ganglion.GanglionError, match="at least 2"):
        ganglion.run_study(tiny_study_file, output=tmp_path / "o", table_points=1)
    with pytest.raises(OverflowError):
        ganglion.run_study(tiny_study_file, output=tmp_path / "o", table_points=-3)


def test_unwritable_output_raises(tiny_study_file: Path, tmp_path: Path) -> None:
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    with pytest.raises(ganglion.GanglionError, match="cannot write results"):
        ganglion.run_study(tiny_study_file, output=blocker / "out")


def test_refused_sweep_names_key(tmp_path: Path) -> None:
    text = TINY_STUDY + "\n[sweep]\ninitial_water_saturations = [1.5]\n"
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_sweep(text, tmp_path / "sw", base_dir=tmp_path)
    assert "the sweep was refused" in str(err.value)
    assert "initial_water_saturations" in str(err.value)


def test_run_warnings_are_python_warnings_and_the_binary_stderr(
    tiny_study_file: Path, tmp_path: Path, ganglion_bin: Path
) -> None:
    # The tiny study drains to Sw near 0.015, which the input checks warn
    # about (network_core::run::input_checks).
    with pytest.warns(ganglion.GanglionWarning) as caught:
        r = ganglion.run_study(tiny_study_file)
    assert r.warnings, "the study was chosen to give a warning"
    assert [str(w.message) for w in caught] == r.warnings
    cli = subprocess.run(
        [str(ganglion_bin), "--quiet", "run", str(tiny_study_file), "-o", str(tmp_path / "o")],
        capture_output=True, text=True, timeout=600,
    )
    for w in r.warnings:
        assert w in cli.stderr


def test_self_containing_dict_is_refused_not_a_crash() -> None:
    d = dict(TINY_DICT)
    loop: dict = {}
    loop["again"] = loop
    d["fluids"] = loop
    with pytest.raises(ganglion.GanglionError, match="contain itself"):
        ganglion.run_study(d)
    items: list = []
    items.append(items)
    with pytest.raises(ganglion.GanglionError, match="nested more than"):
        ganglion.run_study({**TINY_DICT, "seed": items})


def test_numpy_numbers_in_a_dict_are_numbers() -> None:
    import numpy as np

    d = {**TINY_DICT, "seed": np.int64(5),
         "fluids": {"interfacial_tension_n_per_m": np.float64(0.030), "nonaqueous_label": "oil"}}
    assert ganglion.study_to_toml(d) == ganglion.study_to_toml(TINY_DICT)
    bad = {**TINY_DICT, "seed": np.array([1, 2])}
    with pytest.raises(ganglion.GanglionError, match="seed"):
        ganglion.run_study(bad)


def test_sweep_text_with_a_bad_network_path_names_base_dir(tmp_path: Path) -> None:
    text = TINY_STUDY.replace('network = "tiny-lattice"', 'network = "gone"') + (
        "\n[sweep]\ninitial_water_saturations = [0.5]\n"
    )
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.run_sweep(text, tmp_path / "sw", base_dir=tmp_path)
    msg = str(err.value)
    assert "gone" in msg and "base_dir" in msg and str(tmp_path) in msg, msg
    assert "<study text>:2" in msg, msg
