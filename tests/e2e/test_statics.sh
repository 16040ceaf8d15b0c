# test_statics.sh -- the "statics" and "edits" job keys, `tzero statics elevation`,
# --edits, and bad station statics tables (exit 65 naming the file and line,
# nothing written). The line is made by `tzero synth` with a near-surface model.
# Sources: sysexits(3) statuses (65 bad input data, 64 usage); docs/job-file.md (a failed run
# leaves no output; job errors name the JSON path); the elevation static -(E - D)/v_r
# (common practice); bitwise identity for any thread count and parts equal to the whole
# line (docs/performance.md, tzero-merge(1)).
. "$TOP/tests/e2e/lib.sh"
D="$T/line"
mkdir -p "$D/out"
cat >"$D/layout.json" <<'EOF'
{ "receiver_interval_m": 10, "first_station_x_m": 500000, "first_station_y_m": 6200000,
  "azimuth_deg": 90, "source_interval_m": 20, "first_source_m": 100, "shot_count": 12,
  "spread": "split", "channels": 24, "channels_behind": 12, "near_offset_m": 10,
  "source_depth_m": 8, "first_field_record": 1,
  "station_elevations_m": [131, 133, 137, 140, 138, 134, 131, 128, 126, 129, 133, 136, 139,
                           141, 140, 137, 134, 132, 130, 131, 133, 135, 137, 139, 140, 138] }
EOF
cat >"$D/model.json" <<'EOF'
{ "layers": [ { "thickness_m": 150, "velocity_mps": 2000 }, { "velocity_mps": 2600 } ],
  "near_surface": { "datum_m": 120, "replacement_velocity_mps": 2000,
                    "weathering": [ { "along_m": 0, "thickness_m": 5, "velocity_mps": 600 },
                                    { "along_m": 250, "thickness_m": 7, "velocity_mps": 700 } ] } }
EOF
expect_status 0 "synth with a near-surface model" -- "$TZERO" synth --model "$D/model.json" \
  --layout "$D/layout.json" --out "$D/shots" --record-ms 400 --interval-ms 2 --peak-hz 30 \
  --format ieee --quiet
[ -s "$D/shots/true_statics.csv" ] && ok "synth writes the true station statics" ||
  notok "no true_statics.csv"
head -n 3 "$D/shots/true_statics.csv" | grep -q '^kind,station,x_m,y_m,elevation_m,static_ms' &&
  ok "true statics table header" || notok "true statics table header"

