#!/usr/bin/env bash
# Every test of the project, in one command (the README's test command):
#   1. the Rust tests of the workspace (unit, integration, CLI, report);
#   2. the demo-output guard (byte-for-byte comparison with recorded sums);
#   2b. the Python package's pytest suite (scripts/test-python.sh);
#   3. the reservoir-simulator round trip of the written tables, water-oil
#      (Kestrel) and gas-water (Saltmere CO2)
#      (scripts/test-simulator.sh: installs Debian's OPM Flow package when
#      missing; every external call has a timeout);
#   4. the VTK files read by VTK's own reader (scripts/test-vtk-reader.sh:
#      installs the vtk wheel into a virtual environment under target/);
#   5. a sweep on a one-node Slurm cluster on loopback, against a local
#      sweep byte for byte (scripts/test-cluster.sh: installs Debian's
#      slurm-wlm and munge when missing; stops every daemon it started).
# Exits non-zero when any part fails.
set -euo pipefail
cd "$(dirname "$0")/.."
# Package installs below must never wait for an answer.
export DEBIAN_FRONTEND=noninteractive
cargo test --workspace --release --locked
scripts/check-golden.sh
timeout 1800 scripts/test-python.sh
timeout 1200 scripts/test-simulator.sh
timeout 1200 scripts/test-simulator.sh studies/saltmere-co2-storage.toml
timeout 1500 scripts/test-vtk-reader.sh
timeout 1200 scripts/test-cluster.sh
echo "all tests passed"
