#!/bin/sh
# The cost of the dipole sums against ln k0 of the same state, with the
# release binary, in executed instructions (valgrind's callgrind, one
# thread): a count that does not depend on the load of the machine. Figures
# go to benches/README.md ("Dipole sums").
#   scripts/bench-sums.sh                 # states 2,0 12,0 50,1 200,0, both methods
#   scripts/bench-sums.sh 100,0 200,199   # other states
#   PER_K=1 scripts/bench-sums.sh 200,0   # also every k alone (green only)
# DIGITS (default 20) sets --digits; needs valgrind.
set -e
cd "$(dirname "$0")/.."
command -v valgrind >/dev/null || { echo "needs valgrind" >&2; exit 2; }
sh scripts/ensure-m4.sh
cargo build --release --quiet
BIN=${CARGO_TARGET_DIR:-target}/release/kzero
DIGITS=${DIGITS:-20}
STATES=${*:-"2,0 12,0 50,1 200,0"}
# executed instructions (millions) of one command
count() {
    out=$(RAYON_NUM_THREADS=1 valgrind --tool=callgrind \
        --callgrind-out-file=/dev/null "$BIN" "$@" 2>&1 >/dev/null)
    ir=$(echo "$out" | sed -n 's/.*Collected : \([0-9]*\).*/\1/p')
    echo "$((ir / 1000000))"
}
printf '%-9s %-9s %-8s %14s %14s %7s\n' state method k 'sums (M instr)' 'ln k0 (M instr)' ratio
for st in $STATES; do
    n=${st%,*}
    l=${st#*,}
    for method in green spectral; do
        gauge=""
        [ "$method" = spectral ] && gauge="--gauge length"
        one=$(count state "$n" "$l" --digits "$DIGITS" --method "$method" $gauge)
        all=$(count sums "$n" "$l" --digits "$DIGITS" --method "$method" $gauge)
        printf '%-9s %-9s %-8s %14s %14s %7s\n' "($n,$l)" "$method" "-4..2" "$all" "$one" \
            "$(awk "BEGIN {printf \"%.2f\", $all / $one}")"
        if [ -n "$PER_K" ] && [ "$method" = green ]; then
            for k in 2 1 0 -1 -2 -3 -4; do
                c=$(count sums "$n" "$l" --digits "$DIGITS" --method green --k "$k")
                printf '%-9s %-9s %-8s %14s %14s %7s\n' "($n,$l)" green "$k" "$c" "$one" \
                    "$(awk "BEGIN {printf \"%.2f\", $c / $one}")"
            done
        fi
    done
done
