#!/bin/bash
# Runs a small sweep through a real single-node Slurm (controller, node daemon and munge
# from the Debian packages, configured for localhost) and checks that the collected
# sweep.csv equals the one of a local run. Needs root (it writes /etc/slurm/slurm.conf and
# starts the daemons) and installs slurm-wlm and munge with apt-get when they are missing.
# Usage: bash tests/slurm/run.sh   (from the repository root; builds the release binary)
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
cd "$root"
if ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null; then
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurm-wlm munge
fi
cargo build --release -p antinode
bin="$root/target/release/antinode"
work=$(mktemp -d /tmp/antinode-slurm.XXXXXX)
cleanup() {
    for p in slurmd slurmctld; do
        [ -f "$work/$p.pid" ] && kill "$(cat "$work/$p.pid")" 2>/dev/null || true
    done
    [ -n "$munge_pid" ] && kill "$munge_pid" 2>/dev/null || true
}
munge_pid=""
trap cleanup EXIT

# munge: a key if there is none, then the daemon.
if [ ! -s /etc/munge/munge.key ]; then
    mkdir -p /etc/munge
    dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 status=none
    chown munge:munge /etc/munge/munge.key 2>/dev/null || true
    chmod 400 /etc/munge/munge.key
fi
mkdir -p /run/munge && chown munge:munge /run/munge 2>/dev/null || true
if ! pgrep -x munged >/dev/null; then
    su -s /bin/sh munge -c "munged --force" 2>/dev/null || munged --force
    munge_pid=$(pgrep -x -n munged || true)
fi

cpus=$(nproc)
mkdir -p /etc/slurm "$work/spool/ctld" "$work/spool/d"
cat > /etc/slurm/slurm.conf <<CONF
ClusterName=antinode-test
SlurmctldHost=localhost
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/backfill
StateSaveLocation=$work/spool/ctld
SlurmdSpoolDir=$work/spool/d
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/slurmctld.log
SlurmdLogFile=$work/slurmd.log
ReturnToService=2
NodeName=localhost CPUs=$cpus State=UNKNOWN
PartitionName=debug Nodes=localhost Default=YES MaxTime=INFINITE State=UP
CONF
slurmctld
slurmd
for _ in $(seq 1 60); do
    sinfo -h -o %T 2>/dev/null | grep -qE "idle|mixed" && break
    sleep 1
done
sinfo

# A small sweep (invented scenario): the empty PEC box of the CLI tests, three heights.
cat > "$work/base.toml" <<TOML
title = "Invented test scenario: small empty PEC box"
[cavity]
shape = "box"
size = [200.0, 170.0, 120.0]
walls = "pec"
[mesh]
order = 1
per_wavelength = 8.0
max_size = 20.0
[solve]
target = 1.3
count = 4
TOML
cat > "$work/sweep.toml" <<TOML
geometry = "base.toml"
run = ["modes"]
[options]
modes = ["--no-fields"]
[[parameter]]
key = "cavity.size.2"
values = [110.0, 120.0, -5.0, 130.0]
TOML
"$bin" sweep "$work/sweep.toml" -o "$work/local" --jobs 1
"$bin" sweep "$work/sweep.toml" -o "$work/cluster" --slurm --partition debug --time 0:10:00
bash "$work/cluster/slurm/submit.sh"
for _ in $(seq 1 300); do
    [ -z "$(squeue -h 2>/dev/null)" ] && break
    sleep 1
done
if [ -n "$(squeue -h)" ]; then
    echo "slurm jobs still queued after 300 s:"; squeue; exit 1
fi
cat "$work"/cluster/logs/slurm-collect-*.log
cmp "$work/local/sweep.csv" "$work/cluster/sweep.csv"
echo "slurm sweep: collected sweep.csv equals the local run's ($(grep -c '^mode' "$work/cluster/sweep.csv") mode rows)"
echo "1 passed, 0 failed"
