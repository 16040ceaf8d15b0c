# test_mute.sh -- mutes along the line (docs/job-file.md "Mutes"): controls, files, the
# inner cone and the bottom mute in `tzero stack` and `tzero nmo`, the mute block of the QC
# report, and the errors that name the JSON path. The survey is written with segyio by
# tests/xcheck/test_stack_segyio.py. Exit statuses are BSD sysexits(3): 65 data, 66 no
# input. Sources: DEVELOPERS.md (bitwise identity for any thread count); the
# interpolation rule of the velocity table (docs/velocity-table.md) for controls; common practice
# for the rest.
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
with_mute() { # name mute-json -> $D/NAME.json (the survey's job with this "mute")
  "$PYTHON" -c 'import json, sys
j = json.load(open(sys.argv[1])); j["mute"] = json.loads(sys.argv[2])
json.dump(j, open(sys.argv[3], "w"), indent=1)' "$D/line.json" "$2" "$D/$1.json" ||
    notok "writing job $1"
}
with_mute ctl '{"top": {"controls": [{"cmp": 230, "polyline": [[150, 80], [400, 260]]},
  {"cmp": 340, "polyline": [[150, 120], [400, 300]]}]},
  "inner": {"controls": [{"cmp": 250, "polyline": [[150, 350, 420], [400, 900, 1000]]}]},
  "bottom": [[150, 900], [400, 700]], "taper_ms": 6}'
cat >"$D/top.csv" <<EOF
# the same top mute as a file
cmp,offset_m,time_ms
230,150,80
230,400,260
340,150,120
340,400,300
EOF
cat >"$D/inner.csv" <<EOF
cmp,offset_m,time_ms,time_end_ms
250,150,350,420
250,400,900,1000
EOF
with_mute file '{"top_file": "top.csv", "inner_file": "inner.csv", "bottom": [[150, 900], [400, 700]],
  "taper_ms": 6}'

for n in 1 3; do
  expect_status 0 "stack with controlled mutes, $n threads" -- "$TZERO" stack --job "$D/ctl.json" \
    --threads $n --out "$D/out/ctl$n.sgy" --report "$D/out/ctl$n.json" --quiet
done
cmp -s "$D/out/ctl1.sgy" "$D/out/ctl3.sgy" && ok "controlled mutes: 3 threads bitwise identical to 1" ||
  notok "controlled mutes: 3 threads differ from 1"
expect_status 0 "stack with mutes from CSV files" -- "$TZERO" stack --job "$D/file.json" \
  --out "$D/out/file.sgy" --report "$D/out/file.json" --quiet
cmp -s "$D/out/ctl1.sgy" "$D/out/file.sgy" && ok "the files give the same section as the controls" ||
  notok "mutes from files differ from the same controls in the job"
expect_status 0 "stack without mutes" -- "$TZERO" stack --job "$D/line.json" --out "$D/out/none.sgy" \
  --report "$D/out/none.json" --quiet

"$PYTHON" - "$D/out/ctl1.json" "$D/out/file.json" "$D/out/none.json" <<'EOF'
import json, sys
c, f, n = (json.load(open(p)) for p in sys.argv[1:4])
m = c["mute"]
def ok(cond, what):
    print(("ok - " if cond else "not ok - ") + what)
ok(m["kinds"]["top"]["given_as"] == "controls" and m["kinds"]["top"]["controls"] == 2
   and m["kinds"]["inner"]["given_as"] == "controls" and m["kinds"]["bottom"]["given_as"] == "polyline",
   "report: how each kind was given and its controls")
ok(f["mute"]["kinds"]["top"]["given_as"] == "file" and f["mute"]["kinds"]["inner"]["given_as"] == "file",
   "report: mutes from files are marked as files")
ok(m["top_muted_samples"] > n["mute"]["top_muted_samples"] and m["inner_muted_samples"] > 0
   and m["bottom_muted_samples"] > 0, "top, inner and bottom mutes all zero samples")
tot = m["stretch_muted_samples"] + m["top_muted_samples"] + m["inner_muted_samples"] + m["bottom_muted_samples"]
ok(abs(m["muted_fraction"] - tot / m["samples"]) < 2e-6, "muted_fraction counts all four mutes")
# The classes and the CMP ranges add up to the totals (the counts behind the fractions).
for k in ("top", "inner", "bottom"):
    s = sum(o[k + "_muted_samples"] for o in m["by_offset"])
    ok(s == m[k + "_muted_samples"], f"by_offset adds up to the {k} total")
    s = sum(o[k + "_muted_samples"] for o in c["cmps"])
    ok(s == m[k + "_muted_samples"], f"per-CMP counts add up to the {k} total")
