# test_reuse.sh -- `tzero stack --reuse`: a rerun copies the CMPs whose reuse key is
# unchanged and restacks only the others, and writes the section a full run writes.
# The survey is written with segyio by tests/xcheck/test_stack_segyio.py (independent of
# tzero); the sections are compared byte for byte (cmp) and, sample by sample, by segyio
# and NumPy. Sources: DEVELOPERS.md (bitwise identity; outputs only when complete;
# sysexits(3) statuses, 65 bad data); the velocity table rules of docs/formats.md (linear
# in CMP between control CMPs, held outside them), which say which CMPs a revised control
# point moves; docs/performance.md for the reuse rules.
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
# A 40-point table: 10 control CMPs x 4 knots over the line's CMPs 216-355; v2 moves two
# control points (knots 2 and 3 of control CMP 246).
"$PYTHON" - "$D" <<'PY'
import sys
d = sys.argv[1]
ctl = [216 + 15 * i for i in range(10)]
rows = []
for i, c in enumerate(ctl):
    for t, v in [(0, 1800), (300, 1800 + 4 * i), (550, 2100 + 6 * i), (800, 2400 + 5 * i)]:
        rows.append([c, t, v])
def write(name, rs):
    with open(f"{d}/{name}", "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n")
        fp.writelines(f"{c},{t},{v}\n" for c, t, v in rs)
write("v1.csv", rows)
r2 = [list(r) for r in rows]
r2[9][2] += 60     # control CMP 246, 300 ms
r2[10][2] += 80    # control CMP 246, 550 ms
write("v2.csv", r2)
assert len(rows) == 40
PY
run() { # name velocity [extra options...]
  n=$1; v=$2; shift 2
  "$TZERO" stack --job "$J" --velocity "$D/$v" --out "$D/out/$n.sgy" --report "$D/out/$n.json" \
    --quiet "$@"
}
run v1 v1.csv --threads 1
run full2 v2.csv --threads 1
cp "$D/out/v1.sgy" "$D/out/r.sgy"
cp "$D/out/v1.json" "$D/out/r.json"
expect_status 0 "rerun with a revised table reusing the first section" -- \
  "$TZERO" stack --job "$J" --velocity "$D/v2.csv" --out "$D/out/r.sgy" --report "$D/out/r.json" \
  --reuse "$D/out/r.sgy" --threads 2 --quiet
if cmp -s "$D/out/r.sgy" "$D/out/full2.sgy"; then ok "reused rerun is byte-identical to a full run (cmp)"
else notok "reused rerun differs from a full run"; fi
# which CMPs were restacked: CMPs 232-260 lie between the revised control CMP's neighbours
# 231 and 261 (linear in CMP between control CMPs), the others keep their functions
"$PYTHON" - "$D/out/r.json" "$D/out/full2.json" "$D/out/r.sgy" "$D/out/full2.sgy" <<'PY' && ok "report: 29 CMPs restacked, the rest carried; per-CMP values and samples equal a full run's (segyio, NumPy)" || notok "reuse report or samples wrong"
import json, sys
import numpy as np
import segyio
r, f = (json.load(open(p)) for p in sys.argv[1:3])
ru = r["reuse"]
assert ru["cmps_restacked"] == 29, ru
assert ru["cmps_carried"] == len(r["cmps"]) - 29, ru
changed = [c["cmp"] for c, o in zip(r["cmps"], json.load(open(sys.argv[1].replace("r.json", "v1.json")))["cmps"])
           if c["reuse_key_sha256"] != o["reuse_key_sha256"]]
assert changed == list(range(232, 261)), changed
assert r["cmps"] == f["cmps"], "per-CMP objects differ"
assert all(len(c["reuse_key_sha256"]) == 64 for c in r["cmps"])
assert r["traces"]["read"] < f["traces"]["read"], (r["traces"]["read"], f["traces"]["read"])
with segyio.open(sys.argv[3], ignore_geometry=True) as a, \
     segyio.open(sys.argv[4], ignore_geometry=True) as b:
    assert a.tracecount == b.tracecount
    for i in range(a.tracecount):
        assert np.array_equal(a.trace[i], b.trace[i]), i
        assert a.header[i][segyio.TraceField.CDP] == b.header[i][segyio.TraceField.CDP]
