#!/bin/bash
# shellcheck disable=SC2015 # `A && B || fail ...`: fail unless both hold.
# Runs the README's Slurm job-array recipe on a real, throw-away single-node
# Slurm cluster and checks that the merged table equals a single run.
#
#   scripts/cluster-check.sh [--keep]
#
# Needs root on a Debian-like machine (it installs slurmctld, slurmd,
# slurm-client and munge with apt-get when they are missing). Everything else
# lives in a temporary folder: a fresh munge key, slurm.conf, the daemons'
# state and logs, and the job folder. The kzero binary is $KZERO_BIN, else
# target/release/kzero (under $CARGO_TARGET_DIR if set), brought up to date
# with cargo build --release when cargo is on the PATH.
#
# The three code blocks of the README's cluster section (the batch script,
# the submission, the resubmission of a cancelled task) are read from
# README.md and run exactly as printed, with HOME pointing at a folder where
# $HOME/kzero/target/release/kzero is the binary under test. In the same run:
# task 1 is requeued (scontrol requeue) while it computes, task 2 is
# cancelled (scancel) while it computes and then submitted again, and task 3
# starts on an empty part file. The merged table must have the same rows,
# values, errors and bits as one `kzero table` run.
#
# It stops the daemons it started (by their process ids) and removes its
# folder (kept with --keep). Any failure, including daemons that do not
# start, is one line on stderr and exit 1; the check never passes without
# running the jobs.
set -euo pipefail

ROOT=$(cd "$(dirname "$0")/.." && pwd)
KEEP=0
case "${1:-}" in
    "") ;;
    --keep) KEEP=1 ;;
    *) echo "cluster-check: unknown argument '$1' (usage: scripts/cluster-check.sh [--keep])" >&2; exit 2 ;;
esac

T0=$(date +%s)
say() { echo "cluster-check: $*" >&2; }
fail() { say "FAIL: $*"; exit 1; }
elapsed() { echo "$(($(date +%s) - T0)) s"; }

[ "$(id -u)" = 0 ] || fail "needs root (it starts slurmctld, slurmd and munged as root)"

# --- Slurm and munge ---------------------------------------------------------
need=()
for p in slurmctld:slurmctld slurmd:slurmd sbatch:slurm-client munged:munge; do
    command -v "${p%%:*}" >/dev/null 2>&1 || need+=("${p#*:}")