job() { # name statics-json [edits-json]
  cat >"$D/$1.json" <<EOF
{ "shots": ["shots/shot_*.sgy"], "geometry": { "layout": "layout.json" },
  "velocity": "shots/rms_velocity.csv",
  "moveout": { "stretch_limit_pct": 50, "interpolation": "sinc8" },
  "output": { "section": "out/$1.sgy", "report": "out/$1.qc.json" }
  ${2:+, \"statics\": $2} ${3:+, \"edits\": $3} }
EOF
}
job el '{"datum_m": 120, "replacement_velocity_mps": 2000, "elevation": true}'
for n in 1 3; do
  expect_status 0 "stack with elevation statics, --threads $n" -- "$TZERO" stack --job "$D/el.json" \
    --threads $n --out "$D/out/el$n.sgy" --report "$D/out/el$n.json" --quiet
done
if cmp -s "$D/out/el1.sgy" "$D/out/el3.sgy"; then ok "statics: 3 threads bitwise identical to 1"
else notok "statics: 3 threads differ from 1"; fi
grep -q '"statics"' "$D/out/el1.json" && grep -q '"receivers"' "$D/out/el1.json" &&
  ok "QC report has a statics object with per-station statics" || notok "QC report lacks statics"
expect_status 0 "picture --statics" -- "$TZERO" picture --statics "$D/out/el1.json" --out "$D/out/st.png"
expect_stdout 'statics chart of [0-9]+ source and [0-9]+ receiver stations' "statics chart summary"
"$PYTHON" -c "import sys; sys.exit(0 if open(sys.argv[1],'rb').read(8) == b'\x89PNG\r\n\x1a\n' else 1)" "$D/out/st.png" &&
  ok "statics chart is a PNG" || notok "statics chart is not a PNG"
job ns ''
"$TZERO" stack --job "$D/ns.json" --quiet
expect_status 65 "picture --statics of a report without statics" -- "$TZERO" picture --statics \
  "$D/out/ns.qc.json" --out "$D/out/st2.png"
expect_stderr '\$\.statics' "names \$.statics"
expect_no_file "$D/out/st2.png" "no chart written"
expect_status 0 "statics elevation" -- "$TZERO" statics elevation --job "$D/el.json" --out "$D/el.csv"
expect_stdout 'stations +[0-9]+ source, [0-9]+ receiver' "summary names the stations"
expect_stdout 'statics +-?[0-9.]+ to -?[0-9.]+ ms' "summary gives the static range"
# station 0 at 131 m: -(131 - 120) / 2000 s = -5.5 ms (common practice)
grep -q '^receiver,0,500000.000,6200000.000,131.000,-5.5000' "$D/el.csv" &&
  ok "receiver station 0: -5.5 ms" || notok "receiver station 0 static"
expect_status 0 "statics elevation --json" -- "$TZERO" statics elevation --job "$D/el.json" \
  --out "$D/el2.csv" --json
expect_stdout '"receiver_stations"' "JSON summary"
expect_status 64 "statics without a verb" -- "$TZERO" statics
expect_status 0 "statics --help" -- "$TZERO" statics --help
expect_stdout 'elevation' "statics --help lists elevation"

# uphole statics: the layout's 8 m shots below 5-7 m of weathering
job up '{"datum_m": 120, "replacement_velocity_mps": 2000, "weathering_velocity_mps": 650, "uphole": true}'
expect_status 0 "stack with uphole statics" -- "$TZERO" stack --job "$D/up.json" --quiet
grep -Eq '"weathering_m":[[:space:]]*[4-8]\.' "$D/out/up.qc.json" && ok "uphole weathering thickness in the report" ||
  notok "no weathering thickness from the uphole times"

# floating datum: NMO at the smoothed surface, the section shifted back to the flat datum
job fd '{"datum_m": 120, "replacement_velocity_mps": 2000, "floating_datum_smooth_m": 60}'
for n in 1 2; do
  expect_status 0 "stack at a floating datum, --threads $n" -- "$TZERO" stack --job "$D/fd.json" \
    --threads $n --out "$D/out/fd$n.sgy" --report "$D/out/fd$n.json" --quiet
done
cmp -s "$D/out/fd1.sgy" "$D/out/fd2.sgy" && ok "floating datum: 2 threads bitwise identical to 1" ||
  notok "floating datum: threads differ"
grep -q '"floating_datum":' "$D/out/fd1.json" && grep -q 'floating datum for NMO' "$D/out/fd1.json" &&
  ok "report lists the floating datum and the time reference" || notok "report lacks the floating datum"
expect_status 0 "floating datum part run" -- "$TZERO" stack --job "$D/fd.json" --cmp-range 20-30 \
  --out "$D/out/fdp.sgy" --report "$D/out/fdp.json" --quiet
# a part equals the same CMPs of the whole line (tzero-merge(1): parts give the same bits)
"$PYTHON" - "$D/out/fd1.sgy" "$D/out/fdp.sgy" <<'PY' && ok "floating datum: the part is bitwise the whole line's CMPs" || notok "floating datum: the part differs from the whole line"
import sys, segyio, numpy as np
a = segyio.open(sys.argv[1], ignore_geometry=True)
b = segyio.open(sys.argv[2], ignore_geometry=True)
ca = list(a.attributes(segyio.TraceField.CDP)[:])
cb = b.attributes(segyio.TraceField.CDP)[:]
sys.exit(0 if len(cb) == 11 and all(np.array_equal(a.trace[ca.index(c)], b.trace[i])
                                    for i, c in enumerate(cb)) else 1)
PY

# the true statics as a table on top of no elevation term equals the model's statics
job tb '{"datum_m": 120, "replacement_velocity_mps": 2000, "elevation": false, "tables": ["shots/true_statics.csv"]}'
expect_status 0 "stack with the true statics table" -- "$TZERO" stack --job "$D/tb.json" --quiet

# bad tables: exit 65 with file and line, no section written
bad_table() { # desc pattern body
  printf '%s\n' "kind,station,x_m,y_m,elevation_m,static_ms" "$3" >"$D/bad.csv"
  job bad '{"datum_m": 120, "replacement_velocity_mps": 2000, "tables": ["bad.csv"]}'
  rm -f "$D/out/bad.sgy"
  expect_status 65 "table with $1" -- "$TZERO" stack --job "$D/bad.json" --quiet
  expect_stderr "bad\.csv.*line $4.*$2|bad\.csv: line $4: .*$2" "$1: message names the file, line $4"
  expect_no_file "$D/out/bad.sgy" "$1: no section written"
}
bad_table "an unknown station" "receiver station 9999 is not in the geometry" "receiver,9999,500000,6200000,131,1" 2
bad_table "a duplicate station" "given twice" "receiver,1,500010,6200000,133,1
receiver,1,500010,6200000,133,2" 3
bad_table "a non-number" "static_ms" "receiver,1,500010,6200000,133,fast" 2
bad_table "a position off the station" "more than half the station interval" "receiver,1,500030,6200000,133,1" 2
printf '%s\n' "kind,station,x_m,y_m,static_ms" "receiver,1,500010,6200000,1" >"$D/bad.csv"
expect_status 65 "table with a missing column" -- "$TZERO" stack --job "$D/bad.json" --quiet
expect_stderr "bad\.csv.*line 1.*elevation_m" "missing column: file, line and column named"
expect_no_file "$D/out/bad.sgy" "missing column: no section written"

# statics job key errors name the JSON path
job bj '{"datum_m": 120}'
expect_status 65 "statics without a replacement velocity" -- "$TZERO" stack --job "$D/bj.json" --quiet
expect_stderr '\$\.statics\.replacement_velocity_mps' "names \$.statics.replacement_velocity_mps"
job bj '{"datum_m": 120, "replacement_velocity_mps": 2000, "datum": 3}'
expect_status 65 "unknown statics key" -- "$TZERO" stack --job "$D/bj.json" --quiet
expect_stderr 'did you mean "datum_m"' "did-you-mean for a statics key"

# edits: malformed entries are 65 naming the JSON path; an empty selection warns
job be '' '{"kill": [{"record": 3}, {"channels": "4-x"}]}'
expect_status 65 "malformed edit" -- "$TZERO" stack --job "$D/be.json" --quiet
expect_stderr '\$\.edits\.kill\[1\]\.channels' "names \$.edits.kill[1].channels"
job be '' '{"kill": [{"chanels": 4}]}'
expect_status 65 "unknown edit key" -- "$TZERO" stack --job "$D/be.json" --quiet
expect_stderr 'did you mean "channels"' "did-you-mean for an edit key"
job ed '' '{"kill": [{"record": 3}, {"record": 77}], "reverse": [{"channels": "5"}]}'
expect_status 0 "stack with edits" -- "$TZERO" stack --job "$D/ed.json"
expect_stdout 'edits +24 killed \(listed 24' "summary counts the killed traces"
expect_stdout 'warning +\$\.edits\.kill\[1\] selects no trace' "an edit selecting nothing is a warning naming it"
grep -Eq '"reversed":[[:space:]]*11$' "$D/out/ed.qc.json" && ok "QC report counts reversed traces" ||
  notok "QC report lacks traces.reversed"
# the same edits from the command line, for stack, nmo, semblance and cvs
printf '%s\n' '{"kill": [{"record": 3}]}' >"$D/edits.json"
job pl ''
expect_status 0 "stack --edits" -- "$TZERO" stack --job "$D/pl.json" --edits "$D/edits.json"
expect_stdout 'edits +24 killed' "--edits kills the record"
expect_status 0 "nmo --edits" -- "$TZERO" nmo --job "$D/el.json" --edits "$D/edits.json" --cmps 20-24 \
  --out "$D/out/g.sgy" --quiet
expect_status 0 "semblance --edits" -- "$TZERO" semblance --job "$D/el.json" --edits "$D/edits.json" \
  --cmps 22 --supergather 1 --out "$D/out/v.csv" --quiet
expect_status 0 "cvs --edits" -- "$TZERO" cvs --job "$D/el.json" --edits "$D/edits.json" --cmps 20-24 \
  --velocities 1800,2000 --out "$D/out/c.sgy" --quiet
printf '%s\n' '{"kill": [{"record": "x"}]}' >"$D/edits.json"
expect_status 65 "--edits with a malformed entry" -- "$TZERO" stack --job "$D/pl.json" --edits "$D/edits.json" --quiet
expect_stderr 'edits\.json.*\$\.kill\[0\]\.record' "names the file and \$.kill[0].record"

# parts of a line with edits and statics merge into the whole line's section and counts
job es '{"datum_m": 120, "replacement_velocity_mps": 2000}' '{"kill": [{"record": 3}, {"record": 77}], "reverse": [{"channels": "5"}], "auto": {"dead": true, "rms_ratio_max": 50}}'
expect_status 0 "whole line with edits and statics" -- "$TZERO" stack --job "$D/es.json" --out "$D/out/w.sgy" \
  --report "$D/out/w.json" --quiet
"$TZERO" stack --job "$D/es.json" --cmp-range 1-20 --out "$D/out/p1.sgy" --report "$D/out/p1.json" --quiet
"$TZERO" stack --job "$D/es.json" --cmp-range 21-69 --out "$D/out/p2.sgy" --report "$D/out/p2.json" --quiet
expect_status 0 "merge of two parts with edits and statics" -- "$TZERO" merge "$D/out/p1.json" \
  "$D/out/p2.json" --out "$D/out/m.sgy" --report "$D/out/m.json" --quiet
cmp -s "$D/out/w.sgy" "$D/out/m.sgy" && ok "merged section bitwise the whole line's" ||
  notok "merged section differs from the whole line's"
"$PYTHON" - "$D/out/w.json" "$D/out/m.json" <<'PY' && ok "merged traces and edits counts equal the whole line's" || notok "merged counts differ"
import json, sys
a, b = (json.load(open(f)) for f in sys.argv[1:3])
sys.exit(0 if a["traces"] == b["traces"] and a["edits"] == b["edits"] and
         a["statics"]["applied"] == b["statics"]["applied"] else 1)
PY
