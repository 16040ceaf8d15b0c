# test_firstbreaks.sh -- `tzero firstbreaks`: picks of a two-layer synth line
# against the textbook head-wave and direct-wave times (Sheriff and Geldart
# 1995, refraction chapter: t = x / v0 before the crossover, x / v1 + 2 h
# cos(i_c) / v0 after it), thread identity, the picks file, bad input. Exit
# statuses are BSD sysexits(3): 64 usage, 65 data, 66 no input.
. "$TOP/tests/e2e/lib.sh"
D="$T/fb"
mkdir -p "$D"
cat >"$D/model.json" <<'EOF2'
{ "description": "Harrow Flats weathering test model (invented)",
  "layers": [ { "thickness_m": 10, "velocity_mps": 700 }, { "thickness_m": 300, "velocity_mps": 2000 },
              { "velocity_mps": 2600 } ] }
EOF2
cat >"$D/layout.json" <<'EOF2'
{ "description": "Line HF-3, Harrow Flats (invented)", "receiver_interval_m": 10,
  "first_station_x_m": 0, "first_station_y_m": 0, "azimuth_deg": 90, "source_interval_m": 20,
  "first_source_m": 0, "shot_count": 10, "spread": "ahead", "channels": 24,
  "near_offset_m": 10, "source_depth_m": 0, "first_field_record": 1, "first_shot_point": 1 }
EOF2
printf '{ "shots": ["shots/*.sgy"], "geometry": {"layout": "layout.json"} }\n' >"$D/job.json"
"$TZERO" synth --model "$D/model.json" --layout "$D/layout.json" --out "$D/shots" \
  --interval-ms 1 --record-ms 300 --peak-hz 50 --format ieee --no-reflections --quiet || { notok "synth survey"; exit 1; }
J="$D/job.json"

expect_status 0 "first breaks of the line" -- "$TZERO" firstbreaks --job "$J" --out "$D/p1.csv" --threads 1
expect_stdout "picks on 240 traces of 10 records" "summary line"
head -n 2 "$D/p1.csv" | tail -n 1 | grep -q '^record,channel,source_station,receiver_station,offset_m,time_ms,quality$' &&
  ok "picks file has the documented columns" || notok "picks header: $(head -n 2 "$D/p1.csv")"
# Picks within one sample (1 ms) of the earlier of x/700 and x/2000 + 26.7643 ms
# (t_i = 2 h cos(i_c) / v0 for h = 10 m; computed from the formula), wherever the
# two arrivals are more than the 16 ms energy window apart (offsets up to 20 m
# and from 60 m: near the 28.8 m crossover they interfere and the synth's direct
# wave is four times the head wave); every one of those traces must be picked.
awk -F, 'NR > 2 { x = $5 < 0 ? -$5 : $5; d = 1000 * x / 700; h = 1000 * x / 2000 + 26.7643;
  t = d < h ? d : h; e = $6 - t; if (x <= 20 || x >= 60) { n++; if (e < -1 || e > 1) b++ } }
  END { print n + 0, b + 0 }' "$D/p1.csv" >"$D/count"
read -r n bad <"$D/count"
[ "$n" -eq 210 ] && [ "$bad" -eq 0 ] && ok "all 210 traces clear of the crossover picked within 1 ms" ||
  notok "$n (210 expected), $bad off by more than 1 ms"
"$TZERO" firstbreaks --job "$J" --out "$D/p2.csv" --threads 2 --quiet
if cmp -s "$D/p1.csv" "$D/p2.csv"; then ok "bitwise identical for 1 and 2 threads (DEVELOPERS.md, threads)"
else notok "1 and 2 threads differ"; fi
expect_status 0 "--json summary" -- "$TZERO" firstbreaks --job "$J" --out "$D/p3.csv" --json \
  --guide-velocity 2000 --guide-intercept-ms 20
