#!/usr/bin/env bash
# A real SLURM cluster on this host, running the shipped scripts end to end:
#   1. installs Debian's slurm-wlm and munge if they are missing (as root, with apt-get);
#   2. starts munged, slurmctld and slurmd from a generated slurm.conf in a temporary directory
#      (SlurmUser root, proctrack/linuxproc, task/none: no containers or cgroups needed);
#   3. submits submit.sh for all C60 isomers in 4 tasks, with the energy screen after the merge,
#      waits, and checks that the merged catalogue is byte-identical to a single-process run;
#   4. deletes one task's catalogue, checks that the merge refuses and names it with the
#      command to rerun it, reruns that task through submit.sh --only, and checks the bytes again;
#   5. submits all C82 in 2 tasks of 1 thread (about 20 CPU s each), waits until each task has
#      committed units, stops task 1 with scancel and task 2 with kill -9 of its cagerank
#      process, checks that the merge refuses, resubmits both with submit.sh --only 1,2, checks
#      that each resumed task says how many units it found committed, and compares the merged
#      bytes with the shipped catalogue (a single-process run; one is made if they differ);
#   6. stops the daemons by the PIDs in their pid files (also on failure).
# Run alone: bash scripts/slurm/test-cluster.sh (about two minutes on 2 idle cores once built;
# needs root for the install and the daemons). CLUSTER_SIZE (default 60) and CLUSTER_TASKS
# (default 4) change the first run, KILL_SIZE (default 82) the killed one.
set -euo pipefail
repo=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
size="${CLUSTER_SIZE:-60}"
tasks="${CLUSTER_TASKS:-4}"
kill_size="${KILL_SIZE:-82}"
say() { echo "test-cluster: $*"; }
fail() { echo "test-cluster: FAILED: $*" >&2; exit 1; }

if ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null \
    || ! command -v sbatch >/dev/null || ! command -v munged >/dev/null; then
    say "installing slurm-wlm and munge"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -q >/dev/null
    apt-get install -y -q slurm-wlm munge >/dev/null
fi

say "building cagerank"
(cd "$repo" && cargo build --release --quiet --bin cagerank)
bin="$repo/target/release/cagerank"

