#!/usr/bin/env bash
# The Python package's tests (network-py): build the wheel into a virtual
# environment and run pytest.
#
#   scripts/test-python.sh [PYTEST ARGS...]
#
# 1. Creates (once) a virtual environment in $GANGLION_PY_VENV, default
#    $CARGO_TARGET_DIR/py-venv (target/py-venv), with python3 (Debian needs
#    python3-venv: installed with apt-get when missing and run as root).
# 2. Installs maturin, numpy, pytest and mypy there from PyPI when missing.
# 3. Builds the `ganglion` binary (the tests compare against it) and the
#    wheel (`maturin build --release --locked`, abi3: CPython 3.9 and later),
#    installs the wheel, checks the package's types and stubs with
#    `mypy --strict` and runs pytest on network-py/tests.
# Every external call has a timeout; the script can be run again and reuses
# what is there. Honours CARGO_TARGET_DIR.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)
target=${CARGO_TARGET_DIR:-$root/target}
case "$target" in /*) ;; *) target=$root/$target ;; esac
venv=${GANGLION_PY_VENV:-$target/py-venv}
python=${PYTHON:-python3}

if ! [ -x "$venv/bin/python" ] || ! "$venv/bin/python" -c 'import sys' >/dev/null 2>&1; then
  rm -rf "$venv"
  mkdir -p "$(dirname "$venv")"
  if ! timeout 300 "$python" -m venv "$venv"; then
    rm -rf "$venv"
    if [ "$(id -u)" -eq 0 ] && command -v apt-get >/dev/null 2>&1; then
      echo "python: venv unavailable; installing Debian's python3-venv"
      timeout 600 apt-get update -qq
      DEBIAN_FRONTEND=noninteractive timeout 900 apt-get install -y -qq python3-venv
      timeout 300 "$python" -m venv "$venv"
    else
      echo "python: cannot create a virtual environment (install python3-venv)" >&2
      exit 2
    fi
  fi
fi
py=$venv/bin/python

if ! "$py" -c 'import numpy, pytest, mypy' >/dev/null 2>&1 || ! [ -x "$venv/bin/maturin" ]; then
  timeout 900 "$py" -m pip install --quiet --disable-pip-version-check \
    "maturin>=1.5,<2" "numpy>=1.21" "pytest>=7" "mypy>=1.0"
fi

timeout 3600 cargo build --release --locked -p network-cli
wheels=$target/wheels
rm -f "$wheels"/ganglion-*.whl
timeout 3600 "$venv/bin/maturin" build --release --locked --strip --quiet \
  --manifest-path network-py/Cargo.toml --interpreter "$py" --out "$wheels"
timeout 600 "$py" -m pip install --quiet --disable-pip-version-check \
  --force-reinstall --no-deps "$wheels"/ganglion-*.whl

export GANGLION_BIN=$target/release/ganglion
export GANGLION_ROOT=$root
cd "$root/network-py"
timeout 600 "$py" -m mypy --strict --no-incremental python/ganglion examples/quickstart.py
timeout 1800 "$py" -m pytest -q -p no:cacheprovider tests "$@"
