# test_poststack.sh -- post-stack conditioning: the job's "poststack" array through
# `tzero stack` (before and after migration) and `tzero condition` on a section, and
# bad steps (exit 65, the JSON path, no output). The survey is written with segyio by
# tests/xcheck/test_stack_segyio.py (independent of tzero); the numbers are checked
# against NumPy and SciPy in tests/xcheck/test_poststack.py.
# Sources: issue 23 item 6 (keys, after_migration, the refusals it lists);
# docs/poststack.md for the steps; Nyquist = 1/(2 dt) (common practice); sysexits(3)
# statuses (65 bad data); DEVELOPERS.md (no half-written output, bitwise identity for any
# thread count).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
# the survey's table has its control at CMP 1; migration wants one on the section
sed 's/^1,/286,/' "$D/velocity.csv" >"$D/mig_velocity.csv"
job_with() { # out.json poststack-json [migrated]
  "$PYTHON" - "$J" "$1" "$2" "${3:-}" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["poststack"] = json.loads(sys.argv[3])
if sys.argv[4]:
    job["output"]["migrated"] = sys.argv[4]
    job["migration"] = {"method": "phase-shift", "velocity": "mig_velocity.csv"}
json.dump(job, open(sys.argv[2], "w"))
PY
}
CHAIN='[{"step": "bandpass", "windows": [{"from_ms": 0, "to_ms": 500, "corners_hz": [5, 10, 60, 80]},
                                        {"from_ms": 400, "to_ms": 1000, "corners_hz": [4, 8, 40, 60]}]},
        {"step": "fx_prediction", "window_traces": 12, "window_ms": 120, "operator_traces": 3},
        {"step": "balance", "from_ms": 100, "to_ms": 900, "target_rms": 1},
        {"step": "agc", "window_ms": 300, "after_migration": true}]'

# --- the job flow: steps before migration on the stack, the flagged one after
job_with "$D/ps.json" "$CHAIN" out/ps_mig.sgy
for n in 1 2; do
  expect_status 0 "stack with a poststack chain and migration, --threads $n" -- \
    "$TZERO" stack --job "$D/ps.json" --threads $n --out "$D/out/ps$n.sgy" --report "$D/out/ps$n.json" --quiet
done
cmp -s "$D/out/ps1.sgy" "$D/out/ps2.sgy" && ok "conditioned stack: 2 threads bitwise identical to 1" ||
  notok "conditioned stack differs between 1 and 2 threads"
"$TZERO" stack --job "$J" --out "$D/out/plain.sgy" --report "$D/out/plain.json" --quiet
"$PYTHON" - "$D/out/plain.sgy" "$D/out/ps1.sgy" "$D/out/ps_mig.sgy" >"$T/py" 2>&1 <<'PY'
import sys
import numpy as np
import segyio
F = segyio.TraceField
def load(p):
    with segyio.open(p, ignore_geometry=True) as f:
        d = np.array([f.trace[i] for i in range(f.tracecount)], dtype=float)
        h = [(f.header[i][F.CDP], f.header[i][F.NStackedTraces], f.header[i][F.CDP_X],
              f.header[i][F.EnergySourcePoint] if hasattr(F, "EnergySourcePoint") else 0)
             for i in range(f.tracecount)]
        t = f.text[0]
        t = bytes(t).decode("ascii", "replace")  # segyio gives the text decoded from EBCDIC
    return d, h, t
p, hp, _ = load(sys.argv[1])
c, hc, tc = load(sys.argv[2])
m, hm, tm = load(sys.argv[3])
print("headers", "same" if hp == hc else "differ")
print("changed", "yes" if not np.allclose(p, c) else "no")
i0, i1 = 50, 451   # 100-900 ms at 2 ms
live = [i for i in range(len(hc)) if hc[i][1] > 0]
r = np.sqrt(np.mean(c[live, i0:i1] ** 2, axis=1))
print("balanced", "yes" if np.allclose(r, 1, rtol=1e-4) else "no %s" % r[:4])
seq = [l[4:].rstrip() for l in (tc[i:i + 80] for i in range(0, 3200, 80))]
print("text", "yes" if " 5 post-stack bandpass 0-500 ms 5/10/60/80 Hz, 400-1000 ms 4/8/40/60 Hz" in seq
      and " 6 post-stack fx_prediction 12 tr x 120 ms, op 3, pw 1 %, 0 Hz-Nyquist" in seq
      and "post-stack agc" not in tc else "no %s" % seq[12:20])
