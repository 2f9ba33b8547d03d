#!/usr/bin/env bash
# Every test of the project, in one command (the README's test command):
#   1. the Rust tests of the workspace (unit, integration, CLI, report);
#   2. the demo-output guard (byte-for-byte comparison with recorded sums);
#   3. the reservoir-simulator round trip of the written tables
#      (scripts/test-simulator.sh: installs Debian's OPM Flow package when
#      missing; every external call has a timeout);
#   4. a sweep on a one-node Slurm cluster on loopback, against a local
#      sweep byte for byte (scripts/test-cluster.sh: installs Debian's
#      slurm-wlm and munge when missing; stops every daemon it started).
# Exits non-zero when any part fails.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo test --workspace --release --locked
scripts/check-golden.sh
timeout 1200 scripts/test-simulator.sh
timeout 1200 scripts/test-cluster.sh
echo "all tests passed"
