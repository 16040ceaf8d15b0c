# test_report.sh -- `tzero report`: summary, one CMP, fold CSV from a saved report.
# The survey is written with segyio (tests/xcheck/test_stack_segyio.py); its
# brute-force fold at CMP 250 is 6 (nominal N dg/(2 ds) = 24*10/(2*20), Sheriff & Geldart 1995).
# Exit statuses: BSD sysexits(3).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
Q="$D/out/qc.json"
"$TZERO" stack --job "$D/line.json" >"$T/sum"
expect_status 0 "report prints the summary" -- "$TZERO" report "$Q"
grep -v '^timing\|^throughput\|^report' "$T/sum" >"$T/a"
grep -v '^timing\|^throughput' "$T/out" >"$T/b"
if cmp -s "$T/a" "$T/b" && [ -s "$T/a" ]; then
  ok "consistency check: the saved report prints the same summary as the run"
else notok "report summary differs from the run's"; fi
expect_status 0 "--cmp 250" -- "$TZERO" report "$Q" --cmp 250
expect_stdout "^fold +6 " "CMP 250 has the brute-force fold 6"
expect_stdout "^full fold from" "CMP detail gives the full-fold time"
expect_status 0 "--fold-csv" -- "$TZERO" report "$Q" --fold-csv "$T/fold.csv"
head -n 1 "$T/fold.csv" | grep -q '^cmp,x_m,y_m,fold,offset_min_m,offset_max_m,live_fraction,full_fold_ms$' &&
  ok "fold CSV has the documented columns" || notok "fold CSV header"
n=$(($(wc -l <"$T/fold.csv") - 1))
m=$("$PYTHON" -c "import json,sys; print(len(json.load(open(sys.argv[1]))['cmps']))" "$Q")
[ "$n" -eq "$m" ] && ok "fold CSV has one row per CMP ($n)" || notok "fold CSV rows $n, report CMPs $m"
grep -q '^250,1245.000,5000.000,6,' "$T/fold.csv" && ok "fold CSV row of CMP 250 (x = 249 * 5 m)" ||
  notok "fold CSV row of CMP 250"
expect_status 64 "--cmp outside the report" -- "$TZERO" report "$Q" --cmp 99999
expect_stderr "CMP 99999 is not in this report" "--cmp outside: message"
printf '{"format": "something-else"}' >"$T/x.json"
expect_status 65 "not a tzero-qc/1 report" -- "$TZERO" report "$T/x.json"
expect_stderr 'format: expected "tzero-qc/1"' "wrong format: message"
printf '{"format": "tzero-qc/1", ' >"$T/y.json"
expect_status 65 "truncated report" -- "$TZERO" report "$T/y.json"
expect_stderr 'y.json: line 1: byte [0-9]+: not valid JSON' "truncated report: message with byte offset"
expect_status 66 "missing report" -- "$TZERO" report "$T/none.json"
expect_status 64 "no report given" -- "$TZERO" report
expect_status 0 "--help" -- "$TZERO" report --help
expect_stdout "qualified" "--help carries the caution"