mseq = [l[4:].rstrip() for l in (tm[i:i + 80] for i in range(0, 3200, 80))]
i = [k for k, l in enumerate(mseq) if "time migration" in l]
print("migtext", "yes" if i and mseq[i[0] + 1] == " 9 post-stack agc 300 ms rms" else "no %s" % mseq[12:22])
# AGC after migration: every live trace's RMS over a centred 300 ms window is near 1
q = m[live][:, 100:400]
print("agc", "yes" if 0.5 < np.sqrt(np.mean(q ** 2)) < 1.5 else "no %g" % np.sqrt(np.mean(q ** 2)))
PY
grep -q "headers same" "$T/py" && ok "poststack keeps every header of the section (segyio)" || { notok "headers changed"; cat "$T/py"; }
grep -q "changed yes" "$T/py" && ok "poststack changes the samples of the stack" || notok "poststack did nothing"
grep -q "balanced yes" "$T/py" && ok "balance: RMS 100-900 ms is target_rms on every live CMP" || { notok "balance"; cat "$T/py"; }
grep -q "text yes" "$T/py" && ok "stack textual header's processing sequence lists the steps before migration, after the stack" || { notok "stack textual header"; cat "$T/py"; }
grep -q "migtext yes" "$T/py" && ok "migrated section's processing sequence lists the after-migration step after the migration" || { notok "migrated textual header"; cat "$T/py"; }
grep -q "agc yes" "$T/py" && ok "after_migration AGC levels the migrated section" || { notok "migrated AGC"; cat "$T/py"; }
"$PYTHON" -c '
import json, sys
c = json.load(open(sys.argv[1]))["parameters"]["poststack"]
assert [s["step"] for s in c] == ["bandpass", "fx_prediction", "balance", "agc"], c
assert c[1]["operator_traces"] == 3 and c[1]["prewhitening_pct"] == 1 and c[3]["after_migration"]
' "$D/out/ps1.json" && ok "QC report parameters record the poststack chain with its defaults" ||
  notok "QC report lacks the chain"

# --- tzero condition on the plain stack: same chain, same bits as the job's before-stage
"$PYTHON" - "$CHAIN" "$D/steps_before.json" <<'PY'
import json, sys
c = [s for s in json.loads(sys.argv[1]) if not s.get("after_migration")]
json.dump({"poststack": c}, open(sys.argv[2], "w"))
PY
expect_status 0 "tzero condition on a stacked section" -- "$TZERO" condition "$D/out/plain.sgy" \
  --steps "$D/steps_before.json" --out "$D/out/cond.sgy"
expect_stdout "conditioned 140 traces" "condition prints its summary"
"$PYTHON" - "$D/out/cond.sgy" "$D/out/ps1.sgy" <<'PY' >"$T/py"
import sys
import numpy as np
import segyio
a = segyio.tools.collect(segyio.open(sys.argv[1], ignore_geometry=True).trace[:])
b = segyio.tools.collect(segyio.open(sys.argv[2], ignore_geometry=True).trace[:])
print("same" if np.array_equal(a, b) else "differ %g" % np.max(np.abs(a - b)))
PY
grep -q same "$T/py" && ok "tzero condition gives the job flow's samples bit for bit" || { notok "condition differs from the job flow"; cat "$T/py"; }
# a tzero section's processing sequence goes on, a long band-pass over two cards
printf '%s' '[{"step": "bandpass", "windows": [{"from_ms": 0, "to_ms": 300, "corners_hz": [5, 10, 60, 80]},
  {"from_ms": 250, "to_ms": 600, "corners_hz": [5, 10, 50, 70]},
  {"from_ms": 600, "to_ms": 1000, "corners_hz": [4, 8, 40, 60]}]}]' >"$D/three.json"
