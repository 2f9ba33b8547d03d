#!/usr/bin/env bash
# A 64-case sweep on a one-node Slurm cluster on loopback against the same
# sweep run locally in parallel: the scheduler's cost per job, and how
# grouping cases into fewer jobs amortises it.
#
#   [REPEATS=3] benches/cluster-sweep.sh [CASES_PER_JOB ...]   (default: 1 8)
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
# Each result is checked byte for byte against the local one. Every
# configuration runs REPEATS times, taking turns; the medians are printed,
# one line per configuration, with the scheduler's cost per job:
#   (cluster wall time − wall time of one process per case) / jobs × cores,
# the time a job costs beyond running its cases, per core (the merge job
# and the dependency's wait are included, spread over the jobs). The node's cluster is
# started by scripts/lib/local-slurm.sh (installs slurm-wlm and munge
# when missing; stops its daemons on exit). Note the machine's load: the
# figures are wall times.
set -euo pipefail
cd "$(dirname "$0")/.."
groupings=("$@")
[ ${#groupings[@]} -gt 0 ] || groupings=(1 8)
repeats=${REPEATS:-3}
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

# One timed run of each configuration into a fresh folder; prints seconds.
run_local() {
  local out=$work/local-$1 t0
  t0=$(now)
  timeout 1200 "$bin" -q sweep "$work/study.toml" -o "$out" >/dev/null 2>&1
  calc "$(now) - $t0"
}
run_processes() {
  local out=$work/processes-$1 t0
  t0=$(now)
  seq 0 $((n_cases - 1)) | timeout 1200 xargs -P "$cores" -I{} \
    "$bin" -q --threads 1 sweep "$work/study.toml" -o "$out" --case {} >/dev/null 2>&1
  timeout 300 "$bin" -q collect "$out" >/dev/null 2>&1
  calc "$(now) - $t0"
  diff -r -q "$work/local-1" "$out" >/dev/null || { echo "bench: processes differ" >&2; exit 1; }
}
run_cluster() { # run_cluster K REPEAT
  local out=$work/cluster-$1-$2 t0 submitted array_id merge_id
  t0=$(now)
  timeout 60 "$bin" -q batch-script "$work/study.toml" -o "$out" --cases-per-job "$1" \
    --time 00:30:00 --job-name "bench-$1" >/dev/null
  submitted=$(timeout 60 sh "$out/batch/submit.sh")
  array_id=$(echo "$submitted" | sed -n 's/^array job \([0-9]*\) .*/\1/p')
  merge_id=$(echo "$submitted" | sed -n 's/.*merge job \([0-9]*\)$/\1/p')
  slurm_wait_job "$array_id" 1200 >&2
  slurm_wait_job "$merge_id" 300 >&2
  calc "$(now) - $t0"
  if ! diff -r --exclude=batch -q "$work/local-1" "$out" >/dev/null; then
    echo "bench: the cluster results with $1 case(s) per job differ from the local sweep" >&2
    exit 1
  fi
}
median() { tr ' ' '\n' | grep . | sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }

# The configurations take turns in every repeat, so that a change of the
# machine's load hits them alike.
declare -A times
for r in $(seq 1 "$repeats"); do
  times[local]+=" $(run_local "$r")"
  times[processes]+=" $(run_processes "$r")"
  for k in "${groupings[@]}"; do
    times[$k]+=" $(run_cluster "$k" "$r")"
  done
  echo "repeat $r of $repeats done" >&2
done

local_s=$(echo "${times[local]}" | median)
printf '%-44s %7.1f s   (runs:%s)\n' "local sweep ($cores threads)" "$local_s" "${times[local]}"
procs_s=$(echo "${times[processes]}" | median)
printf '%-44s %7.1f s   extra per process %5.2f s per core   (runs:%s)\n' \
  "local: $n_cases processes x 1 case + collect" "$procs_s" \
  "$(calc "($procs_s - $local_s) / $n_cases * $cores")" "${times[processes]}"
for k in "${groupings[@]}"; do
  n_jobs=$(( (n_cases + k - 1) / k ))
  wall=$(echo "${times[$k]}" | median)
  printf '%-44s %7.1f s   scheduler cost per job %5.2f s per core   (runs:%s)\n' \
    "cluster: $n_jobs jobs x $k case(s) + merge job" "$wall" \
    "$(calc "($wall - $procs_s) / $n_jobs * $cores")" "${times[$k]}"
done
echo "medians of $repeats runs; every result identical to the local sweep, byte for byte"