expect_stdout '"estimated":[[:space:]]*false' "a given guide is reported as given"
expect_stdout '"traces":[[:space:]]*240' "JSON counts the traces"
printf 'offset_m,time_ms\n0,0\n30,43\n240,147\n' >"$D/guide.csv"
expect_status 0 "guide table" -- "$TZERO" firstbreaks --job "$J" --out "$D/p4.csv" --guide "$D/guide.csv" --quiet
printf 'offset_m,time_ms\n0,0\n30,x\n' >"$D/badguide.csv"
expect_status 65 "bad guide table" -- "$TZERO" firstbreaks --job "$J" --out "$D/p5.csv" --guide "$D/badguide.csv"
expect_stderr "badguide.csv: line 3: column time_ms" "error names the file, line and column"
expect_no_file "$D/p5.csv" "nothing written after a bad guide"
expect_status 64 "missing --out" -- "$TZERO" firstbreaks --job "$J"
expect_status 64 "bad --refine" -- "$TZERO" firstbreaks --job "$J" --out "$D/x.csv" --refine middle
expect_status 64 "bad --window-ms" -- "$TZERO" firstbreaks --job "$J" --out "$D/x.csv" --window-ms 0
expect_status 66 "missing job" -- "$TZERO" firstbreaks --job "$D/none.json" --out "$D/x.csv"
expect_status 0 "--help" -- "$TZERO" firstbreaks --help
expect_stdout "qualified" "--help carries the caution (project rule)"

# ---- tzero statics refraction on the same line: a flat 10 m weathering layer at
# 700 m/s over 2000 m/s, surface at elevation 0. Every station delay is
# h cos(i_c) / v0 = 13.3821 ms and the static to a datum at -10 m (the weathering
# base) is -h / v0 = -14.2857 ms (Sheriff and Geldart 1995, refraction chapter;
# computed from the formulas).
expect_status 0 "refraction statics" -- "$TZERO" statics refraction --job "$J" --picks "$D/p1.csv" \
  --out "$D/refr.csv" --datum-m -10 --replacement-velocity 2000 --weathering-velocity 700
expect_stdout "two-segment fit: crossover" "the two-segment fit is reported"
expect_stdout "worst stations:" "the worst stations are reported"
head -n 2 "$D/refr.csv" | tail -n 1 |
  grep -q '^kind,station,x_m,y_m,elevation_m,static_ms,delay_ms,weathering_m,refractor_mps,picks$' &&
  ok "statics table has the documented columns" || notok "table header: $(head -n 2 "$D/refr.csv")"
bad=$(awk -F, 'NR > 2 && $10 > 0 { if ($7 < 13.3821 - 0.2 || $7 > 13.3821 + 0.2 || $6 < -14.2857 - 0.3 ||
  $6 > -14.2857 + 0.3 || $9 < 1980 || $9 > 2020) n++ } END { print n + 0 }' "$D/refr.csv")
[ "$bad" -eq 0 ] && ok "every station: delay 13.38 ms, static -14.29 ms, refractor 2000 m/s (formulas)" ||
  notok "$bad stations off the two-layer values"
expect_status 0 "refraction --json" -- "$TZERO" statics refraction --job "$J" --picks "$D/p1.csv" \
  --out "$D/refr2.csv" --datum-m -10 --json
expect_stdout '"weathering_velocity_estimated":[[:space:]]*true' "weathering velocity estimated when not given"
s0=$(awk -F, 'NR == 3 { print $3 }' "$D/p1.csv")
r0=$(awk -F, 'NR == 3 { print $4 }' "$D/p1.csv")
printf '# picks\nrecord,channel,source_station,receiver_station,offset_m,time_ms,quality\n1,1,%s,%s,10,14.3,1\n1,2,%s,777,20,28.6,1\n' \
  "$s0" "$r0" "$s0" >"$D/badst.csv"
expect_status 65 "unknown station" -- "$TZERO" statics refraction --job "$J" --picks "$D/badst.csv" \
  --out "$D/x1.csv" --datum-m 0
expect_stderr "badst.csv: line 4: receiver station 777" "error names the file, line and station"
expect_no_file "$D/x1.csv" "nothing written after bad picks"
printf 'record,channel,source_station,receiver_station,offset_m,time_ms,quality\n1,1,0,1,10,NaN,1\n' >"$D/badnan.csv"
expect_status 65 "NaN time" -- "$TZERO" statics refraction --job "$J" --picks "$D/badnan.csv" \
  --out "$D/x2.csv" --datum-m 0
expect_stderr "badnan.csv: line 2: column time_ms" "error names the file, line and column"
expect_status 65 "no picks in the refractor range" -- "$TZERO" statics refraction --job "$J" \
  --picks "$D/p1.csv" --out "$D/x3.csv" --datum-m 0 --offset-min-m 5000