"$TZERO" condition "$D/out/plain.sgy" --steps "$D/three.json" --out "$D/out/three.sgy" --quiet
"$PYTHON" - "$D/out/three.sgy" <<'PY' >"$T/py"
import sys
import segyio
with segyio.open(sys.argv[1], ignore_geometry=True) as f:
    t = f.text[0]
    t = bytes(t).decode("ascii", "replace")  # segyio gives the text decoded from EBCDIC
c = [t[i + 4:i + 80].rstrip() for i in range(0, 3200, 80)]
ok = (c[0].startswith("tzero ") and "conditioned section" in c[0] and
      " 5 post-stack bandpass 0-300 ms 5/10/60/80 Hz, 250-600 ms 5/10/50/70 Hz" in c and
      " 6 post-stack bandpass, continued: 600-1000 ms 4/8/40/60 Hz" in c)
print("yes" if ok else "no %s" % c[:20])
PY
grep -q yes "$T/py" && ok "tzero condition carries a tzero section's processing sequence on, one card per two windows" ||
  { notok "condition's textual header"; cat "$T/py"; }
expect_status 0 "condition --json" -- "$TZERO" condition "$D/out/plain.sgy" --steps "$D/steps_before.json" \
  --out "$D/out/cond2.sgy" --json
expect_stdout '"format":[[:space:]]*"tzero-condition/1"' "condition --json prints its summary object"

# --- bad steps: exit 65, the JSON path, no output (tzero condition and the job)
bad_cond() { # name pattern steps-json
  printf '%s' "$3" >"$D/bad_steps.json"
  rm -f "$D/out/bad.sgy"
  expect_status 65 "condition: $1" -- "$TZERO" condition "$D/out/plain.sgy" --steps "$D/bad_steps.json" --out "$D/out/bad.sgy"
  expect_stderr "$2" "condition: $1: message"
  expect_no_file "$D/out/bad.sgy" "condition: $1: no output"
}
W0='{"from_ms": 0, "to_ms": 500, "corners_hz": [5, 10, 60, 80]}'
bad_cond "unknown step (did you mean)" '\$\[1\]\.step: unknown step "fx_predict"; did you mean "fx_prediction"' \
  "[{\"step\": \"agc\", \"window_ms\": 200}, {\"step\": \"fx_predict\"}]"
bad_cond "windows overlap wrongly" '\$\[0\]\.windows\[2\]\.from_ms: 450 ms overlaps windows\[0\]' \
  "[{\"step\": \"bandpass\", \"windows\": [$W0, {\"from_ms\": 400, \"to_ms\": 800, \"corners_hz\": [5, 10, 50, 70]}, {\"from_ms\": 450, \"to_ms\": 1000, \"corners_hz\": [5, 10, 40, 60]}]}]"
bad_cond "window inside another" '\$\[0\]\.windows\[1\]: 100-400 ms does not follow windows\[0\]' \
  "[{\"step\": \"bandpass\", \"windows\": [$W0, {\"from_ms\": 100, \"to_ms\": 400, \"corners_hz\": [5, 10, 50, 70]}]}]"
bad_cond "windows leave a gap" '\$\[0\]\.windows\[1\]\.from_ms: 600 ms leaves a gap after windows\[0\]' \
  "[{\"step\": \"bandpass\", \"windows\": [$W0, {\"from_ms\": 600, \"to_ms\": 900, \"corners_hz\": [5, 10, 50, 70]}]}]"
