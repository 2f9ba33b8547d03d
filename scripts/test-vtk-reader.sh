#!/usr/bin/env bash
# External reader check of the VTK end states: runs the Kestrel waterflood
# demo twice (binary .vtp by default, then --vtk-ascii) and reads every
# state with VTK's own vtkXMLPolyDataReader (scripts/check-vtk.py), checking
# counts, array names, NaN and values against the network and result files.
#
# The reader is the `vtk` Python wheel from PyPI, installed once into a
# virtual environment under the cargo target folder (reused when it already
# imports vtk). Every external call has a timeout. Exits non-zero when the
# reader cannot be installed or any check fails.
set -euo pipefail
cd "$(dirname "$0")/.."
target=${CARGO_TARGET_DIR:-$PWD/target}
venv=$target/vtk-venv
if ! timeout 60 "$venv/bin/python" -c "import vtk, numpy" 2>/dev/null; then
  echo "installing the vtk reader into $venv"
  timeout 300 python3 -m venv "$venv"
  timeout 900 "$venv/bin/python" -m pip install -q vtk numpy
fi
cargo build --release --locked -q -p network-cli
bin=$target/release/ganglion
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
study=studies/kestrel-waterflood.toml
timeout 600 "$bin" -q run "$study" -o "$work/binary" --no-png >/dev/null
timeout 600 "$bin" -q run "$study" -o "$work/ascii" --no-png --vtk-ascii >/dev/null
timeout 600 "$venv/bin/python" scripts/check-vtk.py \
  sample-networks/kestrel-sandstone "$work/binary" "$work/ascii"
