# test_gate.sh -- `tzero report --check` and `stack --check`: statuses and messages.
# Exit statuses are BSD sysexits(3) (65 data, 66 no input, 64 usage); 1 is a broken
# limit (an answer, not an error: common practice for check commands, as cmp(1)
# and diff(1) answer "different" with 1). Messages name the JSON path and suggest
# the nearest key as the job file does (docs/job-file.md).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
"$TZERO" stack --job "$D/line.json" --out "$D/out/a.sgy" --report "$D/out/a.json" --quiet ||
  notok "stack the survey"
Q="$D/out/a.json"

printf '{"min_fold_pc": 90}\n' >"$D/l1.json"
expect_status 65 "misspelt limit" -- "$TZERO" report --check "$D/l1.json" "$Q"
expect_stderr 'l1.json: \$\.min_fold_pc: unknown limit; did you mean "min_fold_pct"\?' \
  "misspelt limit: JSON path and the key it probably meant"
printf '{"max_muted_pct": "ten"}\n' >"$D/l2.json"
expect_status 65 "limit of the wrong type" -- "$TZERO" report --check "$D/l2.json" "$Q"
expect_stderr '\$\.max_muted_pct: expected a number, got a string' "wrong type named"
printf '{"max_skipped_traces_pct": -5}\n' >"$D/l3.json"
expect_status 65 "negative percentage" -- "$TZERO" report --check "$D/l3.json" "$Q"
expect_stderr '\$\.max_skipped_traces_pct: expected a value of 0 or more, got -5' "negative named"
printf '{"min_fold": 3,\n "max_muted_pct": }\n' >"$D/l4.json"
expect_status 65 "limits file that is not JSON" -- "$TZERO" report --check "$D/l4.json" "$Q"
expect_stderr 'l4.json: line 2' "not JSON: the line of the fault"

printf '{"max_muted_pct": 100, "max_bad_samples": 0}\n' >"$D/ok.json"
expect_status 0 "limits that hold" -- "$TZERO" report --check "$D/ok.json" "$Q"
expect_stdout '^max_muted_pct +limit 100 +value [0-9.]+ +held' "one line per limit"
sed 's/"tzero-qc\/1"/"tzero-qc\/2"/' "$Q" >"$D/v2.json"
expect_status 65 "a report of another version" -- "$TZERO" report --check "$D/ok.json" "$D/v2.json"
expect_stderr 'v2.json: \$\.format: expected "tzero-qc/1"' "another version: names the key"
expect_status 66 "an unreadable report" -- "$TZERO" report --check "$D/ok.json" "$D/none.json"
expect_status 65 "--check without a file, report without limits" -- "$TZERO" report --check "$Q"
expect_stderr 'records no limits' "says the report records no limits"
expect_status 64 "--check without a report" -- "$TZERO" report --check
expect_status 64 "--check with only a limits file" -- "$TZERO" report --check "$D/ok.json"

# limits inline in the job, recorded in the report, used by --check without a file
sed 's/"output"/"limits": {"max_muted_pct": 1, "max_zero_fold_cmps": 0}, "output"/' \
  "$D/line.json" >"$D/gate.json"
expect_status 1 "stack --check: a broken limit exits 1" -- "$TZERO" stack --job "$D/gate.json" \
  --out "$D/out/g.sgy" --report "$D/out/g.json" --check
expect_stdout '^max_muted_pct +limit 1 +value [0-9.]+ +broken' "stack --check prints the limits"
expect_stderr 'limit broken: max_muted_pct' "stack --check names the broken limit on stderr"
if [ -s "$D/out/g.sgy" ] && [ -s "$D/out/g.json" ]; then ok "stack --check wrote both outputs"
else notok "stack --check outputs missing"; fi
expect_status 1 "report --check without a file uses the recorded limits" -- \
  "$TZERO" report --check "$D/out/g.json"
expect_stdout '^max_zero_fold_cmps +limit 0 +value 0 +held' "recorded limits are checked"
sed 's/"output"/"limits": {"max_mutedpct": 1}, "output"/' "$D/line.json" >"$D/bad.json"
expect_status 65 "misspelt limit in the job" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/b.sgy"
expect_stderr '\$\.limits\.max_mutedpct: unknown limit; did you mean "max_muted_pct"\?' \
  "job limits: JSON path under \$.limits"
expect_no_file "$D/out/b.sgy" "no section from a job with bad limits"
sed 's/"output"/"limits": "nowhere.json", "output"/' "$D/line.json" >"$D/nolim.json"
expect_status 66 "job naming a missing limits file" -- "$TZERO" stack --job "$D/nolim.json" --out "$D/out/c.sgy"

# compare --check: a revision at control CMP 280 changes only CMPs 271-289, between
# its neighbours 270 and 290 (velocity linear in CMP number between control CMPs,
# docs/velocity-table.md); traces of the other CMPs are bitwise the same (0 dB).
for c in 216 270 280 290 355; do
  for tv in 0,1800 300,1800 550,2100 800,2400; do echo "$c,$tv"; done
done | sed '1i cmp,time_ms,velocity_mps' >"$D/v1.csv"
sed 's/^280,550,2100$/280,550,2300/' "$D/v1.csv" >"$D/v2.csv"
"$TZERO" stack --job "$D/line.json" --velocity "$D/v1.csv" --out "$D/out/v1.sgy" --quiet
"$TZERO" stack --job "$D/line.json" --velocity "$D/v2.csv" --out "$D/out/v2.sgy" --quiet
expect_status 0 "compare --check: only the revised CMPs changed" -- "$TZERO" compare --check \
  --max-change-db 0 --cmps 271-289 --quiet "$D/out/v1.sgy" "$D/out/v2.sgy"
expect_status 1 "compare --check: changes outside --cmps exit 1" -- "$TZERO" compare --check \
  --max-change-db 0 --cmps 275-285 "$D/out/v1.sgy" "$D/out/v2.sgy"
expect_stdout '^check: broken: 8 CMPs outside 275-285 changed by more than 0 dB .*: CMP 271-274, 286-289$' \
  "compare --check names the changed CMP ranges"
expect_status 64 "compare --check needs --max-change-db" -- "$TZERO" compare --check \
  "$D/out/v1.sgy" "$D/out/v2.sgy"
