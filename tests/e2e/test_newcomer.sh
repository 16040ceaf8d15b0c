# test_newcomer.sh -- what a newcomer meets on the demo's groundwater line (issue
# items): the stack summary explains a top mute hidden by the stretch mute.
# The line is synthesised as demo/run.sh does (consistency checks of what the
# user reads; numbers are checked elsewhere).
. "$TOP/tests/e2e/lib.sh"
R="$T/repo"
mkdir -p "$R/demo/out"
cp -r "$TOP/demo/tarrowvane" "$R/demo/"
"$TZERO" synth --model "$R/demo/tarrowvane/model_groundwater.json" \
  --layout "$R/demo/tarrowvane/layout_gw01.json" --out "$R/demo/out/gw01" \
  --record-ms 200 --interval-ms 0.25 --peak-hz 110 --noise 0.05 --seed 11 \
  --line-name TV-GW-01 --quiet >/dev/null 2>&1 || notok "demo line synthesised"
J=demo/tarrowvane/gw01.job.json
run() { (cd "$R" && "$TZERO" "$@") >"$T/out" 2>"$T/err"; }

# a sample that both mutes remove counts as stretch-muted (docs/qc-report.md),
# so the job's top mute of 0-80 ms shows 0 %: the summary says why
run stack --job "$J"
if grep -q "top 0.00 %" "$T/out" && grep -q "top mute only 0.00 %: on most traces the stretch mute" "$T/out"; then
  ok "stack summary: a top mute hidden by the stretch mute is explained"
else notok "stack summary: no note on the hidden top mute"; sed 's/^/#   /' "$T/out" | grep -A3 '^#   mute'; fi
# without a top mute there is nothing to explain
"$PYTHON" -c 'import json, sys; j = json.load(open(sys.argv[1])); del j["mute"]; json.dump(j, open(sys.argv[2], "w"))' \
  "$R/$J" "$R/demo/tarrowvane/nomute.job.json"
run stack --job demo/tarrowvane/nomute.job.json --out demo/out/nomute.sgy --report demo/out/nomute_qc.json
if grep -q "top mute only" "$T/out"; then notok "note printed without a top mute"
else ok "no note without a top mute"; fi

# velocity tables: a control CMP off the line (a typo 200 -> 2000) is a warning
awk -F, 'NR == 1 || /^#/ {print; next} {print} END {print "2000,0,500"; print "2000,100,900"}' \
  "$R/demo/out/gw01/rms_velocity.csv" >"$R/demo/out/typo.csv"
run velocity check demo/out/typo.csv --job "$J" --quiet
if [ "$(grep -c 'outside the line' "$T/out")" -eq 1 ] && grep -q "control cmp 2000 lies outside the line's CMPs" "$T/out"; then
  ok "velocity check --job: a control CMP off the line is a warning"; else
  notok "velocity check --job: no warning for CMP 2000"; sed 's/^/#   /' "$T/out" "$T/err" | head -5; fi
run velocity check demo/out/typo.csv --quiet
if grep -q "outside the line" "$T/out"; then notok "without --job the line is unknown"; else
  ok "velocity check without --job: no line, no range warning"; fi
run stack --job "$J" --velocity demo/out/typo.csv --out demo/out/typo.sgy --report demo/out/typo_qc.json
"$PYTHON" - "$R/demo/out/typo_qc.json" <<'PY' && ok "stack: the QC report warns of the control CMP off the line" || notok "stack: no outside_line warning"
import json, sys
w = [x for x in json.load(open(sys.argv[1]))["velocity"]["warnings"] if x["kind"] == "outside_line"]
sys.exit(0 if len(w) == 1 and w[0]["cmp"] == 2000 else 1)
PY
grep -q "control cmp 2000 lies outside" "$T/out" && ok "stack summary lists it" || notok "stack summary lacks it"

# semblance --smooth-cmps N: each knot becomes the mean of the analysis CMPs'
# functions within N CMPs at its time; checked against numpy.interp (linear in
# time, held constant outside the knots, as docs/velocity-table.md defines)
run semblance --job "$J" --cmps 60-220:40 --velocity-min 400 --velocity-max 2500 --out demo/out/raw.csv --quiet
run semblance --job "$J" --cmps 60-220:40 --velocity-min 400 --velocity-max 2500 --smooth-cmps 40 --out demo/out/smooth.csv --quiet
"$PYTHON" - "$R/demo/out/raw.csv" "$R/demo/out/smooth.csv" <<'PY' && ok "--smooth-cmps 40: knots are the neighbours' mean (NumPy)" || notok "--smooth-cmps 40 differs from NumPy"
import sys
import numpy as np
def load(p):
    f = {}
    for line in open(p):
        if line.startswith("#") or line.startswith("cmp"):
            continue
        c, t, v = line.strip().split(",")[:3]
        f.setdefault(int(c), []).append((float(t), float(v)))
    return f
