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
