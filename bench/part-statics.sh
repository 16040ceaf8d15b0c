#!/bin/sh
# part-statics.sh -- first-break picking rate and residual statics against one stack.
#
# Builds (with tzero synth) a 240-channel split-spread line of about 300 MB
# (320 shots, 1 ms samples, 1 s records) with a 10 m weathering layer (direct
# and head waves) over three reflectors, then reports:
#   - tzero firstbreaks on 1 and 2 threads: traces per minute of the picking
#     passes (the command's --json figure) and of the whole command;
#   - one tzero stack of the line and one tzero statics residual (3 iterations)
#     with the same job: wall and CPU seconds and their ratio.
# Targets (the land-statics work): picking >= 1 M traces/min on 2 cores; residual
# statics < 3 x one stack. CPU seconds of the stack/residual pair are printed
# too (steadier than wall time on a shared machine). Each figure is the fastest of $REPEAT (default 2) runs;
# the load average is printed first (the machine may be shared). Data go to
# $OUT/statics (removed at the end).
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/statics"
REPEAT=${REPEAT:-2}
rm -rf "$D"
mkdir -p "$D"
now() { date +%s.%N; }
calc() { awk "BEGIN { printf \"$1\n\", $2 }"; }
echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
cat >"$D/layout.json" <<EOF2
{ "description": "Tarrowvane bench line TV-B-1 (invented)", "receiver_interval_m": 10,
  "first_station_x_m": 0, "first_station_y_m": 0, "azimuth_deg": 90, "source_interval_m": 20,
  "first_source_m": 0, "shot_count": 320, "spread": "split", "channels": 240,
  "channels_behind": 120, "near_offset_m": 10, "first_field_record": 1 }
EOF2
cat >"$D/model.json" <<EOF2
{ "description": "bench weathering and layers (invented)",
  "layers": [ { "thickness_m": 10, "velocity_mps": 700 }, { "thickness_m": 200, "velocity_mps": 2000 },
              { "thickness_m": 250, "velocity_mps": 2400 }, { "thickness_m": 300, "velocity_mps": 2800 },
              { "velocity_mps": 3200 } ] }
EOF2
"$TZ" synth --model "$D/model.json" --layout "$D/layout.json" --out "$D/shots" --interval-ms 1 \
  --record-ms 1000 --peak-hz 40 --format ieee --noise 0.001 --quiet
cat >"$D/job.json" <<EOF2
{ "name": "bench", "shots": ["shots/shot_*.sgy"], "geometry": { "layout": "layout.json" },
  "velocity": "shots/rms_velocity.csv", "output": { "section": "stack.sgy" } }
EOF2
mb=$(du -sm "$D/shots" | cut -f1)
echo "line: $mb MB, $(ls "$D/shots" | grep -c sgy) shots of 240 traces"
cat "$D"/shots/*.sgy >/dev/null
best() { # label cmd... -> fastest wall time of $REPEAT runs (its stdout in $D/best)
  shift
  b=""
  i=0
  while [ $i -lt "$REPEAT" ]; do
    t0=$(now)
    "$@" >"$D/last"
    t1=$(now)
    e=$(calc "%.3f" "$t1 - $t0")
    if [ -z "$b" ] || [ "$(calc "%d" "$e < $b")" = 1 ]; then b=$e; cp "$D/last" "$D/best"; fi
    i=$((i + 1))
  done
  echo "$b"
}
for th in 1 2; do
  w=$(best fb "$TZ" firstbreaks --job "$D/job.json" --out "$D/picks.csv" --threads $th --json)
  rate=$(sed -n 's/.*"traces_per_minute":[[:space:]]*\([0-9.e+]*\).*/\1/p' "$D/best")
  n=$(sed -n 's/.*"traces":[[:space:]]*\([0-9]*\).*/\1/p' "$D/best" | head -n 1)
  echo "firstbreaks, $th thread(s): picking $(calc "%.2f" "$rate / 1e6") M traces/min; whole command $w s ($(calc "%.2f" "$n / $w * 60 / 1e6") M traces/min)"
done
ws=$(best stack "$TZ" stack --job "$D/job.json" --threads 2 --quiet)
wr=$(best residual "$TZ" statics residual --job "$D/job.json" --out "$D/residual.csv" \
  --window-ms 150,900 --iterations 3 --quiet)
echo "stack (2 threads): $ws s; statics residual (3 iterations): $wr s; ratio $(calc "%.2f" "$wr / $ws") (target < 3)"
if [ -x /usr/bin/time ]; then
  cs=$( { /usr/bin/time -f "%U %S" "$TZ" stack --job "$D/job.json" --threads 2 --quiet; } 2>&1 | tail -n 1)
  cr=$( { /usr/bin/time -f "%U %S" "$TZ" statics residual --job "$D/job.json" --out "$D/residual.csv" \
    --window-ms 150,900 --iterations 3 --quiet; } 2>&1 | tail -n 1)
  us=$(echo "$cs" | awk '{ print $1 + $2 }')
  ur=$(echo "$cr" | awk '{ print $1 + $2 }')
  echo "CPU seconds (user + sys): stack $us, statics residual $ur, ratio $(calc "%.2f" "$ur / $us")"
fi
rm -rf "$D"
