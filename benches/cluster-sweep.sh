#!/usr/bin/env bash
# A 64-case sweep on a one-node Slurm cluster on loopback against the same
# sweep run locally in parallel: the scheduler's cost per job, and how
# grouping cases into fewer jobs amortises it.
#
#   benches/cluster-sweep.sh [CASES_PER_JOB ...]      (default: 1 8)
#
# The sweep: the Kestrel trapping demo (8000 pores) with 8 initial water
# saturations × 8 realisations = 64 cases. Timed, from start to merged
# results:
#   - local: `ganglion sweep` (every core of the machine);
#   - local, one `ganglion sweep --case K` process per case, as many at
#     once as there are cores, then `collect`: the cost of a process per
#     case without the scheduler;
#   - cluster, K cases per job: `batch-script --cases-per-job K`, submit.sh,
#     until the merge job (`collect`) has ended; one core per array task,
#     so the one node runs as many tasks at once as it has cores.
# Each cluster result is checked byte for byte against the local one.
# Prints one line per configuration and the extra wall time per job:
#   (cluster wall time − local wall time) / number of jobs × cores,
# the time a job costs beyond its cases, per core. The node's cluster is
# started by scripts/lib/local-slurm.sh (installs slurm-wlm and munge
# when missing; stops its daemons on exit). Note the machine's load: the
# figures are wall times.
set -euo pipefail
cd "$(dirname "$0")/.."
groupings=("$@")
[ ${#groupings[@]} -gt 0 ] || groupings=(1 8)
# shellcheck source=../scripts/lib/local-slurm.sh
source scripts/lib/local-slurm.sh

slurm_install || exit $?
timeout 1800 cargo build --release --locked -q -p network-cli
bin=${CARGO_TARGET_DIR:-$PWD/target}/release/ganglion
work=$(mktemp -d)
trap 'slurm_stop; rm -rf "$work"' EXIT
cores=$(nproc)

# 64 cases: the trapping demo with 8 saturations and 8 realisations.
net=$PWD/sample-networks/kestrel-sandstone
sed -e "s|^network = .*|network = \"$net\"|" \
  -e 's|^initial_water_saturations = .*|initial_water_saturations = [0.9, 0.8, 0.7, 0.6, 0.5, 0.4, 0.3, 0.2]|' \
  -e 's|^realisations = .*|realisations = 8|' \
  studies/kestrel-trapping.toml >"$work/study.toml"
n_cases=$(timeout 60 "$bin" sweep "$work/study.toml" -o "$work/local" --count-cases)
[ "$n_cases" -eq 64 ] || { echo "bench: expected 64 cases, got $n_cases" >&2; exit 1; }

slurm_start "$work/slurm"
now() { date +%s.%N; }
calc() { awk "BEGIN { print $1 }"; }

t0=$(now)
timeout 1200 "$bin" -q sweep "$work/study.toml" -o "$work/local" >/dev/null 2>&1
local_s=$(calc "$(now) - $t0")
printf '%-40s %8.1f s\n' "local sweep ($cores threads)" "$local_s"

# Without the scheduler: one process per case, $cores at a time, then
# collect (what a job costs beyond the scheduler: start, case list, network).
t0=$(now)
seq 0 $((n_cases - 1)) | timeout 1200 xargs -P "$cores" -I{} \
  "$bin" -q --threads 1 sweep "$work/study.toml" -o "$work/processes" --case {} >/dev/null 2>&1
timeout 300 "$bin" -q collect "$work/processes" >/dev/null 2>&1
procs_s=$(calc "$(now) - $t0")
printf '%-40s %8.1f s   extra per process %.2f s (per core)\n' \
  "local: $n_cases processes x 1 case + collect" "$procs_s" \
  "$(calc "($procs_s - $local_s) / $n_cases * $cores")"

for k in "${groupings[@]}"; do
  out=$work/cluster-$k
  t0=$(now)
  timeout 60 "$bin" -q batch-script "$work/study.toml" -o "$out" --cases-per-job "$k" \
    --time 00:30:00 --job-name "bench-$k" >/dev/null
  submitted=$(timeout 60 sh "$out/batch/submit.sh")
  array_id=$(echo "$submitted" | sed -n 's/^array job \([0-9]*\) .*/\1/p')
  merge_id=$(echo "$submitted" | sed -n 's/.*merge job \([0-9]*\)$/\1/p')
  n_jobs=$(sed -n 's/^#SBATCH --array=0-\([0-9]*\)$/\1/p' "$out/batch/sweep-array.sbatch")
  n_jobs=$((n_jobs + 1))
  slurm_wait_job "$array_id" 1200
  slurm_wait_job "$merge_id" 300
  wall=$(calc "$(now) - $t0")
  if ! diff -r --exclude=batch -q "$work/local" "$out" >/dev/null; then
    echo "bench: the cluster results with $k case(s) per job differ from the local sweep" >&2
    exit 1
  fi
  per_job=$(calc "($wall - $local_s) / $n_jobs * $cores")
  printf '%-40s %8.1f s   extra per job %.2f s (per core)\n' \
    "cluster: $n_jobs jobs x $k case(s) + merge" "$wall" "$per_job"
done
echo "results identical to the local sweep, byte for byte"
