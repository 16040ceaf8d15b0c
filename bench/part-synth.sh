#!/bin/sh
# part-synth.sh -- `tzero synth` speed on a ~300 MB survey of 240-channel IBM shots
# (200 shots x 240 channels x 1501 samples, five reflectors, direct and head waves,
# random noise), then one `tzero geometry` header pass over it (issue #3).
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
mkdir -p "$OUT"
cat >"$OUT/synth_layout.json" <<'JSON'
{"receiver_interval_m": 12.5, "source_interval_m": 25, "shot_count": 200, "channels": 240,
 "spread": "split", "near_offset_m": 25, "azimuth_deg": 75,
 "first_station_x_m": 500000, "first_station_y_m": 6400000, "first_source_m": 1500}
JSON
cat >"$OUT/synth_model.json" <<'JSON'
{"layers": [{"thickness_m": 300, "velocity_mps": 1800}, {"thickness_m": 400, "velocity_mps": 2300},
            {"thickness_m": 500, "velocity_mps": 2800}, {"thickness_m": 600, "velocity_mps": 3300},
            {"thickness_m": 700, "velocity_mps": 3800}, {"velocity_mps": 4300}]}
JSON
rm -rf "$OUT/synth_survey"
s=$(date +%s%N)
"$B/tzero" synth --model "$OUT/synth_model.json" --layout "$OUT/synth_layout.json" \
  --out "$OUT/synth_survey" --samples 1501 --interval-ms 2 --peak-hz 25 --noise 0.01 --quiet
e=$(date +%s%N)
mb=$(du -sm "$OUT/synth_survey" | cut -f1)
echo "tzero synth: $mb MB (200 shots x 240 channels x 1501 IBM samples, noise on) in $(awk "BEGIN { printf \"%.2f\", ($e - $s) / 1e9 }") s"
s=$(date +%s%N)
"$B/tzero" geometry --quiet "$OUT"/synth_survey/shot_*.sgy
e=$(date +%s%N)
echo "tzero geometry: header passes over the same survey in $(awk "BEGIN { printf \"%.2f\", ($e - $s) / 1e9 }") s"
rm -rf "$OUT/synth_survey"
