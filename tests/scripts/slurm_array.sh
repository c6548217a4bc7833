#!/usr/bin/env bash
# Design studies on a real SLURM: a private single-node cluster (slurmctld + slurmd + munged, all
# in a temporary folder, on free local ports, as the current user) runs the sweep of
# sweep_shards.sh as `sbatch --array=0-3 --wait`; each array task picks its shard from
# SLURM_ARRAY_TASK_ID/COUNT by itself, and `ferrocirc merge` of the four outputs must be
# byte-identical to the unsharded run. Needs the Debian packages slurm-wlm and munge; without them
# the test prints "SKIPPED: slurm not installed" and passes. If the daemons are installed but
# cannot be started here (a locked-down container), it prints "SKIPPED: ..." with their logs.
# Bounded in time; the daemons are stopped and the folder removed on every exit.
set -euo pipefail
cli=$1 src=$2
for p in sbatch sinfo slurmctld slurmd munged; do
  if ! command -v "$p" >/dev/null 2>&1 && [ ! -x "/usr/sbin/$p" ]; then
    echo "SKIPPED: slurm not installed ($p missing; Debian packages slurm-wlm and munge)"
    exit 77
  fi
done
PATH=$PATH:/usr/sbin
# This test may itself run inside a SLURM job: its array variables must not leak into our runs.
unset SLURM_ARRAY_TASK_ID SLURM_ARRAY_TASK_COUNT SLURM_ARRAY_TASK_MIN SLURM_ARRAY_TASK_MAX \
      SLURM_ARRAY_JOB_ID SLURM_JOB_ID SLURM_CONF

tmp=$(mktemp -d "${TMPDIR:-/tmp}/fc-slurm.XXXXXX")
chmod 755 "$tmp"
pids=()
cleanup() {
  for pid in "${pids[@]}"; do kill "$pid" 2>/dev/null || true; done
  for pid in "${pids[@]}"; do
    for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    kill -9 "$pid" 2>/dev/null || true
  done
  rm -rf "$tmp"
}
trap cleanup EXIT
skip() {
  echo "SKIPPED: $1"
  for f in "$tmp"/log/*; do [ -s "$f" ] && { echo "--- $f"; tail -n 15 "$f"; }; done
  exit 77
}

mkdir -p "$tmp/munge" "$tmp/state" "$tmp/spool" "$tmp/log"
chmod 755 "$tmp/munge"
head -c 1024 /dev/urandom > "$tmp/munge/key"
chmod 400 "$tmp/munge/key"
sock=$tmp/munge/sock
munged --force --foreground --key-file="$tmp/munge/key" --socket="$sock" \
  --pid-file="$tmp/munge/pid" --log-file="$tmp/log/munged.log" --seed-file="$tmp/munge/seed" \
  > "$tmp/log/munged.out" 2>&1 &
pids+=($!)
for _ in $(seq 50); do [ -S "$sock" ] && break; sleep 0.1; done
[ -S "$sock" ] || skip "munged did not start"

read -r port1 port2 < <(/usr/bin/python3 - <<'PY'
import socket
s = [socket.socket() for _ in range(2)]
for x in s: x.bind(("127.0.0.1", 0))
print(*(x.getsockname()[1] for x in s))
PY
)
me=$(id -un)
host=$(hostname -s)
cat > "$tmp/slurm.conf" <<EOF
ClusterName=fctest
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=$port1
SlurmdPort=$port2
SlurmUser=$me
SlurmdUser=$me
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$sock
StateSaveLocation=$tmp/state
SlurmdSpoolDir=$tmp/spool
SlurmctldPidFile=$tmp/slurmctld.pid
SlurmdPidFile=$tmp/slurmd.pid
SlurmctldLogFile=$tmp/log/slurmctld.log
SlurmdLogFile=$tmp/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
MpiDefault=none
SwitchType=switch/none
ReturnToService=2
InactiveLimit=0
KillWait=5
MinJobAge=30
NodeName=fcnode NodeHostname=$host NodeAddr=127.0.0.1 CPUs=$(nproc) State=UNKNOWN
PartitionName=fctest Nodes=fcnode Default=YES MaxTime=10 State=UP
EOF
export SLURM_CONF=$tmp/slurm.conf
slurmctld -D -i -f "$SLURM_CONF" > "$tmp/log/slurmctld.out" 2>&1 &
pids+=($!)
slurmd -D -N fcnode -f "$SLURM_CONF" > "$tmp/log/slurmd.out" 2>&1 &
pids+=($!)
state=
for _ in $(seq 150); do
  state=$(timeout 5 sinfo -h -n fcnode -o %t 2>/dev/null || true)
  [ "$state" = idle ] && break
  sleep 0.2
done
[ "$state" = idle ] || skip "slurmctld/slurmd did not bring the node up (state \"$state\")"

net=$src/networks/diaphragm-two-valves.json
vary=(--vary 'elements[v_in].crack_reverse=30mmHg..80mmHg' --steps 4
      --vary 'elements[diaphragm].compliance=2e-13..8e-13' --steps 3)
{
  echo '#!/bin/sh'
  echo '#SBATCH --job-name=fc-sweep'
  echo '#SBATCH --cpus-per-task=1'
  echo '#SBATCH --time=5'
  printf 'exec %q sweep %q' "$cli" "$net"
  printf ' %q' "${vary[@]}"
  printf ' -o %q"$SLURM_ARRAY_TASK_ID".csv --jobs 1 --quiet\n' "$tmp/shard-"
} > "$tmp/job.sh"
if ! timeout 240 sbatch --array=0-3 --wait --chdir="$tmp" -o "$tmp/log/task-%a.out" \
     "$tmp/job.sh" > "$tmp/log/sbatch.out" 2>&1; then
  echo "sbatch --array failed:"; cat "$tmp/log/sbatch.out" "$tmp"/log/task-*.out 2>/dev/null || true
  exit 1
fi
"$cli" sweep "$net" "${vary[@]}" -o "$tmp/single.csv" --jobs 1 --quiet
for i in 0 1 2 3; do
  # 12 points in 4 shards: each task wrote its own 3 rows (point k in shard k mod 4)
  got=$(tail -n +2 "$tmp/shard-$i.csv" | cut -d, -f1 | tr '\n' ' ')
  [ "$got" = "$i $((i + 4)) $((i + 8)) " ] ||
    { echo "shard $i has the wrong points:"; cat "$tmp/shard-$i.csv"; exit 1; }
done
"$cli" merge "$tmp"/shard-*.csv -o "$tmp/merged.csv"
cmp "$tmp/single.csv" "$tmp/merged.csv"
echo "slurm_array: ok (4 array tasks, $(sinfo -V 2>/dev/null || echo slurm))"
