# test_nmo.sh -- `tzero nmo`: CMP lists, outputs and errors (the flatness of the
# corrected gathers is checked with segyio in tests/xcheck/test_stack_segyio.py).
# Exit statuses: BSD sysexits(3).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
for list in 250 "250,260,270" "250-255" "250-290:20" "300,250-252"; do
  expect_status 0 "--cmps $list" -- "$TZERO" nmo --job "$J" --cmps "$list" --out "$D/out/g.sgy" --json
  want=$("$PYTHON" -c "
import sys
out = set()
for item in sys.argv[1].split(','):
    a, _, s = item.partition(':')
    lo, _, hi = a.partition('-')
    out.update(range(int(lo), int(hi or lo) + 1, int(s or 1)))
print(','.join(map(str, sorted(out))))" "$list")
  got=$("$PYTHON" -c "import json,sys; print(','.join(str(g['cmp']) for g in json.load(open(sys.argv[1]))['gathers']))" "$T/out")
  [ "$got" = "$want" ] && ok "--cmps $list selects CMPs $want" || notok "--cmps $list: got $got, want $want"
done
rm -f "$D/out/none.sgy"
expect_status 64 "CMPs without traces" -- "$TZERO" nmo --job "$J" --cmps 1-5 --out "$D/out/none.sgy"
expect_stderr "none of the 5 requested CMPs has traces" "CMPs without traces: message"
expect_no_file "$D/out/none.sgy" "CMPs without traces: no output"
expect_status 64 "reversed range" -- "$TZERO" nmo --job "$J" --cmps 300-200 --out "$D/out/none.sgy"
expect_stderr "CMP list item '300-200'" "reversed range: message names the item"
expect_status 64 "bad step" -- "$TZERO" nmo --job "$J" --cmps 200-300:0 --out "$D/out/none.sgy"
expect_status 64 "junk item" -- "$TZERO" nmo --job "$J" --cmps 200,abc --out "$D/out/none.sgy"
expect_stderr "CMP list item 'abc'" "junk item: message names the item"
expect_status 64 "missing --out" -- "$TZERO" nmo --job "$J" --cmps 250
expect_status 66 "missing job" -- "$TZERO" nmo --job "$D/none.json" --cmps 250 --out "$D/out/g.sgy"
expect_status 0 "--help" -- "$TZERO" nmo --help
expect_stdout "qualified" "--help carries the caution"
