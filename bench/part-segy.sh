#!/bin/sh
# part-segy.sh -- SEG-Y read speed (make bench): header-only scan and full read
# of a few hundred MB of IBM traces, against a plain sequential read of the same
# file in the same run. SEGY_BENCH_MB sets the size (default 300).
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
mkdir -p "$OUT"
f="$OUT/segy_bench.sgy"
"$B/bench/segy_bench" "$f" "${SEGY_BENCH_MB:-300}"
t0=$(date +%s.%N)
cat "$f" >/dev/null
t1=$(date +%s.%N)
awk -v a="$t0" -v b="$t1" -v s="$(wc -c <"$f")" \
  'BEGIN { printf "cat FILE > /dev/null:                 %8.0f MB/s\n", s / 1e6 / (b - a) }'
rm -f "$f"
