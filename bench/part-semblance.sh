#!/bin/sh
# part-semblance.sh -- one semblance panel: 5-CMP supergather of 60 traces,
# 1500 samples, 150 trial velocities; 1 and 2 threads (issue #6).
set -eu
"$B/bench/semblance_bench" "${SEMBLANCE_BENCH_REPEATS:-3}"
