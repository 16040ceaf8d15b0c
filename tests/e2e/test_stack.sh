# test_stack.sh -- `tzero stack`: reproducibility, batch behaviour, error cases.
# The survey is written with segyio by tests/xcheck/test_stack_segyio.py (independent
# of tzero). Exit statuses are BSD sysexits(3): 64 usage, 65 data, 66 no input.
# Sources: DEVELOPERS.md (bitwise identity for any thread count; no half-written
# output; job errors name the key); common practice for the rest.
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"

# --- bitwise identity across thread counts and runs (DEVELOPERS.md, threads: bitwise-identical output for any thread count)
for n in 1 2 3 5; do
  expect_status 0 "stack with --threads $n" -- "$TZERO" stack --job "$J" --threads $n \
    --out "$D/out/t$n.sgy" --report "$D/out/t$n.json" --quiet
done
for n in 2 3 5; do
  if cmp -s "$D/out/t1.sgy" "$D/out/t$n.sgy"; then ok "section with $n threads is bitwise identical to 1 thread"
  else notok "section with $n threads differs from 1 thread"; fi
done
"$TZERO" stack --job "$J" --threads 2 --out "$D/out/again.sgy" --report "$D/out/again.json" --quiet
if cmp -s "$D/out/t2.sgy" "$D/out/again.sgy"; then ok "two runs give identical sections"
else notok "two runs differ"; fi
expect_status 0 "sinc8 stack runs" -- "$TZERO" stack --job "$J" --interpolation sinc8 --threads 1 \
  --out "$D/out/s1.sgy" --report "$D/out/s1.json" --quiet
"$TZERO" stack --job "$J" --interpolation sinc8 --threads 4 --out "$D/out/s4.sgy" --quiet
if cmp -s "$D/out/s1.sgy" "$D/out/s4.sgy"; then ok "sinc8: 4 threads bitwise identical to 1"
else notok "sinc8: 4 threads differ from 1"; fi

# --- summary, --json, --quiet
expect_status 0 "summary on stdout" -- "$TZERO" stack --job "$J" --out "$D/out/a.sgy" --report "$D/out/a.json"
expect_stdout "^fold +nominal 6\.0" "summary gives the nominal fold"
expect_stdout "skipped: dead 1, auxiliary 1" "summary counts skipped traces by reason"
if [ -s "$T/err" ]; then notok "no progress line on stderr when it is not a terminal"; else
  ok "no progress line on stderr when it is not a terminal"; fi
expect_status 0 "--json prints the report" -- "$TZERO" stack --job "$J" --out "$D/out/a.sgy" --json
expect_stdout '"format":[[:space:]]*"tzero-qc/1"' "--json output is the tzero-qc/1 report"
expect_status 0 "--quiet" -- "$TZERO" stack --job "$J" --out "$D/out/a.sgy" --quiet
if [ -s "$T/out" ]; then notok "--quiet prints nothing"; else ok "--quiet prints nothing"; fi

# --- a line fitted through the midpoints (no bins in the job) with a CMP range
cat >"$D/fit.json" <<EOF
{"shots": ["shots/*.sgy"], "velocity": "velocity.csv",
 "selection": {"cmp_first": 10, "cmp_last": 40},
 "output": {"section": "out/fit.sgy"}}
EOF
expect_status 0 "fitted line and CMP range" -- "$TZERO" stack --job "$D/fit.json" --json
expect_stdout '"origin":[[:space:]]*"fitted"' "report says the line was fitted"
expect_stdout '"cmp_first":[[:space:]]*10,' "section starts at the selected CMP"

# --- rerun with a revised velocity file (options override the job)
expect_status 0 "rerun with --velocity and new outputs" -- "$TZERO" stack --job "$J" \
  --velocity "$D/fast.csv" --out "$D/out/rev.sgy" --report "$D/out/rev.json" --quiet
if cmp -s "$D/out/rev.sgy" "$D/out/t1.sgy"; then notok "revised velocities change the section"
else ok "revised velocities change the section"; fi
grep -q 'fast.csv' "$D/out/rev.json" && ok "report records the overriding velocity file" ||
  notok "report lacks the overriding velocity file"

