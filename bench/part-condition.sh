#!/bin/sh
# part-condition.sh -- trace conditioning throughput on 1500-sample traces: band-pass
# (FFT), spherical divergence, AGC and the three chained, one core.
set -eu
B=${B:-build}
"$B/bench/condition_bench" "${CONDITION_BENCH_REPEATS:-21}"
