# test_gathers.sh -- `tzero gathers` and `tzero stack --vary`: steps, sorts,
# selections, test panels and their errors (the numbers against NumPy and segyio
# are in tests/xcheck/test_gathers.py). Exit statuses: BSD sysexits(3).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/cond.json"
"$PYTHON" - "$D/line.json" "$J" <<'PY'
import json, sys
j = json.load(open(sys.argv[1]))
j["conditioning"] = [{"step": "bandpass", "corners_hz": [4, 8, 60, 90]},
                     {"step": "agc", "window_ms": 200}]
json.dump(j, open(sys.argv[2], "w"))
PY
G="$TZERO gathers --job $J"
expect_status 0 "help" -- "$TZERO" gathers --help
expect_stdout "through STEP" "help names --through"
expect_stdout "qualified" "help carries the caution"
expect_status 0 "tzero help gathers" -- "$TZERO" help gathers
for step in edits statics "conditioning[0]" bandpass agc conditioning nmo mute all; do
  expect_status 0 "--through $step" -- $G --through "$step" --select 250 --out "$D/out/g.sgy" --json
  expect_stdout "\"step\":" "--through $step: JSON summary"
done
expect_status 0 "--through conditioning[0] is reported by name" -- $G --through "conditioning[0]" --select 250 --out "$D/out/g.sgy"
expect_stdout "through conditioning\[0\] \(bandpass\)" "step label names the conditioning step"
for s in "shot 5" "receiver 120-130" "cmp 250"; do
  set -- $s
  expect_status 0 "--sort $1 --select $2" -- $G --sort $1 --select $2 --through edits --out "$D/out/g.sgy" --quiet
done
expect_status 0 "--sort offset with ranges" -- $G --sort offset --select 150-200,200-400:100 --out "$D/out/g.sgy" --quiet
expect_status 0 "near-offset section" -- $G --sort offset --select 0-160 --one-per-cmp --out "$D/out/near.sgy"
expect_stdout "traces through all, offset gathers" "near-offset section: summary"
# errors: usage (64) with a clear message, nothing written
rm -f "$D/out/bad.sgy"
expect_status 64 "unknown step" -- $G --through nmoo --out "$D/out/bad.sgy"
expect_stderr "unknown step; did you mean 'nmo'" "unknown step: did-you-mean"
expect_status 64 "conditioning index past the chain" -- $G --through "conditioning[5]" --out "$D/out/bad.sgy"
expect_stderr "has 2 steps \(conditioning\[0\] to conditioning\[1\]\)" "index past the chain: message"
expect_status 64 "unknown sort" -- $G --sort station --out "$D/out/bad.sgy"
expect_status 64 "--one-per-cmp with shots" -- $G --sort shot --one-per-cmp --out "$D/out/bad.sgy"
expect_status 64 "bad offset range" -- $G --sort offset --select 100-50 --out "$D/out/bad.sgy"
expect_stderr "offset range item '100-50'" "bad offset range: names the item"
expect_status 64 "bad record list" -- $G --sort shot --select 3,x --out "$D/out/bad.sgy"
expect_status 64 "nothing selected" -- $G --select 1-5 --out "$D/out/bad.sgy"
expect_stderr "no trace of the line matches the selection" "nothing selected: message"
expect_status 64 "missing --out" -- $G
expect_no_file "$D/out/bad.sgy" "no output after the errors"
# --vary: three panels; keys that do not exist
expect_status 0 "--vary three values" -- $G --through mute --select 250 --vary moveout.stretch_limit_pct=20,50,80 --out "$D/out/p.sgy" --json
expect_stdout "\"panels\":" "--vary: panels in the JSON summary"
expect_status 0 "--vary a conditioning corner" -- $G --through bandpass --select 250 --vary "conditioning[0].corners_hz[3]=70,100" --out "$D/out/p2.sgy" --quiet
expect_status 0 "--vary a key the job leaves at its default" -- $G --select 250 --vary moveout.stretch_taper_ms=0,20 --out "$D/out/p3.sgy" --quiet
expect_status 64 "--vary misspelt key" -- $G --vary moveout.stretch_limt_pct=20,50 --out "$D/out/bad.sgy"
expect_stderr '\$\.moveout\.stretch_limt_pct: unknown key; did you mean "stretch_limit_pct"' "misspelt key: path and did-you-mean"
expect_status 64 "--vary misspelt top-level key" -- $G --vary moveot.stretch_limit_pct=20 --out "$D/out/bad.sgy"
expect_stderr 'did you mean "moveout"' "misspelt top-level key: did-you-mean"
expect_status 64 "--vary index past the array" -- $G --vary "conditioning[4].window_ms=100" --out "$D/out/bad.sgy"
expect_stderr '\$\.conditioning has no element 4 \(it has 2: 0 to 1\)' "index past the array: message"
expect_status 64 "--vary into a number" -- $G --vary "moveout.stretch_limit_pct.x=1" --out "$D/out/bad.sgy"
expect_status 64 "--vary without values" -- $G --vary moveout.stretch_limit_pct= --out "$D/out/bad.sgy"
expect_status 65 "--vary a value the job refuses" -- $G --vary moveout.stretch_limit_pct=-5 --out "$D/out/bad.sgy"
expect_stderr '\$\.moveout\.stretch_limit_pct' "refused value: JSON path"
expect_status 64 "--vary a key an option also sets" -- $G --stretch-limit 40 --vary moveout.stretch_limit_pct=20,50 --out "$D/out/bad.sgy"
expect_stderr "stretch-limit sets that key for every panel" "key set by an option: message"
expect_no_file "$D/out/bad.sgy" "no output after the --vary errors"
# stack --vary
expect_status 0 "stack --vary" -- "$TZERO" stack --job "$J" --cmp-range 240-250 --vary moveout.stretch_limit_pct=30,60 --out "$D/out/sp.sgy"
expect_stdout "2 test panels of CMPs 240-250" "stack --vary: summary"
expect_status 64 "stack --vary needs --cmp-range" -- "$TZERO" stack --job "$J" --vary moveout.stretch_limit_pct=30,60 --out "$D/out/bad.sgy"
expect_status 64 "stack --vary misspelt key" -- "$TZERO" stack --job "$J" --cmp-range 240-250 --vary moveout.strech_limit_pct=30 --out "$D/out/bad.sgy"
expect_stderr 'did you mean "stretch_limit_pct"' "stack --vary: did-you-mean"
expect_no_file "$D/out/bad.sgy" "no output after the stack --vary errors"
# the picture labels the panels
expect_status 0 "picture of panels" -- "$TZERO" picture "$D/out/p.sgy" --out "$D/out/p.svg"
if grep -q "stretch_limit_pct = 80" "$D/out/p.svg"; then ok "picture labels each panel with its value"; else notok "picture labels each panel with its value"; fi
