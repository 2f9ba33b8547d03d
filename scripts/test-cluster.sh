#!/usr/bin/env bash
# A sweep on a real batch scheduler, against the same sweep run locally.
#
#   scripts/test-cluster.sh [STUDY]      (default studies/kestrel-trapping.toml)
#
# 1. Finds Slurm (slurmctld, slurmd, sbatch) and munge; if missing,
#    installs Debian's packages slurm-wlm and munge with apt-get (as root);
#    if that is impossible, says so and exits 2.
# 2. Starts a one-node cluster on loopback under a temp dir
#    (scripts/lib/local-slurm.sh: munged with a fresh key, slurmctld and
#    slurmd, no cgroups, no accounting).
# 3. Writes the job scripts with `ganglion batch-script` (3 cases per job
#    under an array limit of 4 tasks, so the limit regroups the 16 cases
#    of the default study into 4 tasks of 4), submits them with the written
#    submit.sh (job array, then the merge job with afterok on it) and waits,
#    bounded, for both.
# 4. Runs the same sweep locally with `ganglion sweep` and compares every
#    file of the two output folders byte for byte (case files, case list,
#    summary.json, cases.csv, trapping-curve.csv, figures, report.html);
#    only the cluster's batch/ folder (scripts and job logs) is left out.
# 5. A failed task (planted: a wrapper of the binary that fails in task 1
#    of 4): the merge job is cancelled, `collect` exits 1 naming the missing
#    cases 4-7, and a second submission redoes only those, ending byte for
#    byte equal to the local sweep.
#
# Prints "N passed, M failed"; exit 0 when all passed, 1 on a failed check,
# 2 when the scheduler cannot be found or installed. Every daemon started
# is stopped by its PID on exit; every external call has a timeout.
# Honours CARGO_TARGET_DIR.
set -euo pipefail
cd "$(dirname "$0")/.."
study=${1:-studies/kestrel-trapping.toml}
start=$(date +%s)
# shellcheck source=lib/local-slurm.sh
source scripts/lib/local-slurm.sh

slurm_install || exit $?
timeout 1800 cargo build --release --locked -q -p network-cli
bin=${CARGO_TARGET_DIR:-$PWD/target}/release/ganglion
work=$(mktemp -d)
trap 'slurm_stop; rm -rf "$work"' EXIT

passed=0
failed=0
check() { # check NAME COMMAND...: one PASS or FAIL line
  local name=$1
  shift
  if "$@"; then
    echo "PASS $name"
    passed=$((passed + 1))
  else
    echo "FAIL $name"
    failed=$((failed + 1))
  fi
}

slurm_start "$work/slurm"

n_cases=$(timeout 60 "$bin" sweep "$study" -o "$work/cluster" --count-cases)
timeout 60 "$bin" -q batch-script "$study" -o "$work/cluster" \
  --cases-per-job 3 --max-array-size 4 --time 00:10:00 --job-name ganglion-test
check "batch-script grouped $n_cases cases into an array of 4 tasks" \
  grep -q -- '^#SBATCH --array=0-3$' "$work/cluster/batch/sweep-array.sbatch"

submitted=$(timeout 60 sh "$work/cluster/batch/submit.sh")
echo "$submitted"
array_id=$(echo "$submitted" | sed -n 's/^array job \([0-9]*\) .*/\1/p')
merge_id=$(echo "$submitted" | sed -n 's/.*merge job \([0-9]*\)$/\1/p')
if [ -z "$array_id" ] || [ -z "$merge_id" ]; then
  echo "cluster: submit.sh printed no job ids" >&2
  slurm_logs
  exit 1
