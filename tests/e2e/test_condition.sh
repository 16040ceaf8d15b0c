# test_condition.sh -- the job file's "conditioning" key through `tzero stack`:
# thread identity, effect on the section, and bad steps (message naming the JSON
# path, exit status, no output). The survey is written with segyio by
# tests/xcheck/test_stack_segyio.py (independent of tzero).
# Sources: DEVELOPERS.md (bitwise identity for any thread count; job errors name the key;
# no half-written output); docs/conditioning.md for the step keys; Nyquist = 1/(2 dt)
# (common practice); sysexits(3) statuses (65 bad job).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
STEPS='[{"step": "spherical_divergence", "reference_time_ms": 500},
        {"step": "bandpass", "corners_hz": [5, 10, 60, 90]},
        {"step": "agc", "window_ms": 250, "measure": "mean_abs"}]'
"$PYTHON" - "$J" "$D/cond.json" "$STEPS" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["conditioning"] = json.loads(sys.argv[3])
json.dump(job, open(sys.argv[2], "w"))
PY

# --- bitwise identity across thread counts (DEVELOPERS.md, threads: bitwise-identical output for any thread count)
for n in 1 3; do
  expect_status 0 "conditioned stack with --threads $n" -- "$TZERO" stack --job "$D/cond.json" \
    --threads $n --out "$D/out/c$n.sgy" --report "$D/out/c$n.json" --quiet
done
if cmp -s "$D/out/c1.sgy" "$D/out/c3.sgy"; then ok "conditioned section: 3 threads bitwise identical to 1"
else notok "conditioned section: 3 threads differ from 1"; fi
"$TZERO" stack --job "$J" --threads 1 --out "$D/out/plain.sgy" --quiet
if cmp -s "$D/out/c1.sgy" "$D/out/plain.sgy"; then notok "conditioning changes the section"
else ok "conditioning changes the section"; fi
grep -q '"step":[[:space:]]*"agc"' "$D/out/c1.json" && grep -q '"measure":[[:space:]]*"mean_abs"' "$D/out/c1.json" &&
  ok "QC report parameters record the chain" || notok "QC report lacks the chain"

# --- bad steps: exit 65, the JSON path, no section
bad_step() { # name pattern steps-json
  "$PYTHON" - "$J" "$D/bad.json" "$3" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["conditioning"] = json.loads(sys.argv[3])
json.dump(job, open(sys.argv[2], "w"))
PY
  rm -f "$D/out/bad.sgy"
  expect_status 65 "$1" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/bad.sgy" --quiet
  expect_stderr "$2" "$1: message"
  expect_no_file "$D/out/bad.sgy" "$1: no output section"
}
bad_step "not an array" '\$\.conditioning: expected an array of steps, got an object' \
  '{"step": "agc", "window_ms": 500}'
bad_step "unknown step" '\$\.conditioning\[0\]\.step: expected "bandpass" or "spherical_divergence" or "power_gain" or "agc" or "deconvolution" or "fk_filter", got "bandpas"' \
  '[{"step": "bandpas", "corners_hz": [5, 10, 40, 50]}]'
bad_step "misspelt key" '\$\.conditioning\[1\]\.windw_ms: unknown key; did you mean "window_ms"' \
  '[{"step": "bandpass", "corners_hz": [5, 10, 40, 50]}, {"step": "agc", "windw_ms": 500}]'
bad_step "corners out of order" '\$\.conditioning\[0\]\.corners_hz: band-pass corner f3 = 8 Hz is below f2 = 10 Hz' \
  '[{"step": "bandpass", "corners_hz": [5, 10, 8, 50]}]'
bad_step "three corners" '\$\.conditioning\[0\]\.corners_hz: expected an array of four frequencies' \
  '[{"step": "bandpass", "corners_hz": [5, 10, 40]}]'
bad_step "corner not a number" '\$\.conditioning\[0\]\.corners_hz\[2\]: expected a number' \
  '[{"step": "bandpass", "corners_hz": [5, 10, "40", 50]}]'
bad_step "missing window" '\$\.conditioning\[0\]\.window_ms: required key missing' \
  '[{"step": "agc"}]'
