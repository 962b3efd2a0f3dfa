#!/bin/bash
# Runs a sharded sweep through a real Slurm scheduler on this machine and checks that the merged table equals the
# unsharded sweep. On a Debian machine as root it installs slurm-wlm and munge from the distribution, starts a
# one-node cluster on localhost (munged, slurmctld, slurmd), submits tools/slurm/sweep-array.sh as a job array with
# a dependent merge job exactly as tools/slurm/README.md describes, waits for both, and compares the tables with
# DuckDB (tools/Decohere.TableCompare). What the machine cannot provide (not root, no apt-get, packages not
# installable, daemons that do not start) ends the script with exit 0 and a printed reason ("skipped: ...", with the
# daemon's log); a failure of our part (the build, the job array, the merge, the comparison) exits 1. Takes about a minute when the packages install quickly.
#
#   sudo tools/slurm/test-local-cluster.sh          # or from .ci/run when CI is set
set -euo pipefail
cd "$(dirname "$0")/../.."
ROOT=$PWD

skip() { echo "slurm test skipped: $*"; exit 0; }
fail() { echo "slurm test FAILED: $*" >&2; exit 1; }

[[ $(id -u) == 0 ]] || skip "needs root to install and start slurm-wlm and munge"
command -v apt-get > /dev/null || skip "no apt-get (not a Debian machine)"

if ! command -v slurmctld > /dev/null || ! command -v munged > /dev/null; then
    echo "installing slurm-wlm and munge from the distribution"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -q > /tmp/decohere-slurm-apt.log 2>&1 || skip "apt-get update failed (see /tmp/decohere-slurm-apt.log)"
    apt-get install -y -q --no-install-recommends slurm-wlm munge >> /tmp/decohere-slurm-apt.log 2>&1 ||
        skip "slurm-wlm and munge cannot be installed here (see /tmp/decohere-slurm-apt.log)"
fi

WORK=$(mktemp -d /tmp/decohere-slurm.XXXXXX)
CONF=$WORK/etc
mkdir -p "$CONF" "$WORK/spool/ctld" "$WORK/spool/d" "$WORK/log" "$WORK/munge"
cleanup() {
    # The daemons detach; stop them through the controller, then by their pid files (read now: written late).
    [[ -n "${SLURM_CONF:-}" ]] && timeout 10 scontrol shutdown > /dev/null 2>&1 || true
    for pidfile in "$WORK/slurmctld.pid" "$WORK/slurmd.pid" "$WORK/munge/munged.pid"; do
        [[ -f $pidfile ]] && kill "$(cat "$pidfile")" 2> /dev/null || true
    done
    pkill -f "slurmctld -f $WORK/" 2> /dev/null || true
}
trap cleanup EXIT

# munge: its own key and socket in the work folder, so an existing munged is left alone.
SOCKET=$WORK/munge/munge.socket
dd if=/dev/urandom of="$WORK/munge/munge.key" bs=1024 count=1 status=none
chmod 600 "$WORK/munge/munge.key"
munged --force --key-file="$WORK/munge/munge.key" --socket="$SOCKET" \
    --pid-file="$WORK/munge/munged.pid" --log-file="$WORK/log/munged.log" --seed-file="$WORK/munge/seed" ||
    skip "munged did not start: $(tail -n 3 "$WORK/log/munged.log" 2>&1)"

CPUS=$(nproc)
PORT_CTLD=$((20000 + RANDOM % 10000))
cat > "$CONF/slurm.conf" << EOF
ClusterName=decohere-test
SlurmctldHost=localhost
SlurmctldPort=$PORT_CTLD
SlurmdPort=$((PORT_CTLD + 1))
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$SOCKET
CredType=cred/munge
StateSaveLocation=$WORK/spool/ctld
SlurmdSpoolDir=$WORK/spool/d
SlurmctldPidFile=$WORK/slurmctld.pid
SlurmdPidFile=$WORK/slurmd.pid
SlurmctldLogFile=$WORK/log/slurmctld.log
SlurmdLogFile=$WORK/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
ReturnToService=2
MpiDefault=none
SchedulerType=sched/backfill
NodeName=localhost CPUs=$CPUS State=UNKNOWN
PartitionName=local Nodes=localhost Default=YES MaxTime=INFINITE State=UP
EOF
export SLURM_CONF=$CONF/slurm.conf

