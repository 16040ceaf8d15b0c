# test_fieldline.sh -- what a user sees on a field-style line (issue 17): split spread
# 24-gap-24 at 35 degrees, GPS scatter, a misfire, an unused record number, dead, all-zero
# and noisy traces, 0.5 ms sampling, written with segyio by tests/xcheck/fieldline.py
# (independent of tzero). Figures the generator made: receiver interval 5 m, source
# interval 10 m; the trace positions of its DEAD, ZERO and NOISY constants.
. "$TOP/tests/e2e/lib.sh"
D="$T/field"
PYTHONPATH="$TOP/tests/xcheck" "$PYTHON" -c 'import sys, fieldline; fieldline.write_shots(sys.argv[1]); fieldline.write_sps(sys.argv[1])' "$D" ||
  { notok "field line"; exit 1; }

# Geometry QC: the receiver interval, measured along the line, and the missing shots.
expect_status 0 "geometry on the field line" -- "$TZERO" geometry "$D"/shots/*.sgy
expect_stdout "receiver interval 5\.000 m; source interval 10\.000 m" \
  "receiver interval 5.000 m (not lengthened by the cross-line scatter)"
expect_stdout "measured: median along-line receiver step 5\.0[0-2][0-9]+ m" "the measured step is shown"
expect_stdout "^missing shots: 2 in 2 gaps" "missing shots counted"
expect_stdout "after record 11 \(source point 1047 .*before record 12 \(source point 1051.*seen in the source point, source position" \
  "the misfire is placed between records 11 and 12"
expect_stdout "after record 21 .*before record 23 .*seen in the record number$" \
  "the unused record number 22 is found"

# inspect names the all-zero and noisy traces.
expect_status 0 "inspect a record with a dead trace" -- "$TZERO" inspect "$D/shots/rec_005.sgy"
expect_stdout "trace 10: record 5 channel 10 \(coded dead\)" "the dead trace is named"
expect_status 0 "inspect a record with an all-zero live trace" -- "$TZERO" inspect "$D/shots/rec_008.sgy"
expect_stdout "all-zero traces: 1:" "all-zero traces counted"
expect_stdout "trace 30: record 8 channel 30$" "the all-zero trace is named"
expect_status 0 "inspect a record with a noisy trace" -- "$TZERO" inspect --json "$D/shots/rec_012.sgy"
if "$PYTHON" -c 'import json,sys; f=json.load(open(sys.argv[1]))["files"][0]; n=f["noisy"]; sys.exit(0 if f["noisy_traces"] == 1 and n[0]["channel"] == 40 and n[0]["rms_over_record_median"] > 10 else 1)' "$T/out"; then
  ok "the noisy trace is flagged with its RMS over the record's median"
else notok "noisy trace in inspect --json"; fi