fi
sched_start=$(date +%s)
ok=true
slurm_wait_job "$array_id" 240 || ok=false
$ok && { slurm_wait_job "$merge_id" 120 || ok=false; }
echo "cluster: array and merge jobs ended in $(( $(date +%s) - sched_start )) s"
check "the job array ran every task to completion" $ok
if ! $ok; then
  for f in "$work"/cluster/batch/logs/*; do
    [ -f "$f" ] && { echo "---- $f" >&2; tail -5 "$f" >&2; }
  done
  slurm_logs
fi
check "the merge job wrote summary.json" test -s "$work/cluster/summary.json"
# Times in the scheduler's ISO form, to the second: they compare as text.
merge_start=$(timeout 20 scontrol -o show job "$merge_id" | sed -n 's/.* StartTime=\([^ ]*\) .*/\1/p')
array_end=$(timeout 20 scontrol -o show job "$array_id" | sed -n 's/.* EndTime=\([^ ]*\) .*/\1/p' | sort | tail -1)
echo "cluster: last array task ended $array_end, merge job started $merge_start"
check "the merge job started only after every array task ended" \
  test -n "$merge_start" -a -n "$array_end" -a ! "$merge_start" \< "$array_end"

timeout 900 "$bin" -q sweep "$study" -o "$work/local" >/dev/null
compared=$(cd "$work/local" && find . -type f | wc -l)
check "$compared result files identical to a local sweep, byte for byte" \
  diff -r --exclude=batch "$work/local" "$work/cluster"
check "the same set of case files ($n_cases)" \
  test "$(ls "$work/cluster/cases" | wc -l)" -eq "$n_cases"

# A failed task: a ganglion that fails in task 1 of 4 (cases 4-7 of the
# 16), planted through --ganglion. The merge job must be cancelled, collect
# must name the missing cases, and a second submission with the real
# binary must redo only those and end with the same files.
retry=$work/retry
printf '#!/bin/sh\ncase " $* " in *" --shard 1/4 "*) echo "planted failure of task 1" >&2; exit 3 ;; esac\nexec %s "$@"\n' \
  "'$bin'" >"$work/failing-ganglion"
chmod +x "$work/failing-ganglion"
timeout 60 "$bin" -q batch-script "$study" -o "$retry" --cases-per-job 4 \
  --time 00:10:00 --job-name ganglion-retry --ganglion "$work/failing-ganglion" >/dev/null
submitted=$(timeout 60 sh "$retry/batch/submit.sh")
array_id=$(echo "$submitted" | sed -n 's/^array job \([0-9]*\) .*/\1/p')
merge_id=$(echo "$submitted" | sed -n 's/.*merge job \([0-9]*\)$/\1/p')
array_states=$(slurm_wait_ended "$array_id" 240 || true)
merge_states=$(slurm_wait_ended "$merge_id" 180 || true)
echo "cluster: planted failure: tasks" $array_states "; merge" $merge_states
check "the planted failure failed one task of four and no other" \
  test "$(echo "$array_states" | grep -c ' FAILED$')" -eq 1 \
  -a "$(echo "$array_states" | grep -c ' COMPLETED$')" -eq 3
check "the merge job was cancelled, not run" \
  test "$(echo "$merge_states" | awk '{print $2}')" = CANCELLED -a ! -e "$retry/summary.json"
set +e
collected=$(timeout 120 "$bin" -q collect "$retry" 2>&1)
status=$?
set -e
echo "cluster: collect said: $collected"
check "collect exits 1 and names the missing cases 4-7" \
  test "$status" -eq 1 -a -n "$(echo "$collected" | grep -F "4 of $n_cases cases missing in" | grep -F ': 4-7 ')"
before=$(stat -c %y "$retry/cases/case-00000.json")
timeout 60 "$bin" -q batch-script "$study" -o "$retry" --cases-per-job 4 \
  --time 00:10:00 --job-name ganglion-retry >/dev/null
submitted=$(timeout 60 sh "$retry/batch/submit.sh")
array_id=$(echo "$submitted" | sed -n 's/^array job \([0-9]*\) .*/\1/p')
merge_id=$(echo "$submitted" | sed -n 's/.*merge job \([0-9]*\)$/\1/p')
ok=true
slurm_wait_job "$array_id" 240 || ok=false
$ok && { slurm_wait_job "$merge_id" 120 || ok=false; }
check "the second submission ran to completion" $ok
check "the second submission kept the finished cases" \
  test "$before" = "$(stat -c %y "$retry/cases/case-00000.json")"
check "after the second submission, identical to a local sweep, byte for byte" \
  diff -r --exclude=batch "$work/local" "$retry"

echo "cluster test: $(( $(date +%s) - start )) s in all"
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