expect_stderr "p1.csv: no picks in the refractor's offset range" "error names the file"
expect_no_file "$D/x3.csv" "nothing written without refractor picks"
expect_status 64 "no datum" -- "$TZERO" statics refraction --job "$J" --picks "$D/p1.csv" --out "$D/x4.csv"
expect_status 64 "unknown verb" -- "$TZERO" statics sideways
expect_status 0 "statics --help" -- "$TZERO" statics --help
expect_status 0 "statics refraction --help" -- "$TZERO" statics refraction --help
expect_stdout "qualified" "--help carries the caution (project rule)"

# ---- tzero statics residual: the synth line has no statics errors, so the
# surface-consistent residual statics must all be near zero (common practice: a
# line without static errors gains nothing), and the stack power must not drop.
cat >"$D/model2.json" <<'EOF2'
{ "description": "Harrow Flats reflection test model (invented)",
  "layers": [ { "thickness_m": 150, "velocity_mps": 1800 }, { "thickness_m": 200, "velocity_mps": 2300 },
              { "thickness_m": 200, "velocity_mps": 2700 }, { "velocity_mps": 3200 } ] }
EOF2
printf '{ "shots": ["refl/*.sgy"], "geometry": {"layout": "layout.json"}, "velocity": "refl/rms_velocity.csv" }\n' >"$D/jobv.json"
"$TZERO" synth --model "$D/model2.json" --layout "$D/layout.json" --out "$D/refl" \
  --interval-ms 1 --record-ms 600 --peak-hz 40 --format ieee --quiet --no-direct --no-head-wave
expect_status 0 "residual statics" -- "$TZERO" statics residual --job "$D/jobv.json" --out "$D/res.csv" \
  --window-ms 120,560 --iterations 2
expect_stdout "^iteration 1: stack power" "stack power reported for each iteration"
expect_stdout "^iteration 2: stack power" "second iteration reported"
head -n 2 "$D/res.csv" | tail -n 1 | grep -q '^kind,station,x_m,y_m,elevation_m,static_ms$' &&
  ok "residual table has the station statics columns" || notok "table header: $(head -n 2 "$D/res.csv")"
big=$(awk -F, 'NR > 2 { v = $6 < 0 ? -$6 : $6; if (v > 0.5) n++ } END { print n + 0 }' "$D/res.csv")
[ "$big" -eq 0 ] && ok "no residual static beyond 0.5 ms on a line without static errors" ||
  notok "$big stations with residual statics beyond 0.5 ms"
expect_status 0 "residual --json" -- "$TZERO" statics residual --job "$D/jobv.json" --out "$D/res2.csv" \
  --window-ms 120,560 --iterations 1 --json
expect_stdout '"stack_power_after":' "JSON carries the stack power"
expect_status 65 "job without velocities" -- "$TZERO" statics residual --job "$J" --out "$D/x5.csv"
expect_no_file "$D/x5.csv" "nothing written without velocities"
expect_status 64 "bad --window-ms" -- "$TZERO" statics residual --job "$D/jobv.json" --out "$D/x6.csv" --window-ms 200
expect_status 64 "bad --iterations" -- "$TZERO" statics residual --job "$D/jobv.json" --out "$D/x6.csv" --iterations 0
expect_status 64 "window outside the traces" -- "$TZERO" statics residual --job "$D/jobv.json" --out "$D/x6.csv" --window-ms 100,9000
expect_status 0 "statics residual --help" -- "$TZERO" statics residual --help

# ---- tzero picture --picks: the picks of a record drawn over it
rec=$(ls "$D"/shots/*.sgy | head -n 1)
expect_status 0 "picture of a record with its picks" -- "$TZERO" picture "$rec" --picks "$D/p1.csv" \
  --out "$D/rec.svg"
grep -q 'class="marks"' "$D/rec.svg" && ok "the picture carries a group of pick marks" ||
  notok "no pick marks in the SVG"
n=$(awk '/class="marks"/,/<\/g>/' "$D/rec.svg" | grep -c '<circle\|<path')
[ "$n" -ge 20 ] && ok "a mark for the picked traces of the record ($n)" || notok "$n marks"
expect_status 65 "picture with a bad picks file" -- "$TZERO" picture "$rec" --picks "$D/badnan.csv" \
  --out "$D/rec2.png"
expect_stderr "badnan.csv: line 2" "error names the picks file and line"
expect_no_file "$D/rec2.png" "nothing drawn after bad picks"