# --- bad job files: message naming the key, status, no output
bad_job() { # name status pattern json
  printf '%s\n' "$4" >"$D/bad.json"
  rm -f "$D/out/bad.sgy"
  expect_status "$2" "$1" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/bad.sgy" --quiet
  expect_stderr "$3" "$1: message"
  expect_no_file "$D/out/bad.sgy" "$1: no output section"
}
bad_job "unknown key" 65 'moveout.strech_limit_pct: unknown key; did you mean "stretch_limit_pct"' \
  '{"shots": ["shots/*.sgy"], "velocity": "velocity.csv", "moveout": {"strech_limit_pct": 30}}'
bad_job "wrong type" 65 'moveout.stretch_limit_pct: expected a number between 0 and 1000' \
  '{"shots": ["shots/*.sgy"], "velocity": "velocity.csv", "moveout": {"stretch_limit_pct": "x"}}'
bad_job "missing velocity file" 66 'velocity: cannot open' \
  '{"shots": ["shots/*.sgy"], "velocity": "nowhere.csv"}'
bad_job "empty shot pattern" 66 "shots\\[0\\]: pattern .* matches no file" \
  '{"shots": ["nothing/*.sgy"], "velocity": "velocity.csv"}'
bad_job "not JSON" 65 'not valid JSON' '{"shots": ["shots/*.sgy"],'
bad_job "no velocity at all" 65 'no velocity table' '{"shots": ["shots/*.sgy"]}'

# --- Dix warnings reach the report: RMS 2500 m/s at 1.0 s then 2000 m/s at 1.2 s
# gives V_int^2 = -7.25e6 (computed from Dix 1955; check value 16 of docs/references.md); the run goes on
printf 'cmp,time_ms,velocity_mps\n1,0,1800\n1,500,2500\n1,1000,2500\n1,1200,2000\n' >"$D/dix.csv"
expect_status 0 "stack with an imaginary Dix interval" -- "$TZERO" stack --job "$J" \
  --velocity "$D/dix.csv" --out "$D/out/dix.sgy" --report "$D/out/dix.json"
expect_stdout "^velocity .*dix.csv: 1 control CMPs, [1-9][0-9]* warning" "summary counts the Dix warnings"
grep -q '"imaginary"' "$D/out/dix.json" && ok "report lists the imaginary interval" ||
  notok "report lacks the imaginary interval"

# --- bad velocity table: the velocity module's message with its line, status 65
printf 'cmp,time_ms,velocity_mps\n1,0,1800\n1,300,-5\n' >"$D/badvel.csv"
rm -f "$D/out/bad.sgy"
expect_status 65 "bad velocity table" -- "$TZERO" stack --job "$J" --velocity "$D/badvel.csv" \
  --out "$D/out/bad.sgy" --quiet
expect_stderr 'badvel.csv: line 3' "bad velocity table: message names the line"
expect_no_file "$D/out/bad.sgy" "bad velocity table: no output section"

