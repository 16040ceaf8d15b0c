# test_decon_fk.sh -- the record-wide conditioning steps ("deconvolution",
# "fk_filter") through `tzero stack`, `tzero nmo` and `tzero semblance`: thread
# identity, a part of the line equal to the same CMPs of the whole line, and bad
# parameters (exit 65 naming the JSON path, no output). The survey is written with
# segyio by tests/xcheck/test_stack_segyio.py (independent of tzero).
# Sources: DEVELOPERS.md (bitwise identity for any thread count; record-wide steps see
# whole records, so a part and a full run give the same bits; job errors name the
# key); docs/conditioning.md for the keys; sysexits(3) (65 bad job).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
with_steps() { # out.json steps-json
  "$PYTHON" - "$J" "$1" "$2" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["conditioning"] = json.loads(sys.argv[3])
json.dump(job, open(sys.argv[2], "w"))
PY
}
STEPS='[{"step": "deconvolution", "operator_ms": 80, "gap_ms": 0, "prewhitening_pct": 1,
         "window": [[150, 100, 700], [400, 250, 950]], "ensemble": "record"},
        {"step": "fk_filter", "reject_mps": [0, 600], "taper_pct": 10, "min_hz": 0},
        {"step": "deconvolution", "operator_ms": 60, "gap_ms": 16, "prewhitening_pct": 0.5,
         "window": [[0, 100, 900]], "ensemble": "trace"}]'
with_steps "$D/rw.json" "$STEPS"

for n in 1 3; do
  expect_status 0 "decon + f-k stack with --threads $n" -- "$TZERO" stack --job "$D/rw.json" \
    --threads $n --out "$D/out/r$n.sgy" --report "$D/out/r$n.json" --quiet
done
if cmp -s "$D/out/r1.sgy" "$D/out/r3.sgy"; then ok "decon + f-k section: 3 threads bitwise identical to 1"
else notok "decon + f-k section: 3 threads differ from 1"; fi
"$TZERO" stack --job "$J" --threads 1 --out "$D/out/plain.sgy" --quiet
if cmp -s "$D/out/r1.sgy" "$D/out/plain.sgy"; then notok "decon + f-k change the section"
else ok "decon + f-k change the section"; fi
grep -q '"step":[[:space:]]*"fk_filter"' "$D/out/r1.json" &&
  grep -q '"ensemble":[[:space:]]*"record"' "$D/out/r1.json" &&
  ok "QC report parameters record the record-wide steps" || notok "QC report lacks the steps"

# --- a part of the line gives the same bits as those CMPs of the whole line
read -r LO HI <<EOF2
$("$PYTHON" -c 'import json,sys; c=[x["cmp"] for x in json.load(open(sys.argv[1]))["cmps"] if x["fold"]>0]; n=len(c); print(c[n//3], c[n//3+5])' "$D/out/r1.json")
EOF2
expect_status 0 "part $LO-$HI with decon + f-k" -- "$TZERO" stack --job "$D/rw.json" --threads 2 \
  --cmp-range "$LO-$HI" --out "$D/out/part.sgy" --quiet
"$PYTHON" - "$D/out/r1.sgy" "$D/out/part.sgy" "$LO" "$HI" <<'PY' && ok "part = the same CMPs of the whole line, bitwise" || notok "part differs from the whole line"
import sys
import numpy as np
import segyio
def traces(p):
    with segyio.open(p, ignore_geometry=True) as f:
        return {int(f.header[i][segyio.TraceField.CDP]): np.array(f.trace[i]) for i in range(f.tracecount)}
full, part = traces(sys.argv[1]), traces(sys.argv[2])
lo, hi = int(sys.argv[3]), int(sys.argv[4])
want = {c: t for c, t in full.items() if lo <= c <= hi}
sys.exit(0 if want.keys() == part.keys() and all(np.array_equal(want[c], part[c]) for c in want) else 1)
PY