PY

# nothing changed: every CMP carried, the same bytes again
cp "$D/out/full2.sgy" "$D/out/same.sgy"
cp "$D/out/full2.json" "$D/out/same.json"
run same v2.csv --reuse "$D/out/same.sgy"
grep -q '"cmps_restacked":[[:space:]]*0' "$D/out/same.json" && cmp -s "$D/out/same.sgy" "$D/out/full2.sgy" &&
  ok "unchanged rerun carries every CMP and writes the same bytes" || notok "unchanged rerun"

# any other change restacks every CMP (here the stretch limit): still a full run's bytes
run st60 v2.csv --stretch-limit 60 --threads 1
cp "$D/out/v1.sgy" "$D/out/s.sgy"
cp "$D/out/v1.json" "$D/out/s.json"
run s v2.csv --stretch-limit 60 --reuse "$D/out/s.sgy"
grep -q '"cmps_carried":[[:space:]]*0' "$D/out/s.json" && cmp -s "$D/out/s.sgy" "$D/out/st60.sgy" &&
  ok "a changed stretch limit restacks every CMP" || notok "changed parameter was carried"

# with a record-wide step (automatic kills judged on the record): the records of the
# restacked CMPs are read whole, and the result is again a full run's
"$PYTHON" - "$J" "$D/auto.json" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["edits"] = {"auto": {"dead": True, "rms_ratio_max": 3}}
json.dump(job, open(sys.argv[2], "w"))
PY
"$TZERO" stack --job "$D/auto.json" --velocity "$D/v1.csv" --out "$D/out/a1.sgy" --report "$D/out/a1.json" --quiet
"$TZERO" stack --job "$D/auto.json" --velocity "$D/v2.csv" --out "$D/out/a2.sgy" --report "$D/out/a2.json" --quiet
expect_status 0 "rerun with automatic kills" -- "$TZERO" stack --job "$D/auto.json" \
  --velocity "$D/v2.csv" --out "$D/out/a1.sgy" --report "$D/out/a1.json" --reuse "$D/out/a1.sgy" --quiet
cmp -s "$D/out/a1.sgy" "$D/out/a2.sgy" && ok "automatic kills: reused rerun equals a full run" ||
  notok "automatic kills: reused rerun differs"

# a missing reused section: a full run, with a note naming it
expect_status 0 "missing reused section: full run" -- "$TZERO" stack --job "$J" --velocity "$D/v2.csv" \
  --out "$D/out/m.sgy" --report "$D/out/m.json" --reuse "$D/out/nosuch.sgy"
expect_stderr "note: reused section .*nosuch.sgy not found" "missing reused section named in a note"
cmp -s "$D/out/m.sgy" "$D/out/full2.sgy" && ok "missing reused section: the full run's bytes" ||
  notok "missing reused section: output differs"

# a section of another line (other sample count) beside a report of this one: exit 65,
# the file named, no output
"$PYTHON" - "$D/out/full2.sgy" "$D/out/other.sgy" <<'PY'
import sys
import numpy as np
import segyio
with segyio.open(sys.argv[1], ignore_geometry=True) as src:
    spec = segyio.tools.metadata(src)
    spec.samples = list(range(200))
    with segyio.create(sys.argv[2], spec) as dst:
        dst.bin = src.bin
        dst.bin[segyio.BinField.Samples] = 200
        for i in range(src.tracecount):
            dst.header[i] = src.header[i]
            dst.header[i][segyio.TraceField.TRACE_SAMPLE_COUNT] = 200
            dst.trace[i] = np.zeros(200, dtype=np.float32)
PY
rm -f "$D/out/x.sgy"
expect_status 65 "reused section of another sample axis" -- "$TZERO" stack --job "$J" \
  --velocity "$D/v2.csv" --out "$D/out/x.sgy" --report "$D/out/x.json" --reuse "$D/out/other.sgy" \
  --reuse-report "$D/out/full2.json"
expect_stderr "other.sgy.*(not a section of this line)" "mismatch message names the reused section"
expect_no_file "$D/out/x.sgy" "no section after a refused reuse"
