# test_geometry.sh -- `tzero geometry`: summaries, outputs, bad inputs and exit statuses.
# Exit statuses are BSD sysexits(3): 64 usage, 65 data, 66 no input.
# Sources: sysexits(3) and tzero-geometry(1) (exit statuses, messages naming the file and trace);
# nominal fold N dg / (2 ds) = 12 * 5 / 20 = 3 (Sheriff & Geldart 1995); common practice for the rest.
. "$TOP/tests/e2e/lib.sh"
cat >"$T/model.json" <<'JSON'
{"layers": [{"thickness_m": 50, "velocity_mps": 1500}, {"velocity_mps": 2200}]}
JSON
cat >"$T/layout.json" <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 6, "channels": 12,
 "first_field_record": 11}
JSON
"$TZERO" synth --model "$T/model.json" --layout "$T/layout.json" --out "$T/sv" --samples 51 --quiet
"$TZERO" synth --model "$T/model.json" --layout "$T/layout.json" --out "$T/bare" --samples 51 \
  --bare-headers --quiet
expect_status 0 "geometry from headers" -- "$TZERO" geometry "$T"/sv/*.sgy
expect_stdout "fitted" "the line is fitted through the midpoints"
expect_stdout "fold: nominal 3\.00, min 1, max 3" "fold statistics"
expect_stdout "^11 +12 +12 " "per-shot summary"
expect_status 0 "geometry from the layout with a fold table" -- "$TZERO" geometry \
  --layout "$T/layout.json" --fold-table "$T/fold.csv" --quiet "$T"/bare/*.sgy
head -n 1 "$T/fold.csv" | grep -q '^cmp,x_m,y_m,fold,offset_min_m,offset_max_m' &&
  ok "fold table header" || notok "fold table header"
expect_status 0 "given line" -- "$TZERO" geometry --origin-x 0 --origin-y 0 --azimuth 90 \
  --bin-size 5 --first-cmp 100 --json "$T"/sv/*.sgy
expect_stdout '"first":[[:space:]]*101' "CMP numbers follow the given line"
printf 'x_m,y_m\n0,0\n100,0\n100,50\n' >"$T/crooked.csv"
expect_status 0 "crooked line" -- "$TZERO" geometry --crooked "$T/crooked.csv" --json "$T"/sv/*.sgy
expect_stdout '"kind":[[:space:]]*"crooked"' "report says crooked"

expect_status 64 "no shot files" -- "$TZERO" geometry
expect_status 64 "layout and table together" -- "$TZERO" geometry --layout a --table b "$T"/sv/*.sgy
expect_status 64 "origin without azimuth" -- "$TZERO" geometry --origin-x 1 "$T"/sv/*.sgy
expect_status 66 "missing shot file" -- "$TZERO" geometry "$T/none.sgy"
printf '{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 6, "channels": 12}' \
  >"$T/wrong.json"
expect_status 65 "layout whose field records do not match" -- "$TZERO" geometry \
  --layout "$T/wrong.json" "$T"/sv/*.sgy
expect_stderr "shot_000011.sgy: trace 1: field record 11 channel 1: the layout has no such field record" \
  "message names the file, trace and numbers"
printf 'field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n11,1,0,0,5,0\n' \
  >"$T/short.csv"
expect_status 65 "table missing a trace" -- "$TZERO" geometry --table "$T/short.csv" "$T"/bare/*.sgy
expect_stderr "trace 2: field record 11 channel 2: not in geometry table" "message names the trace"
printf 'x_m,y_m\n0,0\n' >"$T/onenode.csv"
expect_status 65 "crooked line of one node" -- "$TZERO" geometry --crooked "$T/onenode.csv" \
  "$T"/sv/*.sgy
expect_status 65 "bare headers without a layout" -- "$TZERO" geometry "$T"/bare/*.sgy
head -c 5000 "$T/sv/shot_000011.sgy" >"$T/trunc.sgy"
expect_status 65 "truncated shot file" -- "$TZERO" geometry "$T/trunc.sgy"
expect_stderr "trunc.sgy" "message names the file"
expect_status 0 "--write copies" -- "$TZERO" geometry --layout "$T/layout.json" --write "$T/w" \
  --quiet "$T"/bare/*.sgy
expect_status 0 "copies carry the geometry" -- "$TZERO" geometry --json "$T"/w/*.sgy
expect_stdout '"max":[[:space:]]*3' "fold from the written headers"
cat >"$T/job.json" <<'JSON'
{"shots": ["bare/shot_*.sgy"], "geometry": {"layout": "layout.json"}, "velocity": "v.csv",
 "bins": {"size_m": 5, "first_cmp": 201}, "output": {"section": "out.sgy"}}
JSON
printf 'cmp,time_ms,velocity_mps\n1,0,1500\n' >"$T/v.csv"
expect_status 0 "geometry from a job file" -- "$TZERO" geometry --job "$T/job.json" --json
expect_stdout '"geometry":[[:space:]]*"layout"' "job's layout is used"
expect_stdout '"bin_size_m":[[:space:]]*5' "job's bin size is used"
expect_stdout '"first":[[:space:]]*201' "job's first CMP is used"
expect_status 64 "--job with shot files" -- "$TZERO" geometry --job "$T/job.json" "$T"/sv/*.sgy
expect_status 0 "off-line limit counts skipped traces" -- "$TZERO" geometry --origin-x 0 \
  --origin-y 1 --azimuth 90 --max-off-line 0.5 --json "$T"/sv/*.sgy
expect_stdout '"off_line":[[:space:]]*72' "every trace 1 m off the line is skipped"
