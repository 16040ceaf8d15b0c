# test_cvs.sh -- `tzero cvs`: output layout, thread identity, bad input.
# The panels' content is checked against `tzero stack` and the model's RMS
# velocities in tests/xcheck/test_semblance_synth.py. Exit statuses are BSD
# sysexits(3): 64 usage, 66 no input, 73 cannot create. Sources: DEVELOPERS.md
# (bitwise identity for any thread count; no half-written output).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
mkdir -p "$D"
cat >"$D/model.json" <<'EOF2'
{ "description": "Fenmoor test model (invented)",
  "layers": [ { "thickness_m": 250, "velocity_mps": 1900 }, { "velocity_mps": 2800 } ] }
EOF2
cat >"$D/layout.json" <<'EOF2'
{ "description": "Line FM-2, Fenmoor (invented)", "receiver_interval_m": 25,
  "first_station_x_m": 0, "first_station_y_m": 0, "azimuth_deg": 90, "source_interval_m": 50,
  "first_source_m": 0, "shot_count": 8, "spread": "ahead", "channels": 24,
  "near_offset_m": 25, "source_depth_m": 0, "first_field_record": 1, "first_shot_point": 1 }
EOF2
printf '{ "shots": ["shots/*.sgy"], "geometry": {"layout": "layout.json"} }\n' >"$D/job.json"
"$TZERO" synth --model "$D/model.json" --layout "$D/layout.json" --out "$D/shots" \
  --interval-ms 2 --record-ms 500 --format ieee --quiet || { notok "synth survey"; exit 1; }
J="$D/job.json"

expect_status 0 "cvs of a CMP range" -- "$TZERO" cvs --job "$J" --cmps 20-30 \
  --velocities 1700-2100:200,2500 --out "$D/c1.sgy" --threads 1
expect_stdout "4 panels of CMPs 20-30 \(11 traces each\), 1700 to 2500 m/s" "summary line"
# 3600-byte headers + 44 traces x (240 + 251 x 4) bytes (SEG-Y rev 1 (2002), file structure; check value 29 of docs/references.md)
size=$(wc -c <"$D/c1.sgy" | tr -d ' ')
[ "$size" -eq $((3600 + 44 * (240 + 251 * 4))) ] && ok "file holds 4 x 11 traces of 251 samples" ||
  notok "file size $size"
"$TZERO" cvs --job "$J" --cmps 20-30 --velocities 1700-2100:200,2500 --out "$D/c2.sgy" \
  --threads 2 --quiet
if cmp -s "$D/c1.sgy" "$D/c2.sgy"; then ok "bitwise identical for 1 and 2 threads (DEVELOPERS.md, threads)"
else notok "1 and 2 threads differ"; fi
expect_status 0 "--json" -- "$TZERO" cvs --job "$J" --cmps 25 --velocities 2000 --out "$D/c3.sgy" --json
expect_stdout '"velocities_mps":' "JSON lists the velocities"

expect_status 64 "missing --velocities" -- "$TZERO" cvs --job "$J" --cmps 20-30 --out "$D/x.sgy"
expect_status 64 "bad velocity list" -- "$TZERO" cvs --job "$J" --cmps 20-30 --velocities 2000-1000:100 \
  --out "$D/x.sgy"
expect_stderr "velocity list item '2000-1000:100'" "bad velocity item is named"
expect_status 64 "CMP list with gaps" -- "$TZERO" cvs --job "$J" --cmps 20-30:5 --velocities 2000 \
  --out "$D/x.sgy"
expect_stderr "one range" "gap explained"
expect_status 64 "CMPs outside the line" -- "$TZERO" cvs --job "$J" --cmps 900-910 --velocities 2000 \
  --out "$D/x.sgy"
expect_stderr "outside the line" "range outside the line explained"
expect_no_file "$D/x.sgy" "no output after failures"
expect_status 66 "missing job" -- "$TZERO" cvs --job "$D/none.json" --cmps 20 --velocities 2000 \
  --out "$D/x.sgy"
expect_status 73 "output below a file, not a folder" -- "$TZERO" cvs --job "$J" --cmps 20 \
  --velocities 2000 --out "$J/x.sgy"
expect_stderr "is not a folder" "the file in the way is named"
expect_status 0 "cvs --help" -- "$TZERO" cvs --help
expect_stdout "qualified" "--help carries the caution (project rule)"