bad_cond "corners not increasing" '\$\.poststack\[1\]\.windows\[2\]\.corners_hz: band-pass corner f3 = 8 Hz is below f2 = 10 Hz' \
  "{\"poststack\": [{\"step\": \"agc\", \"window_ms\": 200}, {\"step\": \"bandpass\", \"windows\": [$W0, {\"from_ms\": 400, \"to_ms\": 800, \"corners_hz\": [5, 10, 50, 70]}, {\"from_ms\": 800, \"to_ms\": 1000, \"corners_hz\": [5, 10, 8, 70]}]}]}"
bad_cond "corner above Nyquist (2 ms: 250 Hz)" '\$\[0\]\.windows\[0\]\.corners_hz: corner f4 = 260 Hz is at or above the Nyquist frequency 250 Hz' \
  '[{"step": "bandpass", "windows": [{"from_ms": 0, "to_ms": 1000, "corners_hz": [5, 10, 200, 260]}]}]'
bad_cond "operator longer than the window" '\$\[0\]\.operator_traces: 12 traces is longer than the window allows' \
  '[{"step": "fx_prediction", "window_traces": 10, "operator_traces": 12}]'
bad_cond "misspelt key" '\$\[0\]\.window_trace: unknown key; did you mean "window_traces"' \
  '[{"step": "fx_prediction", "window_trace": 10}]'
bad_cond "balance window outside the section" '\$\[0\]\.from_ms: the window 2000-3000 ms holds no sample' \
  '[{"step": "balance", "from_ms": 2000, "to_ms": 3000}]'
bad_cond "not JSON" 'not valid JSON|steps file' '[{"step": '
rm -f "$D/out/nosteps.sgy"
expect_status 66 "condition: missing steps file" -- "$TZERO" condition "$D/out/plain.sgy" --steps "$D/none.json" --out "$D/out/nosteps.sgy"
expect_status 64 "condition: no --steps" -- "$TZERO" condition "$D/out/plain.sgy" --out "$D/out/nosteps.sgy"

bad_job() { # name pattern poststack-json [migrated]
  job_with "$D/bad.json" "$2" "${4:-}"
  rm -f "$D/out/badjob.sgy"
  expect_status 65 "job: $1" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/badjob.sgy" --quiet
  expect_stderr "$3" "job: $1: message"
  expect_no_file "$D/out/badjob.sgy" "job: $1: no section"
}
bad_job "unknown step" '[{"step": "balanse", "from_ms": 0, "to_ms": 100}]' \
  '\$\.poststack\[0\]\.step: unknown step "balanse"; did you mean "balance"'
bad_job "after_migration without a migrated section" '[{"step": "agc", "window_ms": 300, "after_migration": true}]' \
  '\$\.poststack\[0\]\.after_migration: the job writes no migrated section'
bad_job "corner above Nyquist (before the data pass)" \
  '[{"step": "bandpass", "windows": [{"from_ms": 0, "to_ms": 900, "corners_hz": [5, 10, 60, 80]}, {"from_ms": 800, "to_ms": 1000, "corners_hz": [5, 10, 240, 300]}]}]' \
  '\$\.poststack\[0\]\.windows\[1\]\.corners_hz: corner f4 = 300 Hz is at or above the Nyquist'
bad_job "f-x window of 2 samples" '[{"step": "fx_prediction", "window_ms": 4}]' \
  '\$\.poststack\[0\]\.window_ms: 4 ms gives fewer than 4 samples'

# --- the example of docs/poststack.md runs as written, in a steps file (docs that cannot rot)
"$PYTHON" - "$TOP/docs/poststack.md" "$D/doc_steps.json" <<'PY'
import json, re, sys
block = re.search(r"```json\n(.*?)```", open(sys.argv[1]).read(), re.S).group(1)
json.dump(json.loads("{" + block + "}"), open(sys.argv[2], "w"))
PY
expect_status 0 "the example of docs/poststack.md runs with tzero condition" -- "$TZERO" condition \
  "$D/out/plain.sgy" --steps "$D/doc_steps.json" --out "$D/out/doc.sgy" --quiet