bad_step "bad measure" '\$\.conditioning\[0\]\.measure: expected "rms" or "mean_abs", got "peak"' \
  '[{"step": "agc", "window_ms": 300, "measure": "peak"}]'
bad_step "power without exponent" '\$\.conditioning\[0\]\.exponent: required key missing' \
  '[{"step": "power_gain"}]'
bad_step "negative reference time" '\$\.conditioning\[0\]\.reference_time_ms: expected a number between' \
  '[{"step": "spherical_divergence", "reference_time_ms": -5}]'
bad_step "corner at Nyquist (2 ms: 250 Hz)" '\$\.conditioning\[0\] \(bandpass\): corner f4 = 250 Hz is at or above the Nyquist frequency 250 Hz' \
  '[{"step": "bandpass", "corners_hz": [5, 10, 200, 250]}]'
bad_step "AGC window below three samples" '\$\.conditioning\[1\] \(agc\): window 1 ms gives fewer than three samples' \
  '[{"step": "power_gain", "exponent": 2}, {"step": "agc", "window_ms": 1}]'

# --- the example of docs/conditioning.md runs as written (docs that cannot rot)
"$PYTHON" - "$J" "$D/doc.json" "$TOP/docs/conditioning.md" <<'PY'
import json, re, sys
job = json.load(open(sys.argv[1]))
text = open(sys.argv[3]).read()
block = re.search(r"```json\n(.*?)```", text, re.S).group(1)
job.update(json.loads("{" + block + "}"))
json.dump(job, open(sys.argv[2], "w"))
PY
expect_status 0 "the docs/conditioning.md example runs" -- "$TZERO" stack --job "$D/doc.json" \
  --out "$D/out/doc.sgy" --report "$D/out/doc.json" --quiet
grep -q '"step":[[:space:]]*"spherical_divergence"' "$D/out/doc.json" &&
  ok "the docs example's chain is in the report" || notok "the docs example's chain is missing"

# --- tzero semblance scans conditioned gathers, as the stack sums them
# (docs/conditioning.md "Where it applies"): the panels differ with and without a
# band-pass; a table-based spherical step uses the job's table when it exists, and
# without one the scan stops with 65 naming $.conditioning and writes nothing.
MID=$("$PYTHON" -c 'import json,sys; c=json.load(open(sys.argv[1]))["cmps"]; print(c[len(c)//2]["cmp"])' "$D/out/c1.json")
"$PYTHON" - "$J" "$D/bp.json" "$D/sph_missing.json" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
bp = dict(job, conditioning=[{"step": "bandpass", "corners_hz": [5, 10, 30, 40]}])
json.dump(bp, open(sys.argv[2], "w"))
miss = dict(job, velocity="not-written-yet.csv",
            conditioning=[{"step": "spherical_divergence", "reference_time_ms": 500}])
json.dump(miss, open(sys.argv[3], "w"))
PY
expect_status 0 "semblance on the unconditioned job" -- "$TZERO" semblance --job "$J" --cmps "$MID" \
  --panels "$D/out/p_plain.sgy" --quiet
expect_status 0 "semblance on a band-passed job" -- "$TZERO" semblance --job "$D/bp.json" \
  --cmps "$MID" --panels "$D/out/p_bp.sgy" --quiet
if cmp -s "$D/out/p_plain.sgy" "$D/out/p_bp.sgy"; then notok "semblance ignores the job's conditioning"
else ok "semblance panels reflect the job's conditioning"; fi
expect_status 0 "semblance with a table-based spherical gain and the job's table present" -- \
  "$TZERO" semblance --job "$D/cond.json" --cmps "$MID" --quiet
expect_status 65 "semblance with a table-based spherical gain and no table yet" -- \
  "$TZERO" semblance --job "$D/sph_missing.json" --cmps "$MID" --out "$D/out/never.csv" --quiet
expect_stderr '\$\.conditioning.*velocity_mps' "the message names \$.conditioning and the way out"
expect_no_file "$D/out/never.csv" "no velocity table written after the failure"
