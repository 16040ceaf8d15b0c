# test_deliver.sh -- the deliverables' job keys and commands: client, contractor, crs,
# polarity, output.navigation and output.history, `tzero velocity --job --export`.
# The survey is written with segyio by tests/xcheck/test_stack_segyio.py. Checks: bad
# values exit 65 naming the JSON path, outputs over inputs or over each other exit 73,
# bad command lines exit 64 (BSD sysexits(3)); the date in the textual header and the
# history is SOURCE_DATE_EPOCH's when it is set (the reproducible-builds convention);
# parts joined by `tzero merge` carry the whole line's textual header (cards 1-38); runs
# with --out or --cmp-range write no navigation or history, `tzero merge` writes them.
# The values themselves are read back with segyio and NumPy in
# tests/xcheck/test_deliverables.py.
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"

# edit_job KEY-JSON OUT: the survey's job with top-level keys replaced (Python json)
edit_job() {
  "$PYTHON" - "$J" "$1" "$2" <<'PY'
import json, sys
j = json.load(open(sys.argv[1]))
for k, v in json.loads(sys.argv[2]).items():
    if k == "output":
        j["output"].update(v)
    else:
        j[k] = v
json.dump(j, open(sys.argv[3], "w"))
PY
}

edit_job '{"polarity": "upward"}' "$D/p.json"
expect_status 65 "an unknown polarity is refused" -- "$TZERO" stack --job "$D/p.json" --quiet
expect_stderr '\$\.polarity' "the message names \$.polarity"
edit_job '{"client": 7}' "$D/c.json"
expect_status 65 "a client that is not a string is refused" -- "$TZERO" stack --job "$D/c.json"
expect_stderr '\$\.client' "the message names \$.client"
edit_job '{"crs": ["EPSG", 32630]}' "$D/r.json"
expect_status 65 "a CRS that is not a string is refused" -- "$TZERO" stack --job "$D/r.json"
expect_stderr '\$\.crs' "the message names \$.crs"
edit_job '{"output": {"navgation": "out/nav.csv"}}' "$D/n.json"
expect_status 65 "a misspelt output key is refused" -- "$TZERO" stack --job "$D/n.json"
expect_stderr 'navigation' "the message suggests navigation"
edit_job '{"output": {"navigation": "out/stack.sgy"}}' "$D/s.json"
expect_status 73 "a navigation file over the section is refused" -- "$TZERO" stack --job "$D/s.json"
expect_no_file "$D/out/stack.sgy" "no section is left behind"
edit_job '{"output": {"history": "velocity.csv"}}' "$D/h.json"
expect_status 73 "a history over the velocity table is refused" -- "$TZERO" stack --job "$D/h.json"

edit_job '{"client": "Quillmere Parish Council (invented)", "polarity": "negative",
           "output": {"navigation": "out/nav.csv", "history": "out/history.md"}}' "$D/ok.json"
SOURCE_DATE_EPOCH=1780000000 expect_status 0 "stack with navigation and history" -- \
  "$TZERO" stack --job "$D/ok.json" --quiet
# 1780000000 s after 1970-01-01 is 2026-05-28 UTC (GNU date -u -d @1780000000)
W=$(date -u -d @1780000000 +%Y-%m-%d)
if head -c 80 "$D/out/stack.sgy" | "$PYTHON" -c 'import sys; print(sys.stdin.buffer.read().decode("cp037"))' |
   grep -q "written $W"; then ok "card 1 gives SOURCE_DATE_EPOCH's date ($W)"
else notok "card 1 lacks the date $W"; fi
if grep -q "on $W (UTC)" "$D/out/history.md"; then ok "the history gives the same date"
else notok "the history lacks the date $W"; fi
[ -s "$D/out/nav.csv" ] && ok "navigation file written" || notok "no navigation file"
"$TZERO" stack --job "$D/ok.json" --quiet --depfile "$D/out/ok.d"
if head -n 1 "$D/out/ok.d" | grep -q 'nav.csv .*history.md:'; then
  ok "the dependency file names the navigation file and the history as targets (make(1))"
else notok "depfile targets: $(head -n 1 "$D/out/ok.d")"; fi

# a line in parts, joined: the same cards 1-38 as the whole line
"$TZERO" stack --job "$D/ok.json" --out "$D/out/w.sgy" --report "$D/out/w.json" --quiet
set -- $("$PYTHON" -c 'import json, sys; s = json.load(open(sys.argv[1]))["section"]
print(s["cmp_first"], (s["cmp_first"] + s["cmp_last"]) // 2, s["cmp_last"])' "$D/out/w.json")
mv "$D/out/nav.csv" "$D/out/nav_whole.csv"
mv "$D/out/history.md" "$D/out/history_whole.md"
"$TZERO" stack --job "$D/ok.json" --cmp-range "$1-$2" --out "$D/out/a.sgy" --report "$D/out/a.json" \
  --quiet
"$TZERO" stack --job "$D/ok.json" --cmp-range "$(($2 + 1))-$3" --out "$D/out/b.sgy" \
  --report "$D/out/b.json" --quiet
expect_status 0 "merge the parts" -- "$TZERO" merge "$D/out/a.json" "$D/out/b.json" \
  --out "$D/out/m.sgy" --quiet
if [ "$(head -c 3040 "$D/out/m.sgy" | od -An -tx1)" = "$(head -c 3040 "$D/out/w.sgy" | od -An -tx1)" ]
then ok "the joined section carries the whole line's textual header"
else notok "the joined section's textual header differs from the whole line's"; fi
if cmp -s "$D/out/nav.csv" "$D/out/nav_whole.csv"; then
  ok "runs with --out and --cmp-range leave the navigation alone; merge writes the line's"
else notok "the joined line's navigation differs from the whole line's"; fi
if grep -q "tzero merge" "$D/out/history.md"; then ok "merge writes the line's history"
else notok "no history from merge"; fi

expect_status 64 "--export without --job" -- "$TZERO" velocity --export "$T/v.csv"
expect_status 64 "--every 0" -- "$TZERO" velocity --job "$D/ok.json" --export "$T/v.csv" --every 0
expect_status 64 "--export with an action" -- "$TZERO" velocity check "$D/velocity.csv" \
  --job "$D/ok.json" --export "$T/v.csv"
expect_status 73 "--export over the velocity table" -- "$TZERO" velocity --job "$D/ok.json" \
  --export "$D/velocity.csv"
expect_status 66 "--export with a missing job" -- "$TZERO" velocity --job "$T/none.json" \
  --export "$T/v.csv"
expect_no_file "$T/v.csv" "no export is left behind"
expect_status 0 "--export at the control CMPs" -- "$TZERO" velocity --job "$D/ok.json" \
  --export "$T/v.csv"
expect_stdout 'velocity export: [0-9]+ rows' "the summary line"
