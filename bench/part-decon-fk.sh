#!/bin/sh
# part-decon-fk.sh -- what deconvolution and the f-k step add to `tzero stack` on a
# ~300 MB line (200 shots x 240 channels x 1500 samples at 2 ms, IBM floats).
#
# Runs the stack without conditioning, then with one record-wide step at a time:
# spiking deconvolution (120 ms, one operator per record), spiking deconvolution per
# trace, predictive deconvolution (gap 24 ms, per trace), and the f-k reject fan
# [0, 600] m/s; each the fastest of $REPEAT (default 3) runs on $THREADS threads
# (default 2), wall and CPU seconds, and the ratio to the plain stack. The load
# average is printed first: the machine may be shared. Target: each step under
# 1.5 x the plain stack. Data go to $OUT/deconfk (removed at the end).
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/deconfk"
REPEAT=${REPEAT:-3}
THREADS=${THREADS:-2}
rm -rf "$D"
mkdir -p "$D"
echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
cat >"$D/line.layout.json" <<EOF2
{ "description": "Corrowmere decon bench line (invented)", "receiver_interval_m": 5,
  "first_station_x_m": 500000, "first_station_y_m": 7000000, "azimuth_deg": 90,
  "source_interval_m": 10, "first_source_m": 0, "shot_count": 200, "spread": "split",
  "channels": 240, "channels_behind": 120, "near_offset_m": 5, "first_field_record": 1 }
EOF2
cat >"$D/line.model.json" <<EOF2
{ "layers": [ { "thickness_m": 200, "velocity_mps": 1800, "density_kgm3": 2000 },
              { "thickness_m": 400, "velocity_mps": 2400, "density_kgm3": 2200 },
              { "velocity_mps": 3000, "density_kgm3": 2350 } ] }
EOF2
"$TZ" synth --model "$D/line.model.json" --layout "$D/line.layout.json" --out "$D/line" \
  --samples 1500 --interval-ms 2 --format ibm --noise 0.01 --wavelet minimum-phase \
  --reverb-period-ms 24 --reverb-coefficient 0.4 --noise-train-amplitude 1 --quiet
echo "survey: $(du -sm "$D/line" | cut -f1) MB"
job() { # name conditioning-json
  cat >"$D/$1.json" <<EOF2
{ "shots": ["line/shot_*.sgy"], "geometry": { "layout": "line.layout.json" },
  "velocity": "line/rms_velocity.csv", "conditioning": $2,
  "output": { "section": "$1.sgy", "report": "$1.qc.json" } }
EOF2
}
W='"window": [[0, 100, 2800], [1200, 600, 2990]]'
job plain '[]'
job decon_record "[{\"step\": \"deconvolution\", \"operator_ms\": 120, $W, \"ensemble\": \"record\"}]"
job decon_trace "[{\"step\": \"deconvolution\", \"operator_ms\": 120, $W, \"ensemble\": \"trace\"}]"
job predictive "[{\"step\": \"deconvolution\", \"operator_ms\": 120, \"gap_ms\": 24, $W}]"
job fk "[{\"step\": \"fk_filter\", \"reject_mps\": [0, 600], \"taper_pct\": 10}]"
base=""
printf '%-14s %8s %8s %7s\n' step wall_s cpu_s ratio
for name in plain decon_record decon_trace predictive fk; do
  best=""
  for r in $(seq "$REPEAT"); do
    t0=$(date +%s.%N)
    /usr/bin/time -f "%U %S" -o "$D/cpu" "$TZ" stack --job "$D/$name.json" --threads "$THREADS" --quiet
    t1=$(date +%s.%N)
    wall=$(awk "BEGIN { print $t1 - $t0 }")
    cpu=$(awk '{ print $1 + $2 }' "$D/cpu")
    if [ -z "$best" ] || awk "BEGIN { exit !($wall < $best) }"; then best=$wall; bcpu=$cpu; fi
  done
  [ -n "$base" ] || base=$best
  printf '%-14s %8.2f %8.2f %7.2f\n' "$name" "$best" "$bcpu" "$(awk "BEGIN { print $best / $base }")"
done
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
rm -rf "$D"
