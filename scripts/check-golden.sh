#!/usr/bin/env bash
# Guard for refactors: runs the four demo studies and the Kestrel demo sweep
# and compares their result files byte for byte with the recorded SHA-256
# sums in tests/golden/demo-outputs.sha256.
#
#   scripts/check-golden.sh            compare (exit 1 on any difference)
#   scripts/check-golden.sh --update   re-record the sums; only with a stated
#                                      reason in the commit message
#
# Compared: summary.json, curves.csv, ganglia.csv and the saturation tables
# of each run; summary.json, cases.csv and trapping-curve.csv of the sweep.
# Figures, report.html and VTK files are not compared (they embed fonts and
# layout, not results).
set -euo pipefail
cd "$(dirname "$0")/.."
sums=tests/golden/demo-outputs.sha256
mode=${1:-check}
cargo build --release --locked -q -p network-cli
bin=${CARGO_TARGET_DIR:-$PWD/target}/release/ganglion
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
for study in kestrel-waterflood tarnwick-mixed-wet saltmere-co2-storage kestrel-trapping; do
  "$bin" -q run "studies/$study.toml" -o "$work/$study" --no-png --no-vtk
done
"$bin" -q sweep studies/kestrel-trapping.toml -o "$work/sweep-kestrel-trapping" >/dev/null
(
  cd "$work"
  find . -type f \( -name summary.json -o -name curves.csv -o -name ganglia.csv \
    -o -name 'table-*' -o -name trapping-curve.csv -o -name cases.csv \) \
    -not -path './*/cases/*' | LC_ALL=C sort | xargs sha256sum
) > "$work/now.sha256"
if [ "$mode" = "--update" ]; then
  cp "$work/now.sha256" "$sums"
  echo "recorded $(wc -l < "$sums") sums in $sums"
  exit 0
fi
if diff -u "$sums" "$work/now.sha256"; then
  echo "golden: $(wc -l < "$sums") demo result files identical"
else
  echo "golden: demo results differ from $sums (see the diff above)" >&2
  exit 1
fi