echo "building the tool"
dotnet build src/Decohere.Cli -c Release -v q -nologo > "$WORK/log/build.log" 2>&1 || fail "build failed (see $WORK/log/build.log)"
dotnet build tools/Decohere.TableCompare -c Release -v q -nologo >> "$WORK/log/build.log" 2>&1 || fail "build failed (see $WORK/log/build.log)"
DLL=$ROOT/src/Decohere.Cli/bin/Release/net10.0/decohere.dll
[[ -f "$DLL" ]] || fail "no $DLL after the build"

slurmctld -f "$SLURM_CONF" || skip "slurmctld did not start: $(tail -n 3 "$WORK/log/slurmctld.log" 2>&1)"
slurmd -N localhost -f "$SLURM_CONF" || skip "slurmd did not start: $(tail -n 3 "$WORK/log/slurmd.log" 2>&1)"
for _ in $(seq 60); do
    [[ -f $WORK/slurmctld.pid && -f $WORK/slurmd.pid ]] && sinfo -h -o %T 2> /dev/null | grep -qE '^(idle|mixed|allocated)' && break
    sleep 1
done
sinfo -h -o %T 2> /dev/null | grep -qE '^(idle|mixed|allocated)' ||
    skip "the node did not come up: $(sinfo 2>&1 | tail -1); $(tail -n 3 "$WORK/log/slurmd.log" "$WORK/log/slurmctld.log" 2>&1)"
echo "cluster up: $(sinfo -h -o '%P %D %T %c')"

# The sweep of the Slurm README in small: two axes, three shards, the default and two named metrics.
N=3
OUT=$WORK/sharded
SINGLE=$WORK/single
export SHARDS=$N OUT SCENARIO=$ROOT/scenarios/demo.yaml
export VARY='modes.drum.bath.temperature=5mK:50mK:4:log;stages.squeeze.tones[1].coupling=4kHz:20kHz:3'
export METRICS='steady_squeezing_db:squeeze,max_re_lambda:squeeze,resolution_probability'
export DECOHERE="dotnet $DLL"
cd "$WORK"
jid=$(sbatch --parsable --array=0-$((N - 1)) --cpus-per-task=1 --export=ALL "$ROOT/tools/slurm/sweep-array.sh") ||
    fail "sbatch of the array was refused"
mid=$(sbatch --parsable --dependency=afterok:"$jid" --job-name=decohere-merge --output="$WORK/log/merge.log" \
    --wrap "$DECOHERE merge $OUT") || fail "sbatch of the merge job was refused"
echo "submitted array $jid and merge $mid"
for _ in $(seq 150); do
    [[ -z "$(squeue -h -j "$jid,$mid" 2> /dev/null)" ]] && break
    sleep 1
done
[[ -z "$(squeue -h -j "$jid,$mid" 2> /dev/null)" ]] && [[ -f $OUT/sweep.parquet ]] ||
    fail "no merged table after 150 s: $(squeue 2>&1 | tail -3); task logs: $(tail -n 3 "$WORK"/decohere-sweep-*.log "$WORK/log/merge.log" 2>&1)"

args=(sweep "$SCENARIO" --out "$SINGLE" --quiet)
IFS=';' read -r -a axes <<< "$VARY"
for axis in "${axes[@]}"; do args+=(--vary "$axis"); done
$DECOHERE "${args[@]}" --metrics "$METRICS" > /dev/null || fail "the unsharded sweep failed"

cd "$ROOT"
dotnet tools/Decohere.TableCompare/bin/Release/net10.0/Decohere.TableCompare.dll "$OUT/sweep.parquet" "$SINGLE/sweep.parquet" ||
    fail "the merged table differs from the unsharded sweep"
echo "slurm test passed: $N array tasks and a dependent merge gave the unsharded sweep's table"
