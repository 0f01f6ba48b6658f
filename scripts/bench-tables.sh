#!/bin/sh
# Times whole tables with the release binary (figures go to benches/README.md).
#   scripts/bench-tables.sh small   # all 210 states with n <= 20 at 30 digits
#   scripts/bench-tables.sh large   # all 20,100 states with n <= 200 at 20 digits
#   scripts/bench-tables.sh sample  # a cost sample of the large table (every 10th n)
# Threads default to the number of cores; override with THREADS=...
set -e
cd "$(dirname "$0")/.."
sh scripts/ensure-m4.sh
cargo build --release --quiet
BIN=target/release/kzero
THREADS=${THREADS:-$(nproc)}
OUT=$(mktemp -d)
run() {
    echo "== kzero table $* --threads $THREADS" >&2
    start=$(date +%s.%N)
    $BIN table "$@" --threads "$THREADS" --quiet --out "$OUT/t.csv" --force
    end=$(date +%s.%N)
    rows=$(grep -vc '^#' "$OUT/t.csv")
    echo "rows (incl. header): $rows   wall seconds: $(awk "BEGIN {print $end - $start}")"
    # per-row engine seconds (column 8) summed: the serial cost
    awk -F, '!/^#/ && NR>1 && $8+0==$8 {s+=$8} END {printf "sum of per-state seconds: %.1f\n", s}' "$OUT/t.csv"
}
case "${1:-small}" in
    small) run --n-max 20 --digits 30 ;;
    large) run --n-max 200 --digits 20 ;;
    sample)
        for n in 10 50 100 150 200; do
            run --n-min "$n" --n-max "$n" --digits 20
        done ;;
    *) echo "usage: $0 small|large|sample" >&2; exit 2 ;;
esac
rm -rf "$OUT"
