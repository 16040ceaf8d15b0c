#!/bin/sh
# part-nmo.sh -- NMO throughput (linear, sinc8) on a 240-offset x 1500-sample gather,
# the share of time spent sampling velocity functions, and `tzero velocity at` speed.
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
"$B/bench/nmo_bench" "${NMO_BENCH_REPEATS:-400}"
# A 2000-CMP table, then the function at one CMP on 1 ms samples over 6 s.
t="$OUT/nmo_table.csv"
awk 'BEGIN { print "cmp,time_ms,velocity_mps";
             for (c = 0; c < 2000; c++) for (k = 0; k < 8; k++)
               printf "%d,%d,%d\n", 10 * c, 700 * k, 1500 + 300 * k + (c % 7) }' >"$t"
s=$(date +%s%N)
"$B/tzero" velocity check --quiet "$t" >/dev/null
e=$(date +%s%N)
echo "tzero velocity check: 2000 control CMPs x 8 knots in $(awk "BEGIN { printf \"%.1f\", ($e - $s) / 1e6 }") ms"
