# test_semblance.sh -- `tzero semblance`: outputs, thread identity, bad input.
# Numerical checks (picks against exact RMS velocities, stacks) are in
# tests/xcheck/test_semblance_synth.py. Exit statuses are BSD sysexits(3):
# 64 usage, 65 data, 66 no input, 73 cannot create. Sources: DEVELOPERS.md
# (bitwise identity for any thread count; no half-written output); common
# practice for the rest.
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
mkdir -p "$D"
cat >"$D/model.json" <<'EOF2'
{ "description": "Fenmoor test model (invented)",
  "layers": [ { "thickness_m": 250, "velocity_mps": 1900, "density_kgm3": 2000 },
              { "thickness_m": 350, "velocity_mps": 2600, "density_kgm3": 2250 },
              { "velocity_mps": 3200, "density_kgm3": 2450 } ] }
EOF2
cat >"$D/layout.json" <<'EOF2'
{ "description": "Line FM-1, Fenmoor (invented)", "receiver_interval_m": 25,
  "first_station_x_m": 0, "first_station_y_m": 0, "azimuth_deg": 90, "source_interval_m": 50,
  "first_source_m": 0, "shot_count": 12, "spread": "ahead", "channels": 32,
  "near_offset_m": 25, "source_depth_m": 0, "first_field_record": 1, "first_shot_point": 1 }
EOF2
cat >"$D/job.json" <<'EOF2'
{ "shots": ["shots/*.sgy"], "geometry": {"layout": "layout.json"} }
EOF2
"$TZERO" synth --model "$D/model.json" --layout "$D/layout.json" --out "$D/shots" \
  --interval-ms 2 --record-ms 800 --format ieee --no-direct --no-head-wave --quiet ||
  { notok "synth survey"; exit 1; }
J="$D/job.json"
S="--velocity-min 1600 --velocity-max 3400 --velocity-step 25"

expect_status 0 "semblance with outputs" -- "$TZERO" semblance --job "$J" --cmps 30,40 $S \
  --supergather 1 --threads 1 --out "$D/v1.csv" --panels "$D/p1.sgy"
expect_stdout "^CMP 30 \(CMPs 29-31, [0-9]+ traces\): 2 picks" "text summary: 2 picks per CMP"
head -n 1 "$D/v1.csv" | grep -q '^cmp,time_ms,velocity_mps' && ok "velocity table header (docs/velocity-table.md)" ||
  notok "velocity table header"
expect_status 0 "the table passes tzero velocity check" -- "$TZERO" velocity check "$D/v1.csv"
"$TZERO" semblance --job "$J" --cmps 30,40 $S --supergather 1 --threads 2 --out "$D/v2.csv" \
  --panels "$D/p2.sgy" --quiet
if cmp -s "$D/p1.sgy" "$D/p2.sgy" && cmp -s "$D/v1.csv" "$D/v2.csv"; then
  ok "panels and table bitwise identical for 1 and 2 threads (DEVELOPERS.md, threads)"
else notok "1 and 2 threads differ"; fi
expect_status 0 "--json" -- "$TZERO" semblance --job "$J" --cmps 35 $S --json
expect_stdout '"semblance":' "JSON carries the semblance of each pick"
expect_stdout '"interval_velocity_mps":' "JSON carries the Dix interval velocity"
expect_status 0 "--quiet" -- "$TZERO" semblance --job "$J" --cmps 35 $S --quiet
if [ -s "$T/out" ]; then notok "--quiet prints nothing"; else ok "--quiet prints nothing"; fi
expect_status 0 "a CMP without traces is reported and skipped" -- "$TZERO" semblance --job "$J" \
  --cmps 35,5000 $S --out "$D/v3.csv"
expect_stderr "no pick for lack of fold at CMP 5000 \(no live trace\)" "the empty CMP is named"
grep -q '^5000,' "$D/v3.csv" && notok "empty CMP left out of the table" || ok "empty CMP left out of the table"

# --- bad input: message, status, no output
expect_status 65 "no pick anywhere" -- "$TZERO" semblance --job "$J" --cmps 35 $S \
  --min-semblance 1 --out "$D/none.csv" --panels "$D/none.sgy"
expect_stderr "no CMP gave a pick" "no-pick failure explained"
expect_no_file "$D/none.csv" "no velocity table after the failure"
expect_no_file "$D/none.sgy" "no panels after the failure"
expect_status 64 "missing --cmps" -- "$TZERO" semblance --job "$J"
expect_status 64 "bad CMP list" -- "$TZERO" semblance --job "$J" --cmps 30-x
expect_stderr "30-x" "bad CMP list item is named"
expect_status 64 "zero velocity step" -- "$TZERO" semblance --job "$J" --cmps 30 --velocity-step 0
expect_stderr "velocity step" "zero step is named"
expect_status 64 "velocity range reversed" -- "$TZERO" semblance --job "$J" --cmps 30 \
  --velocity-min 3000 --velocity-max 2000
expect_status 64 "bad number" -- "$TZERO" semblance --job "$J" --cmps 30 --window forty
expect_stderr "window: expected a number, got 'forty'" "bad number is named"
expect_status 64 "bad interval bounds" -- "$TZERO" semblance --job "$J" --cmps 30 \
  --interval-min 4000 --interval-max 3000
expect_status 64 "empty pick time range" -- "$TZERO" semblance --job "$J" --cmps 30 \
  --time-min 500 --time-max 400
expect_status 64 "live fraction above 1" -- "$TZERO" semblance --job "$J" --cmps 30 --min-live 2
expect_status 66 "missing job file" -- "$TZERO" semblance --job "$D/nojob.json" --cmps 30
expect_stderr "nojob.json" "missing job file is named"
printf '{ "shots": ["shots/*.sgy"], "geometri": "headers" }\n' >"$D/bad.json"
expect_status 65 "job with an unknown key" -- "$TZERO" semblance --job "$D/bad.json" --cmps 30
expect_stderr "geometri" "unknown job key is named"
expect_status 73 "panels below a file, not a folder" -- "$TZERO" semblance --job "$J" --cmps 30 $S \
  --panels "$J/p.sgy"
expect_status 0 "semblance --help" -- "$TZERO" semblance --help
expect_stdout "qualified" "--help carries the caution (project rule)"
expect_stdout "velocity-step V +trial velocity step, m/s" "--help gives units"
