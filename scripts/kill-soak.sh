#!/usr/bin/env bash
# Kill-anywhere soak for `kzero table` (not a default test; see tests/README.md).
#
# Runs one table without interruption (the reference), then runs the same
# table again and stops it at KILLS random moments with SIGKILL, SIGINT and
# SIGTERM in turn. Every run after the first of a cycle is started as the
# job-array recipe starts it: with --resume whenever the file exists. On
# every other stop, a second run on the same file is started while the
# first one works (alternately with --resume and with --force); it must be
# refused at once (exit 2, one line) and change nothing. When a run
# finishes before its signal, its table is compared with the reference and a
# new cycle starts on a fresh file, until KILLS signals were delivered; the
# last cycle is then finished with --resume and compared too.
#
# A cycle passes when its finished table has the same (n, l) rows as the
# reference, each once, with the same values (every column but the wall
# time). Exit 0 when every check passed, 1 otherwise. Figures on stdout.
#
# Usage: scripts/kill-soak.sh [KZERO_BINARY]
# Settings (environment): N_MAX (40), L_MAX (1), DIGITS (10), THREADS (2),
# KILLS (30), SEED (random), WORK (a new temporary folder).
set -u
set -m # own process groups: background runs receive SIGINT like a shell's jobs

BIN=${1:-${KZERO:-target/release/kzero}}
N_MAX=${N_MAX:-40}
L_MAX=${L_MAX:-1}
DIGITS=${DIGITS:-10}
THREADS=${THREADS:-2}
KILLS=${KILLS:-30}
SEED=${SEED:-$$}
RANDOM=$SEED
WORK=${WORK:-$(mktemp -d "${TMPDIR:-/tmp}/kzero-soak.XXXXXX")}
[ -x "$BIN" ] || { echo "kill-soak: no kzero binary at $BIN (build with cargo build --release)" >&2; exit 1; }
BIN=$(cd "$(dirname "$BIN")" && pwd)/$(basename "$BIN")
cd "$WORK" || exit 1

ARGS=(table --n-max "$N_MAX" --l-max "$L_MAX" --digits "$DIGITS" --threads "$THREADS" --quiet)
failures=0
fail() { echo "FAIL: $*"; failures=$((failures + 1)); }

# Value columns (all but the wall time), one row per line, sorted.
values() { grep -v '^#' "$1" | tail -n +2 | cut -d, -f1-7 | sort; }
now() { date +%s.%N; }

echo "kill-soak: $BIN ${ARGS[*]}"
echo "kill-soak: work folder $WORK, seed $SEED, load $(cut -d' ' -f1-3 /proc/loadavg), $(nproc) cores"
t0=$(now)
"$BIN" "${ARGS[@]}" --out ref.csv || { echo "kill-soak: the reference run failed" >&2; exit 1; }
ref_secs=$(echo "$(now) - $t0" | bc)
values ref.csv > ref.values
rows=$(wc -l < ref.values)
echo "reference: $rows rows in ${ref_secs}s"

# Random delay in seconds, uniform in [0.05, 2 * ref / KILLS + 0.05]:
# on average a cycle is stopped about KILLS/2 times before it finishes.
delay() {
    awk -v r="$RANDOM" -v t="$ref_secs" -v k="$KILLS" 'BEGIN { printf "%.3f", 0.05 + (r / 32767) * 2 * t / k }'
}

check_cycle() { # $1 file, $2 label
    local f=$1
    if ! values "$f" > got.values; then fail "$2: unreadable"; return; fi
    local dups
    dups=$(cut -d, -f1-2 got.values | uniq -d | head -3 | tr '\n' ' ')
    [ -z "$dups" ] || fail "$2: duplicate rows $dups"
    if diff -q ref.values got.values > /dev/null; then
        echo "$2: $(wc -l < got.values) rows, identical to the reference"
        cycles_ok=$((cycles_ok + 1))
    else
        fail "$2: differs from the reference ($(wc -l < got.values) rows; diff in $WORK/$2.diff)"
        diff ref.values got.values > "$2.diff"
    fi
}

