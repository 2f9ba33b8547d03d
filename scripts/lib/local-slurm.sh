# A one-node Slurm cluster on loopback, for tests and benchmarks. Source
# this file, then:
#
#   slurm_install            installs slurm-wlm and munge from Debian's
#                            packages when missing (root and apt-get);
#                            returns 2 when that is impossible
#   slurm_start DIR          starts munged (a fresh key in DIR), slurmctld
#                            and slurmd with a minimal configuration under DIR
#                            (no cgroups, no accounting) and waits, bounded,
#                            until the node takes jobs; exports SLURM_CONF
#   slurm_stop               stops the daemons slurm_start started, by PID
#                            (call it from an EXIT trap)
#   slurm_wait_ended ID SECS waits until job ID (and every task of an array)
#                            has left the queue and prints their end states;
#                            fails on timeout
#   slurm_wait_job ID SECS   the same, and fails when a state is not COMPLETED
#
# Every external call runs under `timeout`; every wait is bounded. Daemon
# logs stay in DIR (printed by slurm_logs when something fails).

slurm_pids=()

slurm_install() {
  if command -v slurmctld >/dev/null 2>&1 && command -v slurmd >/dev/null 2>&1 \
    && command -v munged >/dev/null 2>&1 && command -v sbatch >/dev/null 2>&1; then
    return 0
  fi
  echo "slurm: slurmctld, slurmd, munged or sbatch not found; installing Debian packages slurm-wlm and munge"
  if [ "$(id -u)" -ne 0 ] || ! command -v apt-get >/dev/null 2>&1; then
    echo "slurm: cannot install (needs root and apt-get); install slurm-wlm and munge by hand" >&2
    return 2
  fi
  export DEBIAN_FRONTEND=noninteractive
  if ! timeout 600 apt-get install -y slurm-wlm munge >/tmp/ganglion-apt-slurm.log 2>&1; then
    timeout 300 apt-get update >/dev/null 2>&1 || true
    if ! timeout 900 apt-get install -y slurm-wlm munge >>/tmp/ganglion-apt-slurm.log 2>&1; then
      echo "slurm: packages slurm-wlm and munge are not available (see /tmp/ganglion-apt-slurm.log)" >&2
      return 2
    fi
  fi
}

# A TCP port nobody listens on, from a random start (bounded search).
slurm_free_port() {
  local port=$((20000 + RANDOM % 30000)) i
  for i in $(seq 1 200); do
    if ! (exec 3<>"/dev/tcp/127.0.0.1/$port") 2>/dev/null; then
      echo "$port"
      return 0
    fi
    port=$((port + 1))
  done
  return 1
}

slurm_logs() {
  local f
  for f in "$slurm_dir"/munged.log "$slurm_dir"/slurmctld.log "$slurm_dir"/slurmd.log; do
    [ -f "$f" ] || continue
    echo "---- last lines of $f" >&2
    tail -25 "$f" >&2
  done
}

