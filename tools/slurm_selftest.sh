#!/usr/bin/env bash
# Self-test of the Slurm job-array route on this one machine: starts a
# single-node Slurm controller and worker (with the munge authentication
# service), runs the README's sweep through tools/slurm_sweep.sh as an
# array job, merges the shards, and checks that the merged summary equals
# the summary of the same sweep run locally.
#
#   tools/slurm_selftest.sh [CONFIG] [SHARDS]
#
# Needs the distribution's slurm-wlm and munge packages and root (to start
# the daemons); the stormcharge binary is built first if missing.
# Defaults: configs/sweep_schemes.toml, 3 shards. docs/sweeps.md describes it.
set -euo pipefail
cd "$(dirname "$0")/.."
config=${1:-configs/sweep_schemes.toml}
shards=${2:-3}

for tool in slurmctld slurmd sbatch munged; do
  command -v "$tool" >/dev/null || { echo "slurm self-test: $tool is missing (install slurm-wlm and munge)"; exit 2; }
done
[ "$(id -u)" -eq 0 ] || { echo "slurm self-test: run as root (it starts the Slurm and munge daemons)"; exit 2; }

tgt=${CARGO_TARGET_DIR:-target}
[ -x "$tgt/release/stormcharge" ] || cargo build --release --quiet
bin_dir=$(cd "$tgt/release" && pwd)
work=$(mktemp -d /tmp/stormcharge-slurm.XXXXXX)
host=$(hostname -s)
cpus=$(nproc)

cleanup() {
  [ -f "$work/slurmd.pid" ] && kill "$(cat "$work/slurmd.pid")" 2>/dev/null || true
  [ -f "$work/slurmctld.pid" ] && kill "$(cat "$work/slurmctld.pid")" 2>/dev/null || true
  [ -n "${munge_pid:-}" ] && kill "$munge_pid" 2>/dev/null || true
}
trap cleanup EXIT

# munge: a key and a private socket.
mkdir -p "$work/munge"
dd if=/dev/urandom of="$work/munge/munge.key" bs=1024 count=1 status=none
chmod 600 "$work/munge/munge.key"
munged --force --key-file="$work/munge/munge.key" --socket="$work/munge/socket" \
  --pid-file="$work/munge/munged.pid" --log-file="$work/munge/munged.log" --seed-file="$work/munge/seed"
munge_pid=$(cat "$work/munge/munged.pid")

mkdir -p "$work/state" "$work/spool"
cat >"$work/slurm.conf" <<CONF
ClusterName=stormcharge-selftest
SlurmctldHost=$host
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$work/munge/socket
CredType=cred/munge
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/slurmctld.log
SlurmdLogFile=$work/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
MpiDefault=none
ReturnToService=2
SlurmctldPort=16817
SlurmdPort=16818
NodeName=$host CPUs=$cpus State=UNKNOWN
PartitionName=selftest Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
export SLURM_CONF="$work/slurm.conf"
slurmctld
slurmd
for _ in $(seq 1 30); do
  sinfo -h -o %T 2>/dev/null | grep -qE '^(idle|mixed)' && break
  sleep 1
done
sinfo -h -o "%P %T %c" || { echo "slurm self-test: the node did not come up"; tail -n 20 "$work"/slurm*.log; exit 1; }

started=$(date +%s)
out="$work/slurm_out"
PATH="$bin_dir:$PATH" sbatch --wait --array=1-"$shards" --cpus-per-task=1 \
  --output="$work/task-%a.log" --chdir="$PWD" tools/slurm_sweep.sh "$config" "$out"
"$bin_dir/stormcharge" sweep-merge "$out"
"$bin_dir/stormcharge" sweep "$config" -o "$work/local_out" --quiet
if cmp -s "$out/summary.csv" "$work/local_out/summary.csv"; then
  echo "slurm self-test: passed: $shards array tasks, merged summary identical to the local sweep ($(( $(date +%s) - started )) s)"
else
  echo "slurm self-test: FAILED: the merged summary differs from the local sweep"
  diff "$out/summary.csv" "$work/local_out/summary.csv" | head -20
  exit 1
fi