# --- corrupt shot: stops naming the file and byte offset, unless --skip-bad-files
mkdir -p "$D/c/shots"
cp "$D"/shots/*.sgy "$D/c/shots/"
cp "$D/velocity.csv" "$D/c/"
head -c 3000 "$D/shots/shot_0005.sgy" >"$D/c/shots/shot_0005.sgy"
sed 's#out/#./#' "$J" >"$D/c/line.json"
expect_status 65 "truncated shot file stops the run" -- "$TZERO" stack --job "$D/c/line.json" \
  --out "$D/c/st.sgy" --report "$D/c/qc.json" --quiet
expect_stderr 'shot_0005.sgy: .*byte' "the message names the file and the byte offset"
expect_no_file "$D/c/st.sgy" "no section after a corrupt shot"
expect_no_file "$D/c/qc.json" "no report after a corrupt shot"
expect_status 0 "--skip-bad-files goes on" -- "$TZERO" stack --job "$D/c/line.json" \
  --out "$D/c/st.sgy" --report "$D/c/qc.json" --skip-bad-files --quiet
grep -Eq '"bad":[[:space:]]*true' "$D/c/qc.json" && grep -q 'shot_0005.sgy' "$D/c/qc.json" &&
  ok "the skipped file is listed in the report" || notok "skipped file not in the report"
rm "$D/c/shots/shot_0005.sgy"
printf 'not a segy file' >"$D/c/shots/shot_0005.sgy"
expect_status 65 "a file that is not SEG-Y stops the run" -- "$TZERO" stack \
  --job "$D/c/line.json" --out "$D/c/st2.sgy" --quiet
expect_no_file "$D/c/st2.sgy" "no section after a non-SEG-Y shot"

# --- geometry from a table (docs/geometry-table.md): the same fold as the headers;
# a trace missing from the table stops the run naming the file and trace
"$PYTHON" -c "
import sys
sys.path.insert(0, '$TOP/tests/xcheck')
import test_stack_segyio as s
with open('$D/table.csv', 'w') as f, open('$D/short.csv', 'w') as g:
    f.write('field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n')
    g.write('field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n')
    for sh, c, sx, rx in s.geometry():
        row = f'{sh + 1},{c + 1},{sx},5000,{rx},5000\n'
        f.write(row)
        if (sh, c) != (9, 7):
            g.write(row)
"
sed 's#"geometry": "headers"#"geometry": {"table": "table.csv"}#' "$J" >"$D/tab.json"
sed 's#"geometry": "headers"#"geometry": {"table": "short.csv"}#' "$J" >"$D/short.json"
expect_status 0 "geometry from a table" -- "$TZERO" stack --job "$D/tab.json" --out "$D/out/tab.sgy" \
  --report "$D/out/tab.json" --quiet
# after the textual header, which names the geometry source in its processing sequence
tail -c +3201 "$D/out/tab.sgy" >"$D/out/tab.body"; tail -c +3201 "$D/out/t1.sgy" >"$D/out/t1.body"
if cmp -s "$D/out/tab.body" "$D/out/t1.body"; then ok "table geometry gives the same section as the headers"
else notok "table geometry differs from the headers"; fi
rm -f "$D/out/short.sgy"
expect_status 65 "a trace missing from the geometry table" -- "$TZERO" stack --job "$D/short.json" \
  --out "$D/out/short.sgy" --quiet
expect_stderr 'shot_0010.sgy: .*trace 8: .*not in geometry table' "the message names the file, trace and table"
expect_no_file "$D/out/short.sgy" "no section when a trace has no geometry"

# --- an uncreatable report stops the run before the section appears
rm -f "$D/out/nr.sgy"
expect_status 73 "report below a file, not a folder" -- "$TZERO" stack --job "$J" --out "$D/out/nr.sgy" \
  --report "$J/qc.json" --quiet
expect_no_file "$D/out/nr.sgy" "no section when the report cannot be created"
expect_status 73 "section below a file, not a folder" -- "$TZERO" stack --job "$J" \
  --out "$J/st.sgy" --report "$D/out/nr.json" --quiet
expect_no_file "$D/out/nr.json" "no report when the section cannot be created"

# --- options
expect_status 64 "missing --job" -- "$TZERO" stack
expect_status 64 "bad --threads" -- "$TZERO" stack --job "$J" --threads many
expect_status 64 "bad --interpolation" -- "$TZERO" stack --job "$J" --interpolation cubic
expect_status 0 "--help" -- "$TZERO" stack --help
expect_stdout "qualified" "--help carries the caution"

# --- the example of docs/job-file.md runs as written (docs that cannot rot)
sed -n '/^```json$/,/^```$/p' "$TOP/docs/job-file.md" | sed '1d;$d' >"$D/doc.json"
expect_status 0 "the docs/job-file.md example runs" -- "$TZERO" stack --job "$D/doc.json" --quiet
[ -s "$D/out/doc_stack.sgy" ] && [ -s "$D/out/doc_qc.json" ] &&
  ok "the docs example writes its section and report" || notok "docs example outputs missing"