r = m["by_cmp_range"]
ok(len(r) >= 2 and r[0]["cmp_first"] == c["cmps"][0]["cmp"] and r[-1]["cmp_last"] == c["cmps"][-1]["cmp"]
   and sum(o["traces"] for o in r) == c["traces"]["stacked"], "by_cmp_range covers the section")
# The top mute is later at the second control (CMP 340) than at the first (230): the
# top-muted fraction grows along the line (linear in CMP between controls).
fr = [o["top_muted_fraction"] for o in r if o["traces"] > 0]
ok(fr[-1] > fr[0], "top-muted fraction grows towards the later control (%.4f -> %.4f)" % (fr[0], fr[-1]))
ok(c["parameters"]["mute"]["top"]["controls"][1]["cmp"] == 340
   and c["parameters"]["mute"]["inner"]["controls"][0]["polyline"][1] == [400, 900, 1000],
   "the resolved job echoes the controls")
EOF
[ $? -eq 0 ] || notok "the report checks ran"

# --- the resolved job runs again and gives the same section (parameters block)
"$PYTHON" -c "
import json,sys
r=json.load(open('$D/out/ctl1.json'))['parameters']
j=json.load(open('$D/ctl.json'))
j['mute']=r['mute']
json.dump(j,open('$D/echo.json','w'))"
expect_status 0 "the echoed mutes are a valid job" -- "$TZERO" stack --job "$D/echo.json" \
  --out "$D/out/echo.sgy" --quiet
cmp -s "$D/out/ctl1.sgy" "$D/out/echo.sgy" && ok "the echoed mutes give the same section" ||
  notok "the echoed mutes give another section"

# --- tzero nmo applies the same mutes: the inner cone zeroes samples inside it
expect_status 0 "nmo gathers with controlled mutes" -- "$TZERO" nmo --job "$D/ctl.json" --cmps 300 \
  --out "$D/out/g.sgy" --quiet
"$PYTHON" - "$D/out/g.sgy" <<'EOF'
import sys
import numpy as np
import segyio
with segyio.open(sys.argv[1], ignore_geometry=True) as f:
    off = np.abs(f.attributes(segyio.TraceField.offset)[:])
    d = segyio.tools.collect(f.trace[:])
ok = len(d) > 0
# bottom mute at 300: linear 900 -> 700 ms over offsets 150 -> 400: nothing is live
# below it after NMO (NMO only moves samples earlier: t0 <= t)
for x, tr in zip(off, d):
    tb = 900 + (x - 150) / 250 * (700 - 900)
    i = int(np.ceil(tb / 2.0)) + 1
    ok = ok and np.all(tr[i:] == 0)
print(("ok - " if ok else "not ok - ") + "nmo gathers: zero below the bottom mute")
EOF
[ $? -eq 0 ] || notok "the gather checks ran"

# --- errors name the JSON path (exit 65) or the file and line
bad_mute() { # name pattern mute-json
  with_mute bad "$3"
  rm -f "$D/out/bad.sgy"
  expect_status 65 "$1" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/bad.sgy" --quiet
  expect_stderr "$2" "$1: message"
  expect_no_file "$D/out/bad.sgy" "$1: no output section"
}
bad_mute "controls out of CMP order" 'mute\.top\.controls\[1\]: CMP 100 is not after' \
  '{"top": {"controls": [{"cmp": 200, "polyline": [[0, 20], [480, 260]]}, {"cmp": 100, "polyline": [[0, 20]]}]}}'
bad_mute "offsets not increasing" 'mute\.top\.controls\[1\]\.polyline: point 1: offset 100 m is not after 480 m' \
  '{"top": {"controls": [{"cmp": 200, "polyline": [[0, 20], [480, 260]]}, {"cmp": 300, "polyline": [[480, 20], [100, 30]]}]}}'
bad_mute "inverted cone" 'mute\.inner\.controls\[0\]\.polyline: point 1: the cone is inverted' \
  '{"inner": {"controls": [{"cmp": 200, "polyline": [[0, 0, 50], [480, 900, 800]]}]}}'