# --- nmo gathers and semblance see the same conditioned traces
MID=$(( (LO + HI) / 2 ))
expect_status 0 "nmo gathers with decon + f-k" -- "$TZERO" nmo --job "$D/rw.json" --cmps "$MID" \
  --out "$D/out/g.sgy" --quiet
expect_status 0 "semblance with decon + f-k" -- "$TZERO" semblance --job "$D/rw.json" --cmps "$MID" \
  --panels "$D/out/p.sgy" --quiet
expect_status 0 "constant-velocity stacks with decon + f-k" -- "$TZERO" cvs --job "$D/rw.json" \
  --cmps "$LO-$HI" --velocities 1800,2100 --out "$D/out/cvs.sgy" --quiet

# --- bad parameters: exit 65, the JSON path, no section
bad_step() { # name pattern steps-json
  with_steps "$D/bad.json" "$3"
  rm -f "$D/out/bad.sgy"
  expect_status 65 "$1" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/bad.sgy" --quiet
  expect_stderr "$2" "$1: message"
  expect_no_file "$D/out/bad.sgy" "$1: no output section"
}
bad_step "operator longer than the design window" \
  '\$\.conditioning\[0\]\.window\[1\]: the design window \(200 ms\) is shorter than the operator \(240 ms\)' \
  '[{"step": "deconvolution", "operator_ms": 240, "window": [[0, 100, 900], [500, 300, 500]]}]'
bad_step "gap not shorter than the operator" \
  '\$\.conditioning\[0\]\.gap_ms: gap_ms 100 is not shorter than operator_ms 80' \
  '[{"step": "deconvolution", "operator_ms": 80, "gap_ms": 100, "window": [[0, 100, 900]]}]'
bad_step "fan velocities reversed" \
  '\$\.conditioning\[1\]\.reject_mps: the fan.s velocities are reversed or equal \(600, 0 m/s\)' \
  '[{"step": "agc", "window_ms": 300}, {"step": "fk_filter", "reject_mps": [600, 0]}]'
bad_step "record too short for the design window (1 s traces)" \
  '\$\.conditioning\[0\]\.window\[0\] \(deconvolution\): the record \(500 samples from 0 ms\) holds 51 samples' \
  '[{"step": "deconvolution", "operator_ms": 120, "window": [[0, 898, 1400]]}]'
bad_step "both reject and pass" '\$\.conditioning\[0\]: give one of reject_mps or pass_mps' \
  '[{"step": "fk_filter", "reject_mps": [0, 600], "pass_mps": [1500, 9000]}]'
bad_step "misspelt key" '\$\.conditioning\[0\]\.prewhitening: unknown key; did you mean "prewhitening_pct"' \
  '[{"step": "deconvolution", "operator_ms": 80, "prewhitening": 1, "window": [[0, 100, 900]]}]'
bad_step "bad ensemble" '\$\.conditioning\[0\]\.ensemble: expected "trace" or "record", got "shot"' \
  '[{"step": "deconvolution", "operator_ms": 80, "window": [[0, 100, 900]], "ensemble": "shot"}]'
bad_step "min_hz above Nyquist" '\$\.conditioning\[0\] \(fk_filter\): min_hz 300 is at or above the Nyquist' \
  '[{"step": "fk_filter", "pass_mps": [1500, 9000], "min_hz": 300}]'

# --- the example of docs/conditioning.md runs as written (docs that cannot rot)
DOC=$("$PYTHON" -c 'import re, sys; t = open(sys.argv[1]).read(); print("[" + re.search(r"ground-roll fan:\n\n```\n(.*?)```", t, re.S).group(1) + "]")' "$TOP/docs/conditioning.md")
with_steps "$D/doc.json" "$DOC"
expect_status 0 "the docs/conditioning.md deconvolution + f-k example runs" -- \
  "$TZERO" stack --job "$D/doc.json" --out "$D/out/doc.sgy" --quiet