slurm_start() {
  slurm_dir=$1
  mkdir -p "$slurm_dir"/{munge,state,spool}
  chmod 755 "$slurm_dir" "$slurm_dir/munge"
  # munged: its own key, socket, pid and seed files, all in the temp dir.
  timeout 30 dd if=/dev/urandom of="$slurm_dir/munge/munge.key" bs=1024 count=1 2>/dev/null
  chmod 400 "$slurm_dir/munge/munge.key"
  local socket=$slurm_dir/munge/munge.socket
  # The daemons run in the background until slurm_stop; every call that
  # should end runs under `timeout`.
  munged --force --foreground --socket="$socket" \
    --key-file="$slurm_dir/munge/munge.key" --pid-file="$slurm_dir/munge/munged.pid" \
    --seed-file="$slurm_dir/munge/munged.seed" --log-file="$slurm_dir/munged.log" >>"$slurm_dir/munged.log" 2>&1 &
  slurm_pids+=($!)
  local i
  for i in $(seq 1 50); do
    [ -S "$socket" ] && break
    sleep 0.2
  done
  if [ ! -S "$socket" ]; then
    echo "slurm: munged did not start" >&2
    slurm_logs
    return 1
  fi

  local ctld_port slurmd_port cpus
  ctld_port=$(slurm_free_port)
  slurmd_port=$(slurm_free_port)
  cpus=$(nproc)
  export SLURM_CONF=$slurm_dir/slurm.conf
  cat >"$SLURM_CONF" <<EOF
# One-node test cluster on loopback, written by scripts/lib/local-slurm.sh.
ClusterName=ganglion-test
SlurmctldHost=localhost(127.0.0.1)
SlurmctldPort=$ctld_port
SlurmdPort=$slurmd_port
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$socket
StateSaveLocation=$slurm_dir/state
SlurmdSpoolDir=$slurm_dir/spool
SlurmctldPidFile=$slurm_dir/slurmctld.pid
SlurmdPidFile=$slurm_dir/slurmd.pid
SlurmctldLogFile=$slurm_dir/slurmctld.log
SlurmdLogFile=$slurm_dir/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
MpiDefault=none
SwitchType=switch/none
ReturnToService=2
MinJobAge=600
NodeName=localhost NodeAddr=127.0.0.1 CPUs=$cpus State=UNKNOWN
PartitionName=local Nodes=localhost Default=YES MaxTime=INFINITE State=UP
EOF
  slurmctld -D -c -f "$SLURM_CONF" >>"$slurm_dir/slurmctld.out" 2>&1 &
  slurm_pids+=($!)
  slurmd -D -N localhost -f "$SLURM_CONF" >>"$slurm_dir/slurmd.out" 2>&1 &
  slurm_pids+=($!)
  # Bounded wait until the node is idle (takes jobs).
  local state=""
  for i in $(seq 1 60); do
    state=$(timeout 10 sinfo -h -N -o '%T' 2>/dev/null | head -1 || true)
    case "$state" in
      idle*|mixed*|allocated*) echo "slurm: one-node cluster up (node $state, $cpus CPUs)"; return 0 ;;
    esac
    sleep 1
  done
  echo "slurm: the node did not come up (state '${state:-unknown}')" >&2
  slurm_logs
  return 1
}

slurm_stop() {
  local pid i
  for pid in "${slurm_pids[@]}"; do
    kill "$pid" 2>/dev/null || true
  done
  for pid in "${slurm_pids[@]}"; do
    for i in $(seq 1 50); do
      kill -0 "$pid" 2>/dev/null || break
      sleep 0.2
    done
    kill -9 "$pid" 2>/dev/null || true
    wait "$pid" 2>/dev/null || true
  done
  slurm_pids=()
}

# The states of job ID and its array tasks, one per line ("ID STATE").
slurm_job_states() {
  timeout 20 scontrol -o show job "$1" 2>/dev/null \
    | sed -n 's/^JobId=\([0-9]*\) .* JobState=\([A-Z_]*\) .*/\1 \2/p'
}

# Waits until job ID (every task of an array) has left the queue; prints
# its end states ("ID STATE" lines) on stdout; fails on timeout.
slurm_wait_ended() {
  local id=$1 limit=$2 start states
  start=$(date +%s)
  while :; do
    states=$(slurm_job_states "$id")
    if [ -n "$states" ] && ! echo "$states" | grep -qE ' (PENDING|RUNNING|CONFIGURING|COMPLETING|SUSPENDED|REQUEUED|RESIZING|SIGNALING|STAGE_OUT)$'; then
      echo "$states"
      return 0
    fi
    if [ $(( $(date +%s) - start )) -ge "$limit" ]; then
      echo "slurm: job $id still not done after $limit s:" >&2
      echo "$states" >&2
      return 1
    fi
    sleep 0.5
  done
}

slurm_wait_job() {
  local states
  states=$(slurm_wait_ended "$1" "$2") || return 1
  if echo "$states" | grep -vq ' COMPLETED$'; then
    echo "slurm: job $1 ended badly:" >&2
    echo "$states" >&2
    return 1
  fi
}