tmp=$(mktemp -d /tmp/cagerank-slurm.XXXXXX)
chmod 755 "$tmp"
stop_daemons() {
    for pidfile in "$tmp/slurmd.pid" "$tmp/slurmctld.pid" "$tmp/munged.pid"; do
        if [ -s "$pidfile" ]; then
            pid=$(cat "$pidfile")
            kill "$pid" 2>/dev/null || true
            for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
            kill -9 "$pid" 2>/dev/null || true
        fi
    done
}
on_exit() {
    status=$?
    stop_daemons
    if [ "$status" -ne 0 ]; then
        for log in slurmctld.log slurmd.log munged.log; do
            [ -f "$tmp/$log" ] && { echo "--- $log (last lines)"; tail -n 15 "$tmp/$log"; } >&2
        done
        for out in "$tmp"/run/logs/*.out; do
            [ -f "$out" ] && { echo "--- $out"; tail -n 5 "$out"; } >&2
        done
    fi
    rm -rf "$tmp"
}
trap on_exit EXIT

say "starting munged, slurmctld and slurmd in $tmp"
mungekey --create --keyfile="$tmp/munge.key" --force >/dev/null 2>&1 \
    || dd if=/dev/urandom of="$tmp/munge.key" bs=1024 count=1 status=none
chmod 600 "$tmp/munge.key"
munged --force --key-file="$tmp/munge.key" --socket="$tmp/munge.socket" \
    --pid-file="$tmp/munged.pid" --log-file="$tmp/munged.log" --seed-file="$tmp/munged.seed"

host=$(hostname -s)
cpus=$(nproc)
# Ports from this shell's PID, so that two test runs on one host do not collide.
port=$((20000 + ($$ % 10000) * 2))
mkdir -p "$tmp/state" "$tmp/spool"
cat > "$tmp/slurm.conf" <<CONF
ClusterName=cagerank-test
SlurmctldHost=$host
SlurmctldPort=$port
SlurmdPort=$((port + 1))
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$tmp/munge.socket
StateSaveLocation=$tmp/state
SlurmdSpoolDir=$tmp/spool
SlurmctldPidFile=$tmp/slurmctld.pid
SlurmdPidFile=$tmp/slurmd.pid
SlurmctldLogFile=$tmp/slurmctld.log
SlurmdLogFile=$tmp/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
MpiDefault=none
JobCompType=jobcomp/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
ReturnToService=2
SlurmdTimeout=60
NodeName=$host CPUs=$cpus State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
export SLURM_CONF="$tmp/slurm.conf"
slurmctld -c -f "$SLURM_CONF"
slurmd -f "$SLURM_CONF"
for _ in $(seq 60); do
    sinfo -h -o '%T' 2>/dev/null | grep -q -E '^(idle|mixed|allocated)' && break
    sleep 1
done
sinfo -h -o '%T' | grep -q -E '^(idle|mixed|allocated)' || fail "the node did not come up: $(sinfo 2>&1)"

# Waits until none of the given jobs is queued or running.
wait_jobs() {
    for _ in $(seq 600); do
        [ -z "$(squeue -h -j "$1" 2>/dev/null)" ] && return 0
        sleep 1
    done
    fail "jobs $1 still queued after 10 minutes: $(squeue)"
}
# The job IDs printed by submit.sh, comma-separated.
job_ids() { awk '{print $2}' "$1" | paste -sd, -; }

name="fullerene-c$size-all.cgr"
say "single-process reference run of C$size"
"$bin" enumerate "$size" --threads 1 --quiet --count-only --catalogue "$tmp/single" >/dev/null

say "submitting all C$size in $tasks tasks, merge and screen"
export SIZES="$size" TASKS="$tasks" OUT="$tmp/run" THREADS=1 CAGERANK="$bin" SCREEN=1 CANDIDATES=2
"$repo/scripts/slurm/submit.sh" > "$tmp/jobs"
cat "$tmp/jobs"
wait_jobs "$(job_ids "$tmp/jobs")"
[ -f "$OUT/merged/$name" ] || fail "no merged catalogue $OUT/merged/$name"
cmp "$tmp/single/$name" "$OUT/merged/$name" || fail "merged catalogue differs from the single run"
say "merged catalogue is byte-identical to the single run"
[ "$(wc -l < "$OUT/screen-c$size.csv")" -ge 2 ] || fail "the screen wrote no results"
say "screen wrote $OUT/screen-c$size.csv"

say "deleting task 2's catalogue: the merge must refuse and name it"
rm -rf "$OUT/shards/task-2" "$OUT/merged"
if SCRIPTS="$repo/scripts/slurm" bash "$repo/scripts/slurm/merge.sbatch" 2> "$tmp/refusal"; then
    fail "the merge accepted a missing task"
fi
cat "$tmp/refusal"
grep -q "task(s) 2 of $tasks" "$tmp/refusal" && grep -q "submit.sh --only 2" "$tmp/refusal" \
    || fail "the refusal does not name task 2 and the command to rerun it"

say "rerunning task 2 alone, then merging again"
SCREEN=0 "$repo/scripts/slurm/submit.sh" --only 2 > "$tmp/jobs2"
cat "$tmp/jobs2"
wait_jobs "$(job_ids "$tmp/jobs2")"
cmp "$tmp/single/$name" "$OUT/merged/$name" || fail "merged catalogue differs after the rerun"
say "after the rerun the merged catalogue is byte-identical again"

# --- A killed task, resubmitted, gives the same bytes --------------------------------------
kname="fullerene-c$kill_size-all.cgr"
kout="$tmp/kill"
say "submitting all C$kill_size in 2 tasks of 1 thread, to be killed part-way"
export SIZES="$kill_size" TASKS=2 OUT="$kout" THREADS=1 SCREEN=0
"$repo/scripts/slurm/submit.sh" > "$tmp/kjobs"
cat "$tmp/kjobs"
array=$(awk '$1 == "array" {print $2}' "$tmp/kjobs")
# Committed batches of task K: one part-*.part file each (catalogue::resume). Batches are
# sized to take about 3 s after a few quick doubling ones, so 8 of them is some 6-10 s into a
# task of about 20 s: each task is stopped as soon as it has that many.
parts() { compgen -G "$kout/shards/task-$1/$kname.work/part-*.part" | wc -l; }
kill_at="${KILL_AT_BATCHES:-8}"
# Task 2's cagerank process: the batch script execs it, so it is among the job's PIDs.
cagerank_pid() {
    local pid victim=""
    for pid in $(scontrol listpids "${array}_2" 2>/dev/null | awk 'NR > 1 {print $1}'); do
        [ "$(cat "/proc/$pid/comm" 2>/dev/null)" = cagerank ] && victim="$pid"
    done
    [ -n "$victim" ] || victim=$(pgrep -f -- "--shard 2/2 .*$kout/shards/task-2" | head -n 1 || true)
    echo "$victim"
}
cancelled=0 killed=0
for _ in $(seq 1200); do
    if [ "$cancelled" = 0 ] && [ "$(parts 1)" -ge "$kill_at" ]; then
        say "scancel of task 1 (${array}_1) after $(parts 1) committed batches"
        scancel "${array}_1"
        cancelled=1
    fi
    if [ "$killed" = 0 ] && [ "$(parts 2)" -ge "$kill_at" ]; then
        victim=$(cagerank_pid)
        [ -n "$victim" ] || fail "cannot find task 2's cagerank process"
        say "kill -9 of task 2's cagerank process ($victim) after $(parts 2) committed batches"
        kill -9 "$victim"
        killed=1
    fi
    [ "$cancelled$killed" = 11 ] && break
    [ -z "$(squeue -h -j "$array" 2>/dev/null)" ] && fail "a C$kill_size task ended before it was stopped"
    sleep 0.25
done
[ "$cancelled$killed" = 11 ] || fail "the C$kill_size tasks did not commit $kill_at batches in 5 minutes"
wait_jobs "$(job_ids "$tmp/kjobs")"
for k in 1 2; do
    [ -e "$kout/shards/task-$k/$kname" ] && fail "task $k finished before it was killed"
    say "task $k was stopped with $(parts "$k") committed batch(es)"
done
[ -e "$kout/merged/$kname" ] && fail "a merge ran although its tasks were killed"
if SCRIPTS="$repo/scripts/slurm" bash "$repo/scripts/slurm/merge.sbatch" 2> "$tmp/krefusal"; then
    fail "the merge accepted killed tasks"
fi
grep -q "task(s) 1,2 of 2" "$tmp/krefusal" || fail "the refusal does not name tasks 1 and 2: $(cat "$tmp/krefusal")"

say "resubmitting tasks 1 and 2 (submit.sh --only 1,2), then merging"
"$repo/scripts/slurm/submit.sh" --only 1,2 > "$tmp/kjobs2"
cat "$tmp/kjobs2"
wait_jobs "$(job_ids "$tmp/kjobs2")"
array2=$(awk '$1 == "array" {print $2}' "$tmp/kjobs2")
for k in 1 2; do
    log="$kout/logs/cagerank-enumerate-${array2}_$k.out"
    line=$(grep -o "resumed: [0-9]* of [0-9]* units were already committed" "$log" || true)
    [ -n "$line" ] || fail "task $k's log does not say that it resumed: $(cat "$log")"
    say "task $k $line"
done
[ -f "$kout/merged/$kname" ] || fail "no merged catalogue $kout/merged/$kname"
if cmp -s "$repo/catalogues/$kname" "$kout/merged/$kname"; then
    say "merged C$kill_size after the kills is byte-identical to the shipped catalogue"
else
    # The shipped file may predate a format change: a fresh single run decides.
    say "merged C$kill_size differs from the shipped catalogue; making a single-process run"
    "$bin" enumerate "$kill_size" --threads 2 --quiet --count-only --catalogue "$tmp/single" >/dev/null
    cmp "$tmp/single/$kname" "$kout/merged/$kname" || fail "merged C$kill_size differs from the single run"
    say "merged C$kill_size is byte-identical to the single run (the shipped catalogue is stale)"
fi
echo "cluster: 2 passed, 0 failed"
