#!/bin/sh
# part-picture.sh -- `tzero picture` time and peak memory on a long line.
#
# Writes (with segyio) a 2000-CMP section of 2001 samples (16 MB of IEEE
# floats, band-limited noise) and reports wall time and peak resident memory
# (GNU time) for: the default density picture, a 100-CMP zoom with wiggles,
# and a full-resolution 2000 x 2001 px picture. The data pass is one read of
# the file; memory is about the panel (4 bytes per sample) twice (samples and
# the clip-percentile scratch) plus the raster (3 bytes per pixel).
# Data go to $OUT/picture (removed at the end).
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/picture"
rm -rf "$D"
mkdir -p "$D"
TIME=/usr/bin/time
[ -x "$TIME" ] || TIME=""
/usr/bin/python3 - "$D/line.sgy" <<'PY'
import sys
import numpy as np
import segyio
ncmp, ns = 2000, 2001
rng = np.random.default_rng(3)
spec = segyio.spec()
spec.format, spec.samples, spec.tracecount = 5, list(range(ns)), ncmp
k = np.hanning(15)
with segyio.create(sys.argv[1], spec) as f:
    f.bin.update({segyio.BinField.Interval: 2000, segyio.BinField.Samples: ns,
                  segyio.BinField.SortingCode: 4})
    for i in range(ncmp):
        f.header[i] = {segyio.TraceField.CDP: 1001 + i, segyio.TraceField.TRACE_SAMPLE_COUNT: ns,
                       segyio.TraceField.TRACE_SAMPLE_INTERVAL: 2000}
        f.trace[i] = np.convolve(rng.standard_normal(ns), k, "same").astype(np.float32)
PY
run() { # label args...
  label=$1
  shift
  t0=$(date +%s.%N)
  if [ -n "$TIME" ]; then
    "$TIME" -f "%M" -o "$D/rss" "$TZ" picture "$@" --quiet
    rss=$(tail -n 1 "$D/rss")
  else
    "$TZ" picture "$@" --quiet
    rss="?"
  fi
  t1=$(date +%s.%N)
  awk -v l="$label" -v a="$t0" -v b="$t1" -v r="$rss" \
    'BEGIN { printf "  %-44s %6.3f s  peak %s kB\n", l, b - a, r }'
}
run "2000 CMPs x 2001 samples, default size" "$D/line.sgy" --out "$D/a.png"
run "CMP 1500-1599, 0-1000 ms, wiggles + density" "$D/line.sgy" --out "$D/b.png" \
  --cmps 1500-1599 --time-ms 0-1000
run "full resolution, 2112 x 2077 px" "$D/line.sgy" --out "$D/c.png" --width 2112 --height 2077
run "one CMP (a single trace)" "$D/line.sgy" --out "$D/d.png" --cmps 1001-1001
rm -rf "$D"
