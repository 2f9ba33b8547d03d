"""Loading, generating and inspecting networks: the package against the
`ganglion` binary on the bundled samples (API equivalence)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest

import ganglion
from conftest import SAMPLES, run_cli


@pytest.mark.parametrize("sample", ["tiny-lattice", "saltmere-aquifer", "kestrel-sandstone"])
def test_inspect_equals_the_binary_inspect_json(ganglion_bin: Path, sample: str) -> None:
    net = ganglion.load_network(SAMPLES / sample)
    cli = json.loads(run_cli(ganglion_bin, "inspect", str(SAMPLES / sample), "--json").stdout)
    mine = net.inspect()
    assert mine == cli
    # The handle's own counts are the report's.
    assert (net.n_pores, net.n_throats, net.name) == (cli["pores"], cli["throats"], cli["name"])


def test_gnet_round_trip_keeps_the_network(tmp_path: Path, ganglion_bin: Path) -> None:
    csv = ganglion.load_network(SAMPLES / "tiny-lattice")
    gnet = tmp_path / "tiny.gnet"
    csv.write_gnet(gnet)
    back = ganglion.load_network(gnet)
    assert back.hash == csv.hash
    assert back.inspect() == csv.inspect()
    # And the binary reads the file the package wrote to the same report.
    cli = json.loads(run_cli(ganglion_bin, "inspect", str(gnet), "--json").stdout)
    assert cli == back.inspect()


def test_generate_from_dict_text_and_file_equals_the_binary(
    tmp_path: Path, ganglion_bin: Path
) -> None:
    params = {
        "nx": 5,
        "ny": 4,
        "nz": 3,
        "spacing_m": 85e-6,
        "target_coordination": 4.0,
        "seed": 9,
    }
    from_dict = ganglion.generate_network(params)
    text = ganglion.study_to_toml(params)
    from_text = ganglion.generate_network(text)
    spec = tmp_path / "gen.toml"
    spec.write_text(text)
    from_file = ganglion.generate_network(spec)
    out = tmp_path / "cli-net"
    run_cli(ganglion_bin, "generate", "-o", str(out), "--spec", str(spec))
    cli = ganglion.load_network(out)
    assert from_dict.hash == from_text.hash == from_file.hash
    # The binary adds a description to what it writes (so its hash
    # differs); the elements are the same, value for value.
    assert from_dict.inspect() == cli.inspect()
    for mine, theirs in ((from_dict.pores(), cli.pores()), (from_dict.throats(), cli.throats())):
        for k, v in mine.items():
            assert np.array_equal(v, theirs[k]), k
    assert from_dict.n_pores == 5 * 4 * 3


def test_columns_are_numpy_arrays_of_the_network_size() -> None:
    net = ganglion.load_network(SAMPLES / "tiny-lattice")
    pores = net.pores()
    throats = net.throats()
    for k in ("x_m", "y_m", "z_m", "radius_m", "shape_factor", "volume_m3", "clay_volume_m3"):
        assert pores[k].dtype == np.float64 and pores[k].shape == (net.n_pores,), k
    for k in ("radius_m", "shape_factor", "volume_m3", "clay_volume_m3", "length_m"):
        assert throats[k].dtype == np.float64 and throats[k].shape == (net.n_throats,), k
    assert throats["pore_1"].dtype == np.int64
    assert len(pores["boundary"]) == net.n_pores
    # The faces are those counted by inspect.
    report0 = net.inspect()
    assert pores["boundary"].count("inlet") == report0["inlet_pores"]
    assert pores["boundary"].count("outlet") == report0["outlet_pores"]
    assert set(pores["boundary"]) <= {"inlet", "outlet", ""}
    # The columns are the report's: same extremes as inspect.
    report = net.inspect()
    assert pores["radius_m"].min() == report["pore_stats"]["radius_m"]["min"]
    assert throats["radius_m"].max() == report["throat_stats"]["radius_m"]["max"]
    assert int(throats["pore_1"].max()) < net.n_pores


def test_written_csv_folder_loads_to_the_same_network(tmp_path: Path) -> None:
    net = ganglion.load_network(SAMPLES / "saltmere-aquifer")
    net.write_csv(tmp_path / "copy")
    assert ganglion.load_network(tmp_path / "copy").hash == net.hash


def test_invalid_network_files_name_file_and_line(tmp_path: Path, ganglion_bin: Path) -> None:
    folder = tmp_path / "broken"
    shutil.copytree(SAMPLES / "tiny-lattice", folder)
    lines = (folder / "pores.csv").read_text().splitlines()
    header = lines[0].split(",")
    row = lines[3].split(",")
    row[header.index("radius_m") if "radius_m" in header else 4] = "-1"
    lines[3] = ",".join(row)
    (folder / "pores.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(ganglion.GanglionError) as err:
        ganglion.load_network(folder)
    msg = str(err.value)
    assert "pores.csv" in msg and ":4" in msg, msg
    cli = __import__("subprocess").run(
        [str(ganglion_bin), "--quiet", "inspect", str(folder)], capture_output=True, text=True
    )
    assert cli.returncode == 1
    # The binary prints "error: " and the same lines.
    assert cli.stderr.strip() == "error: " + msg


def test_missing_network_path_raises_with_the_path(tmp_path: Path) -> None:
    missing = tmp_path / "no-such-network"
    with pytest.raises(ganglion.GanglionError, match="no-such-network"):
        ganglion.load_network(missing)
    with pytest.raises(TypeError):
        ganglion.load_network(42)  # type: ignore[arg-type]


def test_bad_generator_parameters_name_the_key() -> None:
    with pytest.raises(ganglion.GanglionError, match="target_coordination"):
        ganglion.generate_network({"nx": 4, "ny": 4, "nz": 4, "target_coordination": 9.5})
    with pytest.raises(ganglion.GanglionError, match="no_such_key"):
        ganglion.generate_network({"no_such_key": 1})
    with pytest.raises(ganglion.GanglionError, match="nx"):
        ganglion.generate_network({"nx": object()})
    with pytest.raises(ganglion.GanglionError, match="nx"):
        ganglion.generate_network({"nx": "four"})