done
if [ ${#need[@]} -gt 0 ]; then
    command -v apt-get >/dev/null 2>&1 || fail "missing ${need[*]} and no apt-get to install them"
    say "installing ${need[*]} with apt-get"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >/dev/null 2>&1 || fail "apt-get update failed (no network to the package registry?)"
    apt-get install -y -qq "${need[@]}" >/dev/null 2>&1 || fail "apt-get install ${need[*]} failed"
fi
MUNGEKEY=$(command -v mungekey || true)

# --- the binary under test ---------------------------------------------------
if [ -n "${KZERO_BIN:-}" ]; then
    BIN=$KZERO_BIN
else
    BIN=${CARGO_TARGET_DIR:-$ROOT/target}/release/kzero
    if command -v cargo >/dev/null 2>&1; then
        # Up to date with the checkout (quick when it already is).
        (cd "$ROOT" && cargo build --release --quiet -p kzero) || fail "cargo build --release failed"
    fi
fi
[ -x "$BIN" ] || fail "no kzero binary at $BIN (build it with cargo build --release, or set KZERO_BIN)"
BIN=$(cd "$(dirname "$BIN")" && pwd)/$(basename "$BIN")

# --- the README's blocks -----------------------------------------------------
# Prints the fenced block that follows the line equal to $1.
readme_block() {
    awk -v marker="$1" '
        found == 0 && $0 == marker { found = 1; next }
        found == 1 && /^```/ { found = 2; next }
        found == 2 && /^```/ { exit }
        found == 2 { print }
    ' "$ROOT/README.md"
}
# shellcheck disable=SC2016 # the marker is literal README text
SCRIPT=$(readme_block '`table-array.sbatch`:')
SUBMIT=$(readme_block 'hold the part files (jobs run in the folder they were submitted from):')
RESUBMIT=$(readme_block 'Submit that task again (here task 2) and let the merge wait for it:')
[ -n "$SCRIPT" ] || fail "README.md: no table-array.sbatch block in the cluster section"
[ -n "$SUBMIT" ] || fail "README.md: no submission block in the cluster section"
[ -n "$RESUBMIT" ] || fail "README.md: no resubmission block in the cluster section"
M=$(sed -n 's/^M=\([0-9]*\)$/\1/p' <<<"$SCRIPT")
NMAX=$(grep -o -- '--n-max [0-9]*' <<<"$SCRIPT" | awk '{print $2}')
DIGITS=$(grep -o -- '--digits [0-9]*' <<<"$SCRIPT" | awk '{print $2}')
grep -q -- '^#SBATCH --array=1-3$' <<<"$SCRIPT" && [ "$M" = 3 ] && [ "$NMAX" = 8 ] && [ -n "$DIGITS" ] \
    || fail "README.md: the recipe is not the array of M = 3 over n <= 8 this check expects"
grep -q '^K=2$' <<<"$RESUBMIT" || fail "README.md: the resubmission block does not resubmit task 2"

# --- a throw-away cluster ----------------------------------------------------
WORK=$(mktemp -d /tmp/kzero-cluster.XXXXXX)
chmod 700 "$WORK"
PIDS=()
export SLURM_CONF=$WORK/slurm.conf
# Step daemons of this cluster (slurmstepd started by our slurmd, which
# passes our SLURM_CONF on).
our_stepds() {
    local d
    for d in /proc/[0-9]*; do
        [ "$(cat "$d/comm" 2>/dev/null)" = slurmstepd ] || continue
        { tr '\0' '\n' <"$d/environ"; } 2>/dev/null | grep -qxF "SLURM_CONF=$SLURM_CONF" && echo "${d#/proc/}"
    done
    return 0
}
cleanup() {
    local rc=$?
    if [ ${#PIDS[@]} -gt 0 ]; then
        # Jobs first, then their step daemons, then the daemons.
        scancel --quiet --user=root >/dev/null 2>&1 || true
        for _ in $(seq 1 20); do
            [ -z "$(squeue -h 2>/dev/null)" ] && break
            sleep 0.5
        done
        for _ in $(seq 1 40); do
            [ -z "$(our_stepds)" ] && break
            sleep 0.25
        done
        for p in $(our_stepds); do kill -9 "$p" 2>/dev/null || true; done
        for ((i = ${#PIDS[@]} - 1; i >= 0; i--)); do
            kill "${PIDS[$i]}" 2>/dev/null || true
            for _ in $(seq 1 20); do
                kill -0 "${PIDS[$i]}" 2>/dev/null || break
                sleep 0.25
            done
            kill -9 "${PIDS[$i]}" 2>/dev/null || true
        done
    fi
    if [ "$KEEP" = 1 ]; then
        say "files kept in $WORK"
    else
        rm -rf "$WORK"
    fi
    exit "$rc"
}
trap cleanup EXIT
trap 'exit 1' INT TERM

TC=$(date +%s)
port_free() { ! (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }
PORT=$((20000 + RANDOM % 20000))
while ! port_free "$PORT" || ! port_free $((PORT + 1)); do PORT=$((PORT + 2)); done
NODE=$(hostname -s)
CPUS=$(nproc)
mkdir -p "$WORK/munge" "$WORK/state" "$WORK/spool" "$WORK/log"
chmod 700 "$WORK/munge"
if [ -n "$MUNGEKEY" ]; then
    "$MUNGEKEY" --create --keyfile="$WORK/munge/munge.key" 2>/dev/null || fail "mungekey could not write a key"
else
    dd if=/dev/urandom of="$WORK/munge/munge.key" bs=1024 count=1 2>/dev/null
fi
chmod 600 "$WORK/munge/munge.key"
SOCKET=$WORK/munge/munge.socket
cat >"$SLURM_CONF" <<EOF
# Throw-away single-node cluster of scripts/cluster-check.sh.
ClusterName=kzerocheck
SlurmctldHost=$NODE(127.0.0.1)
SlurmUser=root
SlurmdUser=root
SlurmctldPort=$PORT
SlurmdPort=$((PORT + 1))
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$SOCKET,cred_expire=10
StateSaveLocation=$WORK/state
SlurmdSpoolDir=$WORK/spool
SlurmctldPidFile=$WORK/slurmctld.pid
SlurmdPidFile=$WORK/slurmd.pid
SlurmctldLogFile=$WORK/log/slurmctld.log
SlurmdLogFile=$WORK/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/backfill
SchedulerParameters=sched_interval=2,bf_interval=2
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
JobCompType=jobcomp/none
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
KillWait=5
MinJobAge=3600
NodeName=$NODE NodeAddr=127.0.0.1 CPUs=$CPUS State=UNKNOWN
PartitionName=check Nodes=$NODE Default=YES MaxTime=INFINITE State=UP
EOF

# The last line of a daemon log that says what went wrong.
why() {
    grep -h -i -E 'error|fatal|denied|cannot|unable' "$@" 2>/dev/null \
        | grep -v -i -E 'pmix|mpi|MailProg|state file|backup state|No reservation|Jobs may be lost|Reservations may be lost' \
        | tail -n 1 | tr -s ' \t' ' ' | cut -c1-200
}
started() { kill -0 "$1" 2>/dev/null; }

munged --foreground --force --socket="$SOCKET" --key-file="$WORK/munge/munge.key" \
    --pid-file="$WORK/munge/munged.pid" --log-file="$WORK/log/munged.log" \
    --seed-file="$WORK/munge/munged.seed" >"$WORK/log/munged.out" 2>&1 &
PIDS+=($!)
ok=0
for _ in $(seq 1 40); do
    started "${PIDS[0]}" || break
    if munge -n -S "$SOCKET" 2>/dev/null | unmunge -S "$SOCKET" >/dev/null 2>&1; then ok=1; break; fi
    sleep 0.25
done
[ "$ok" = 1 ] || fail "munged did not start: $(why "$WORK/log/munged.out" "$WORK/log/munged.log")"

slurmctld -D -c >"$WORK/log/slurmctld.out" 2>&1 &
PIDS+=($!)
ok=0
for _ in $(seq 1 60); do
    started "${PIDS[1]}" || break
    if scontrol ping 2>/dev/null | grep -q 'is UP'; then ok=1; break; fi
    sleep 0.5
done
[ "$ok" = 1 ] || fail "slurmctld did not start: $(why "$WORK/log/slurmctld.out" "$WORK/log/slurmctld.log")"

slurmd -D -N "$NODE" >"$WORK/log/slurmd.out" 2>&1 &
PIDS+=($!)
ok=0
for _ in $(seq 1 60); do
    started "${PIDS[2]}" || break
    if [ "$(sinfo -h -n "$NODE" -o %T 2>/dev/null)" = idle ]; then ok=1; break; fi
    sleep 0.5
done
[ "$ok" = 1 ] || fail "slurmd did not start or its node is not idle ($(sinfo -h -n "$NODE" -o '%T %E' 2>/dev/null)): $(why "$WORK/log/slurmd.out" "$WORK/log/slurmd.log" "$WORK/log/slurmctld.log")"
say "cluster up in $(($(date +%s) - TC)) s: slurmctld, slurmd ($CPUS CPUs), munged; ports $PORT-$((PORT + 1))"

# --- the single run to compare with ----------------------------------------
JOB=$WORK/job
FAKEHOME=$WORK/home
mkdir -p "$JOB" "$FAKEHOME/kzero/target/release"
ln -s "$BIN" "$FAKEHOME/kzero/target/release/kzero"
T1=$(date +%s)
"$BIN" table --n-max "$NMAX" --digits "$DIGITS" --threads "$CPUS" --quiet --out "$WORK/single.csv" \
    || fail "the single kzero table run failed"
say "single run (n <= $NMAX, $DIGITS digits, $CPUS threads): $(($(date +%s) - T1)) s"

# --- the recipe, with its faults ---------------------------------------------
rows() {
    if [ -f "$1" ]; then grep -c '^[0-9]' "$1" || true; else echo 0; fi
}
task_state() { squeue -h -j "$1" -o %T 2>/dev/null | head -n 1; }
# Waits until part file $1 holds at least one row while task $2 runs.
wait_computing() {
    local t=0
    while [ "$t" -lt 1200 ]; do
        if [ "$(task_state "$2")" = RUNNING ] && [ "$(rows "$1")" -ge 1 ]; then return 0; fi
        sleep 0.25
        t=$((t + 1))
    done
    fail "task $2 never got to compute (state: $(task_state "$2"))"
}
STOP_LINE="kzero: stopped by SIGTERM; finished rows are kept in"

cd "$JOB"
printf '%s\n' "$SCRIPT" >table-array.sbatch
printf '%s\n' "$SUBMIT" >submit.sh
printf '%s\n' "$RESUBMIT" >resubmit.sh
# A kill right after the part file was created leaves it empty.
: >part-3.csv
T2=$(date +%s)
# shellcheck disable=SC1091
ids=$(HOME=$FAKEHOME bash -c 'set -euo pipefail; unset KZERO; . ./submit.sh; echo "$jid $mid"') \
    || fail "the README's submission block failed"
read -r JID MID <<<"$ids"
[ -n "$JID" ] && [ -n "$MID" ] || fail "the README's submission block gave no job ids"
say "submitted array $JID and merge $MID"

wait_computing part-1.csv "${JID}_1"
cp part-1.csv "$WORK/part-1.before"
R1=$(rows part-1.csv)
scontrol requeue "${JID}_1" || fail "scontrol requeue ${JID}_1 failed"
say "requeued task 1 at $R1 rows"

wait_computing part-2.csv "${JID}_2"
cp part-2.csv "$WORK/part-2.before"
R2=$(rows part-2.csv)
scancel "${JID}_2" || fail "scancel ${JID}_2 failed"
for _ in $(seq 1 120); do
    [ -z "$(task_state "${JID}_2")" ] && break
    sleep 0.25
done
[ -z "$(task_state "${JID}_2")" ] || fail "task 2 did not end after scancel"
say "cancelled task 2 at $R2 rows"
jid2=$(HOME=$FAKEHOME bash -c 'set -euo pipefail; unset KZERO; jid=$1; mid=$2; . ./resubmit.sh; echo "$jid2"' _ "$JID" "$MID") \
    || fail "the README's resubmission block failed"
say "task 2 submitted again as $jid2"

t=0
while [ -n "$(squeue -h -j "$JID,$jid2,$MID" 2>/dev/null)" ]; do
    [ "$t" -lt 3600 ] || fail "the jobs did not finish within 15 minutes: $(squeue -h -o '%i %T %r' | tr '\n' ';')"
    sleep 0.25
    t=$((t + 1))
done
merge_state=$(scontrol show job "$MID" 2>/dev/null | grep -o 'JobState=[A-Z_]*' | head -n 1)
[ "$merge_state" = JobState=COMPLETED ] || fail "the merge job ended as ${merge_state:-unknown}: $(tail -n 1 logs/kzero-merge.out 2>/dev/null)"
say "array, resubmission and merge done in $(($(date +%s) - T2)) s"

# --- what must hold ------------------------------------------------------------
[ -f table.csv ] || fail "the merge wrote no table.csv"
# Rows without the wall-time column (seconds) and the row checksum (check),
# which covers the seconds, column line included.
values() {
    awk -F, '/^#/ { next }
        !s { for (i = 1; i <= NF; i++) { if ($i == "seconds") s = i; if ($i == "check") c = i } }
        { out = ""; for (i = 1; i <= NF; i++) if (i != s && i != c) out = out (out == "" ? "" : ",") $i; print out }' "$1"
}
diff <(values "$WORK/single.csv") <(values table.csv) >/dev/null \
    || fail "the merged table differs from the single run: $(diff <(values "$WORK/single.csv") <(values table.csv) | head -n 3 | tr '\n' ' ')"
diff <(grep '^# setting\.' "$WORK/single.csv") <(grep '^# setting\.' table.csv) >/dev/null \
    || fail "the merged table has other settings than the single run"
N=$(rows table.csv)
[ "$N" = $((NMAX * (NMAX + 1) / 2)) ] || fail "table.csv has $N rows, not every state with n <= $NMAX"
[ "$(grep -c '^# merged_from:' table.csv)" = 3 ] || fail "table.csv does not name three merged parts"

F1=$(rows part-1.csv)
F2=$(rows part-2.csv)
[ "$R1" -lt "$F1" ] || fail "the requeue landed after task 1 had finished ($R1 of $F1 rows); the tasks are too short"
[ "$R2" -lt "$F2" ] || fail "the cancel landed after task 2 had finished ($R2 of $F2 rows); the tasks are too short"
grep -q '^# resumed_utc:' part-1.csv || fail "the requeued task 1 did not continue its part file"
grep -q '^# resumed_utc:' part-2.csv || fail "the resubmitted task 2 did not continue its part file"
# Rows finished before the fault were kept byte for byte (time column included).
for k in 1 2; do
    while IFS= read -r line; do
        grep -qxF -- "$line" "part-$k.csv" || fail "row '$line' of task $k was lost or recomputed"
    done < <(grep '^[0-9]' "$WORK/part-$k.before")
done
log1=$(ls logs/kzero-"${JID}"_1.out 2>/dev/null || true)
log2=$(ls logs/kzero-"${JID}"_2.out 2>/dev/null || true)
grep -q "^$STOP_LINE part-1.csv; to continue, run the same command with --resume\$" "${log1:-/dev/null}" \
    || fail "task 1's log has no 'stopped by SIGTERM' line from the requeue: $(tail -n 2 "${log1:-/dev/null}" | tr '\n' ' ')"
grep -q "^$STOP_LINE part-2.csv; to continue, run the same command with --resume\$" "${log2:-/dev/null}" \
    || fail "task 2's log has no 'stopped by SIGTERM' line from the cancel: $(tail -n 2 "${log2:-/dev/null}" | tr '\n' ' ')"
# Task 3 started the work on its empty file through the recipe's --resume.
grep -q '^# command: .* --resume$' part-3.csv && ! grep -q '^# resumed_utc:' part-3.csv \
    || fail "task 3 did not start the work on its empty part file with --resume"

say "pass: merged table = single run ($N rows, n <= $NMAX, $DIGITS digits); task 1 requeued at $R1/$F1 rows, task 2 cancelled at $R2/$F2 rows and resubmitted, task 3 started on an empty part file; total $(elapsed)"