bad_mute "a cone needs triples" 'mute\.inner\[1\]: expected a triple' '{"inner": [[0, 0, 50], [480, 900]]}'
printf 'cmp,offset_m,time_ms\n300,0,20\n300,400,200\n200,0,30\n' >"$D/backward.csv"
bad_mute "a file out of CMP order" 'backward\.csv: line 4: CMP 200: CMP 200 is not after' '{"top_file": "backward.csv"}'
with_mute bad '{"bottom_file": "nowhere.csv"}'
expect_status 66 "a missing mute file" -- "$TZERO" stack --job "$D/bad.json" --out "$D/out/bad.sgy" --quiet
expect_stderr 'mute\.bottom_file: cannot open' "a missing mute file: message"

# --- tzero picture --job J --show-mutes: the mute lines sit on the traces they cut
# (pixel rule of docs/pictures.md: sample j is centred on row y + (j + 0.5) h / ns - 0.5)
expect_status 0 "picture of a CMP gather with its mutes" -- "$TZERO" picture "$D/out/g.sgy" \
  --job "$D/ctl.json" --show-mutes --out "$D/out/g.svg" --json
cp "$T/out" "$D/out/g_info.json"
"$PYTHON" - "$D/out/g.sgy" "$D/out/g.svg" "$D/out/g_info.json" <<'EOF'
import json, re, sys
import numpy as np
import segyio
with segyio.open(sys.argv[1], ignore_geometry=True) as f:
    off = np.abs(f.attributes(segyio.TraceField.offset)[:]).astype(float)
    ns = len(f.samples)
svg = open(sys.argv[2]).read()
info = json.load(open(sys.argv[3]))["plot_area_px"]
def pts(cls):
    m = re.search(r'<g class="%s">\s*<polyline[^>]*points="([^"]+)"' % cls, svg)
    return np.array([[float(v) for v in p.split(",")] for p in m.group(1).split()]) if m else None
def y_of(t_ms):
    return info["y"] + (t_ms / 2.0 + 0.5) * info["height"] / ns - 0.5
# CMP 300 between the top controls at 230 and 340: linear in CMP at each offset
f = (300 - 230) / 110.0
top = [np.interp(x, [150, 400], [80, 260]) * (1 - f) + np.interp(x, [150, 400], [120, 300]) * f for x in off]
res = []
for cls, want in (("mute-top", top),
                  ("mute-inner-start", [np.interp(x, [150, 400], [350, 900]) for x in off]),
                  ("mute-inner-end", [np.interp(x, [150, 400], [420, 1000]) for x in off]),
                  ("mute-bottom", [np.interp(x, [150, 400], [900, 700]) for x in off])):
    p = pts(cls)
    want = np.minimum(np.array([y_of(t) for t in want]), info["y"] + info["height"])
    good = p is not None and len(p) == len(off) and np.allclose(p[:, 1], want, atol=0.02)
    print(("ok - " if good else "not ok - ") + f"picture: the {cls} line at the mute times of the job")
EOF
[ $? -eq 0 ] || notok "the picture checks ran"
expect_status 64 "--show-mutes needs --job" -- "$TZERO" picture "$D/out/g.sgy" --show-mutes \
  --out "$D/out/x.png"

# --- tzero semblance applies the job's mutes too: a bottom mute from controls at about
# 420-430 ms leaves no pick on the events at 550 and 800 ms (the survey's model), the
# event at 300 ms is still picked
with_mute bot '{"bottom": {"controls": [{"cmp": 230, "polyline": [[150, 420], [400, 420]]},
  {"cmp": 340, "polyline": [[150, 430], [400, 430]]}]}}'
expect_status 0 "semblance with a bottom mute from controls" -- "$TZERO" semblance --job "$D/bot.json" \
  --cmps 260-320:30 --out "$D/out/vbot.csv" --quiet
n300=$(grep -cE '^[0-9]+,(29[0-9]|30[0-9])\.' "$D/out/vbot.csv")
ndeep=$(awk -F, 'NR > 1 && $2 > 430' "$D/out/vbot.csv" | wc -l)
[ "$n300" -eq 3 ] && [ "$ndeep" -eq 0 ] && ok "semblance: picks above the bottom mute only" ||
  notok "semblance with a bottom mute: $n300 picks near 300 ms, $ndeep below the mute"