signals=(KILL INT TERM)
declare -A sent=([KILL]=0 [INT]=0 [TERM]=0)
delivered=0
cycle=1
cycles_ok=0
finished_early=0
before_first_row=0
hint_lines=0
second_runs=0
second_refused=0
resume_refusals=0
file=cycle1.csv
round=0
while [ "$delivered" -lt "$KILLS" ]; do
    round=$((round + 1))
    sig=${signals[$((delivered % 3))]}
    extra=()
    [ -e "$file" ] && extra=(--resume)
    "$BIN" "${ARGS[@]}" --out "$file" "${extra[@]}" 2> first.err &
    pid=$!
    second=""
    if [ $((round % 2)) -eq 0 ]; then
        sleep "$(awk -v r="$RANDOM" 'BEGIN { printf "%.3f", 0.02 + r / 32767 * 0.3 }')"
        mode=--resume
        [ $((round % 4)) -eq 0 ] && mode=--force
        "$BIN" "${ARGS[@]}" --out "$file" "$mode" 2> second.err &
        second=$!
        second_runs=$((second_runs + 1))
    fi
    sleep "$(delay)"
    if kill -0 "$pid" 2> /dev/null; then
        before=$( (grep -v '^#' "$file" 2> /dev/null || true) | wc -l)
        kill -s "$sig" "$pid"
    fi
    { wait "$pid"; } 2> /dev/null
    status=$?
    if [ -n "$second" ]; then
        if kill -0 "$second" 2> /dev/null; then
            fail "round $round: the second run on $file was still working"
            kill -s KILL "$second" 2> /dev/null
        fi
        { wait "$second"; } 2> /dev/null
        s2=$?
        if [ "$s2" -eq 2 ] && [ "$(wc -l < second.err)" -eq 1 ]; then
            second_refused=$((second_refused + 1))
        else
            fail "round $round: the second run ($mode) ended with $s2: $(head -c 300 second.err)"
        fi
    fi
    case $status in
        0)
            finished_early=$((finished_early + 1))
            check_cycle "$file" "cycle$cycle"
            cycle=$((cycle + 1))
            file=cycle$cycle.csv
            ;;
        137 | 130 | 143)
            delivered=$((delivered + 1))
            sent[$sig]=$((sent[$sig] + 1))
            [ "${before:-0}" -le 1 ] && before_first_row=$((before_first_row + 1))
            if [ "$sig" != KILL ]; then
                if grep -q "stopped by SIG$sig; .*--resume\|stopped by SIG$sig; .*same command" first.err; then
                    hint_lines=$((hint_lines + 1))
                else
                    fail "round $round: SIG$sig without the line saying how to continue: $(head -c 300 first.err)"
                fi
            fi
            ;;
        2)
            resume_refusals=$((resume_refusals + 1))
            fail "round $round: the run refused its own file: $(head -c 300 first.err)"
            break
            ;;
        *)
            fail "round $round: the run ended with $status: $(head -c 300 first.err)"
            ;;
    esac
done
# Finish the last cycle.
if [ -e "$file" ]; then
    if "$BIN" "${ARGS[@]}" --out "$file" --resume 2> first.err; then
        check_cycle "$file" "cycle$cycle"
    else
        fail "final --resume of $file: $(head -c 300 first.err)"
    fi
else
    cycle=$((cycle - 1))
fi
echo "signals delivered: $delivered (KILL ${sent[KILL]}, INT ${sent[INT]}, TERM ${sent[TERM]}), $before_first_row before the first row"
echo "runs that finished before their signal: $finished_early; cycles compared: $cycle, identical: $cycles_ok"
echo "SIGINT/SIGTERM stops with the continue line: $hint_lines of $((sent[INT] + sent[TERM]))"
echo "second runs on a busy file: $second_runs, refused at once with exit 2: $second_refused"
echo "total $(echo "$(now) - $t0" | bc)s; failures: $failures"
[ "$failures" -eq 0 ]
