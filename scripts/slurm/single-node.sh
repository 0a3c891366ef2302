#!/usr/bin/env bash
# A throw-away single-node Slurm cluster on this machine, for testing the job-array example
# (scripts/slurm/screen-array.sbatch) on a real scheduler. Everything lives under one folder:
# its own munge key and socket, its own slurm.conf and state, its own ports; nothing under /etc
# or /run is touched, and the machine's own munge or Slurm (if any) is left alone.
#
#   scripts/slurm/single-node.sh start DIR [CTLD_PORT SLURMD_PORT]   # then: export SLURM_CONF=DIR/slurm.conf
#   scripts/slurm/single-node.sh stop DIR                             # cancels jobs, stops the daemons, removes DIR
#
# Needs root (the daemons run as root, as in CI) and Debian's slurm-wlm and munge packages.
# No cgroups: processes are tracked through /proc (proctrack/linuxproc), tasks are not confined.
set -euo pipefail

usage() { echo "usage: $0 start DIR [CTLD_PORT SLURMD_PORT] | stop DIR" >&2; exit 2; }
[ $# -ge 2 ] || usage
action=$1
dir=$2

start() {
  local ctld_port=${1:-16817} slurmd_port=${2:-16818}
  for tool in munged mungekey slurmctld slurmd sinfo; do
    command -v "$tool" >/dev/null || { echo "$tool not found: install Debian's slurm-wlm and munge" >&2; exit 3; }
  done
  [ "$(id -u)" -eq 0 ] || { echo "the daemons need root" >&2; exit 3; }
  mkdir -p "$dir"
  dir=$(cd "$dir" && pwd)
  mkdir -p "$dir/munge" "$dir/ctld" "$dir/spool" "$dir/log"
  # munged wants its socket's folders searchable by all and writable by no one else.
  chmod 755 "$dir" "$dir/munge"

  mungekey --create --keyfile="$dir/munge/munge.key"
  munged --key-file="$dir/munge/munge.key" --socket="$dir/munge/munge.socket" \
    --pid-file="$dir/munge/munged.pid" --log-file="$dir/log/munged.log" --seed-file="$dir/munge/munged.seed"

  # The node as slurmd itself describes it (CPUs, sockets, cores, memory), so it is never drained
  # for a mismatch; reachable on the loopback address.
  local node_line node
  node_line=$(slurmd -C | head -n 1)
  node=$(sed -E 's/^NodeName=([^ ]+).*/\1/' <<<"$node_line")
  cat >"$dir/slurm.conf" <<EOF
ClusterName=cellc-test
SlurmctldHost=$node(127.0.0.1)
SlurmctldPort=$ctld_port
SlurmdPort=$slurmd_port
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$dir/munge/munge.socket
StateSaveLocation=$dir/ctld
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/slurmctld.pid
SlurmdPidFile=$dir/slurmd.pid
SlurmctldLogFile=$dir/log/slurmctld.log
SlurmdLogFile=$dir/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/builtin
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
MpiDefault=none
SwitchType=switch/none
ReturnToService=2
MailProg=/bin/true
$node_line NodeAddr=127.0.0.1 State=UNKNOWN
PartitionName=test Nodes=$node Default=YES MaxTime=INFINITE State=UP
EOF

  export SLURM_CONF="$dir/slurm.conf"
  slurmctld -i -f "$SLURM_CONF"
  slurmd -f "$SLURM_CONF" -N "$node"

  # Ready when the node reports idle (registered, nothing running); 60 s at most.
  local state=""
  for _ in $(seq 1 120); do
    state=$(sinfo -h -n "$node" -o %T 2>/dev/null || true)
    [ "$state" = "idle" ] && { echo "slurm: node $node idle (SLURM_CONF=$SLURM_CONF)"; return 0; }
    sleep 0.5
  done
  echo "slurm: node $node did not become idle (last state: '${state:-none}'); logs in $dir/log" >&2
  tail -n 20 "$dir"/log/*.log >&2 || true
  exit 1
}

# Stops the daemon whose pid file is given, if it runs: TERM, up to 10 s, then KILL.
stop_daemon() {
  local pidfile=$1 pid
  [ -s "$pidfile" ] || return 0
  pid=$(cat "$pidfile")
  kill -TERM "$pid" 2>/dev/null || return 0
  for _ in $(seq 1 50); do
    kill -0 "$pid" 2>/dev/null || return 0
    sleep 0.2
  done
  kill -KILL "$pid" 2>/dev/null || true
}

stop() {
  [ -d "$dir" ] || return 0
  dir=$(cd "$dir" && pwd)
  if [ -f "$dir/slurm.conf" ] && [ -s "$dir/slurmctld.pid" ]; then
    export SLURM_CONF="$dir/slurm.conf"
    # Cancel whatever is left (a failed test), and wait until the scheduler has no job: their
    # processes are children of our slurmd and end with their jobs.
    local jobs
    jobs=$(squeue -h -o %A 2>/dev/null | sort -u || true)
    if [ -n "$jobs" ]; then
      # shellcheck disable=SC2086
      scancel $jobs 2>/dev/null || true
      for _ in $(seq 1 100); do
        [ -z "$(squeue -h -o %A 2>/dev/null || true)" ] && break
        sleep 0.2
      done
    fi
  fi
  stop_daemon "$dir/slurmd.pid"
  stop_daemon "$dir/slurmctld.pid"
  stop_daemon "$dir/munge/munged.pid"
  rm -rf "$dir"
}

case "$action" in
  start) shift 2; start "$@" ;;
  stop) stop ;;
  *) usage ;;
esac
