#!/bin/sh
# run.sh -- `make bench`: speed and memory figures, printed, never asserted by tests.
# Each area adds its own bench/part-<area>.sh; this runs them all in name order.
# Scratch data goes to bench/out/ (ignored by git; removed at the end unless KEEP=1).
set -eu
B=${B:-build}
export B
OUT=${BENCH_OUT:-bench/out}
export OUT
mkdir -p "$OUT"
for p in bench/part-*.sh; do
  [ -f "$p" ] || continue
  echo "== $(basename "$p" .sh | sed 's/^part-//')"
  sh "$p"
done
[ "${KEEP:-0}" = 1 ] || rm -rf "$OUT"