raw, sm = load(sys.argv[1]), load(sys.argv[2])
assert sorted(raw) == sorted(sm) and len(raw) >= 3, (sorted(raw), sorted(sm))
worst = 0
for c, knots in sm.items():
    assert [t for t, _ in knots] == [t for t, _ in raw[c]]
    for t, v in knots:
        near = [np.interp(t, *zip(*raw[d])) for d in raw if abs(d - c) <= 40]
        worst = max(worst, abs(v - np.mean(near)))
print(f"# largest difference {worst:.4f} m/s")

sys.exit(0 if worst < 0.01 else 1)
PY

# provenance: SHA-256 (FIPS 180-4) of the job, the velocity table, each statics
# table and each shot file's first 3600 bytes, against Python's hashlib
"$PYTHON" - "$R" "$R/demo/out/gw01_qc.json" <<'PY' && ok "QC report digests match hashlib" || notok "QC report digests differ from hashlib"
import hashlib, json, os, sys
top, rep = sys.argv[1], json.load(open(sys.argv[2]))
pv = rep["provenance"]
def sha(path, n=None):
    with open(os.path.join(top, path), "rb") as f:
        return hashlib.sha256(f.read(n) if n else f.read()).hexdigest()
assert pv["digest"] == "SHA-256"
assert pv["job"]["sha256"] == sha(pv["job"]["path"]), pv["job"]
assert pv["velocity"]["sha256"] == sha(pv["velocity"]["path"]), pv["velocity"]
assert len(pv["shot_headers"]) == len(rep["inputs"]) > 0
for h in pv["shot_headers"]:
    assert h["header_bytes"] == 3600 and h["header_sha256"] == sha(h["path"], 3600), h
assert pv["statics_tables"] == []
print(f"# {len(pv['shot_headers'])} shot headers checked")
PY
# a table revised in place is told apart by its digest
run stack --job "$J" --velocity demo/out/smooth.csv --out demo/out/s2.sgy --report demo/out/s2_qc.json
"$PYTHON" -c 'import json,sys; a,b=(json.load(open(p))["provenance"]["velocity"]["sha256"] for p in sys.argv[1:]); sys.exit(a == b)' \
  "$R/demo/out/gw01_qc.json" "$R/demo/out/s2_qc.json" && ok "another velocity table, another digest" || notok "velocity digests equal"

# a picture of the velocity field: RMS and interval, CMP by time, a dot per
# control point (SVG data attributes read back); the table is written here
printf 'cmp,time_ms,velocity_mps\n100,0,1500\n100,400,1800\n100,900,2300\n200,0,1500\n200,300,1700\n200,800,2500\n300,0,1550\n300,500,2000\n' \
  >"$R/demo/out/field.csv"
run picture --velocity-field demo/out/field.csv --out demo/out/field.svg
if grep -q "wrote demo/out/field.svg: velocity field of 3 control CMPs, CMP 100-300" "$T/out"; then
  ok "picture --velocity-field draws the table"; else notok "picture --velocity-field"; sed 's/^/#   /' "$T/err"; fi
"$PYTHON" - "$R/demo/out/field.svg" "$R/demo/out/field.csv" <<'PY' && ok "velocity field: both panels carry every control point" || notok "velocity field: control points"
import re, sys
svg, rows = open(sys.argv[1]).read(), [l.strip().split(",") for l in open(sys.argv[2])][1:]
dots = re.findall(r'data-cmp="(\d+)" data-time-ms="([0-9.e+-]+)" data-rms-mps="([0-9.e+-]+)"', svg)
want = sorted((int(c), float(t), float(v)) for c, t, v in rows)
got = sorted((int(c), float(t), float(v)) for c, t, v in dots)
assert got == sorted(want * 2), (got, want)   # RMS panel and interval panel
for lab in ("CMP (RMS velocity)", "CMP (interval velocity)", "Velocity (m/s)", "Time (ms)"):
    assert lab in svg, lab
PY
run picture --velocity-field demo/out/field.csv --job "$J" --out demo/out/field_line.png
grep -q "CMP 1-285" "$T/out" && ok "--job: the line's CMPs" || notok "--job: $(cat "$T/out" "$T/err")"
run picture --velocity-field demo/out/field.csv demo/out/gw01_stack.sgy --out demo/out/x.png
[ -s "$T/err" ] && grep -q "no SEG-Y file" "$T/err" && ok "--velocity-field with a SEG-Y file is refused" || notok "refusal"
