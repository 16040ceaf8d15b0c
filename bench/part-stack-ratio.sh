#!/bin/sh
# part-stack-ratio.sh -- `tzero stack` against a plain read and a NumPy + segyio script, one run.
#
# A 120-shot x 240-channel x 1500-sample IBM-float line (about 170 MB, tzero synth).
# Prints, each the fastest of $REPEAT (default 3) runs, with the load average before
# and after (the machine may be shared: read the ratios, not the seconds):
#   whole command / plain read  (tzero wall time over `cat` of the shot files, warm cache)
#   NumPy / tzero               (bench/numpy_stack.py: the same linear-NMO, stretch-mute,
#                                live-fold stack written with segyio and NumPy)
#   peak RSS                    (GNU time -v, "Maximum resident set size")
# for linear and sinc8 interpolation and 1 and 2 threads. Cold-cache figures need
# `echo 3 > /proc/sys/vm/drop_caches` (root); without it they are skipped and that
# is said. Nothing here is asserted.
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/stack-ratio"
PY=${PYTHON:-/usr/bin/python3}
REPEAT=${REPEAT:-3}
rm -rf "$D"
mkdir -p "$D"
calc() { awk "BEGIN { printf \"$1\n\", $2 }"; }
now() { date +%s.%N; }
L="$D/line"
cat >"$L.layout.json" <<EOF2
{ "description": "Corrowmere bench line (invented)", "receiver_interval_m": 5,
  "first_station_x_m": 500000, "first_station_y_m": 7000000, "azimuth_deg": 90,
  "source_interval_m": 10, "first_source_m": 0, "shot_count": 120, "spread": "split",
  "channels": 240, "channels_behind": 120, "near_offset_m": 5, "first_field_record": 1 }
EOF2
cat >"$L.model.json" <<EOF2
{ "description": "bench layers (invented)",
  "layers": [ { "thickness_m": 200, "velocity_mps": 1800, "density_kgm3": 2000 },
              { "thickness_m": 400, "velocity_mps": 2400, "density_kgm3": 2200 },
              { "velocity_mps": 3600, "density_kgm3": 2500 } ] }
EOF2
"$TZ" synth --model "$L.model.json" --layout "$L.layout.json" --out "$L" --samples 1500 \
  --interval-ms 2 --format ibm --noise 0.01 --quiet
cat >"$L.job.json" <<EOF2
{ "name": "bench", "shots": ["line/shot_*.sgy"], "geometry": { "layout": "line.layout.json" },
  "velocity": "line/rms_velocity.csv",
  "output": { "section": "line.stack.sgy", "report": "line.qc.json" } }
EOF2
sync
bytes=$(cat "$L"/shot_*.sgy | wc -c)
echo "line: 120 shots x 240 channels x 1500 samples (IBM), $(calc "%.0f" "$bytes / 1e6") MB"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"

# best "wall rss" of $REPEAT runs of a command into $D/best
best_of() {
  best=""
  r=0
  while [ $r -lt "$REPEAT" ]; do
    r=$((r + 1))
    /usr/bin/time -v -o "$D/tv.txt" "$@" >/dev/null
    el=$(awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, p, ":"); s = 0;
         for (i = 1; i <= n; i++) s = s * 60 + p[i]; print s }' "$D/tv.txt")
    rss=$(awk -F': ' '/Maximum resident set size/ { print $2 }' "$D/tv.txt")
    if [ -z "$best" ] || [ "$(calc "%d" "$el < $best")" = 1 ]; then
      best=$el
      echo "$el $rss" >"$D/best"
    fi
  done
}

cat "$L"/shot_*.sgy >/dev/null
rd=""
for r in 1 2 3 4 5; do
  t0=$(now); cat "$L"/shot_*.sgy >/dev/null; t=$(calc "%.4f" "$(now) - $t0")
  if [ -z "$rd" ] || [ "$(calc "%d" "$t < $rd")" = 1 ]; then rd=$t; fi
done
echo "  plain read (cat, warm cache, best of 5)  $rd s"
if [ -w /proc/sys/vm/drop_caches ]; then
  sync; echo 3 >/proc/sys/vm/drop_caches
  t0=$(now); cat "$L"/shot_*.sgy >/dev/null; crd=$(calc "%.4f" "$(now) - $t0")
  sync; echo 3 >/proc/sys/vm/drop_caches
  t0=$(now); (cd "$D" && "$OLDPWD/$TZ" stack --quiet --job line.job.json --threads 2 >/dev/null)
  cst=$(calc "%.4f" "$(now) - $t0")
  echo "  cold cache: read $crd s, stack linear 2 threads $cst s, ratio $(calc "%.2f" "$cst / $crd")"
else
  echo "  cold cache: not measured (/proc/sys/vm/drop_caches is not writable here)"
fi

best_of "$PY" bench/numpy_stack.py "$L/rms_velocity.csv" "$D/numpy.npy" "$L"/shot_*.sgy
np_s=$(cut -d' ' -f1 "$D/best")
np_rss=$(cut -d' ' -f2 "$D/best")
echo "  NumPy + segyio script                    $np_s s, peak RSS $(calc "%.1f" "$np_rss / 1024") MB"

TZA=$(cd "$(dirname "$TZ")" && pwd)/$(basename "$TZ")
for interp in linear sinc8; do
  for T in 1 2; do
    best_of sh -c "cd '$D' && '$TZA' stack --quiet --job line.job.json --threads $T --interpolation $interp"
    el=$(cut -d' ' -f1 "$D/best")
    rss=$(cut -d' ' -f2 "$D/best")
    printf '  stack %-6s %d thread(s)  %5.2f s  whole/read %5.1f  NumPy/tzero %5.1f  peak RSS %5.1f MB\n' \
      "$interp" "$T" "$el" "$(calc "%.2f" "$el / $rd")" "$(calc "%.2f" "$np_s / $el")" \
      "$(calc "%.1f" "$rss / 1024")"
  done
done
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"
rm -rf "$D"
