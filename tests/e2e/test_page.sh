# test_page.sh -- the HTML QC pages in a real browser: line page (tzero report --html and
# the page tzero stack writes beside its report), survey page, comparison page.
# Headless Chromium (Debian's chromium) loads each page from file://, its DOM after the
# scripts ran is read with Python's html.parser (tests/e2e/page_dom.py), and the charts'
# numbers are compared with the QC report's JSON. The survey is written by segyio
# (tests/xcheck/test_stack_segyio.py); its brute-force fold at CMP 250 is 6 (nominal
# N dg/(2 ds) = 24*10/(2*20), Sheriff & Geldart 1995). Screenshots go to build/page-shots/.
. "$TOP/tests/e2e/lib.sh"
. "$TOP/tests/e2e/browser.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
Q="$D/out/qc.json"
SHOTS="$(dirname "$TZERO")/page-shots"
mkdir -p "$SHOTS"
expect_status 0 "stack writes the section, the report and the page" -- "$TZERO" stack --job "$D/line.json" --quiet
[ -s "$D/out/qc.html" ] && ok "the QC page sits beside the report (qc.html)" || notok "no qc.html beside qc.json"
expect_status 0 "report --html writes a line page" -- "$TZERO" report "$Q" --html "$T/line.html"
expect_stdout "wrote .*line.html: QC page of" "report --html says what it wrote"
expect_status 0 "report --help names --html" -- "$TZERO" report --help
expect_stdout "[-]-html PAGE.html" "--help gives --html"
expect_status 64 "--section without --html" -- "$TZERO" report "$Q" --section "$D/out/stack.sgy"
expect_status 73 "--html onto the report itself" -- "$TZERO" report "$Q" --html "$Q"
expect_status 66 "--html of a missing report" -- "$TZERO" report "$T/none.json" --html "$T/x.html"
expect_no_file "$T/x.html" "no page after a missing report"

# self-contained: no script, style sheet, image or frame from anywhere but the page itself
if grep -Eq '(src|href)="(https?:|//)' "$T/line.html"; then notok "the page refers to the network"
else ok "the page refers to nothing on the network"; fi
if grep -Eq '<(link|iframe)[ >]|<script [^>]*src=' "$T/line.html"; then notok "the page loads other files"
else ok "the page loads no other file (inline SVG, data-URI images, inline script)"; fi

# a second report, with a warning, for the survey (a copy whose velocity table has a
# low-fold CMP warning, as tzero semblance --min-fold would leave)
"$PYTHON" - "$Q" "$D/out/warned_qc.json" <<'PY'
import json, sys
r = json.load(open(sys.argv[1]))
r["line"] = "TV-ZZ-09 copy with a warning (invented)"
r["velocity"].setdefault("warnings", []).append(
    {"kind": "low_fold", "cmp": 250, "line": None,
     "message": "CMP 250: analysed without a pick for lack of fold"})
# station statics as tzero stack records them with statics (invented values)
r["statics"] = {"datum_m": 100, "applied": {"traces": 10, "min_ms": -5, "max_ms": 3, "rms_ms": 2},
                "sources": [{"station": s, "static_ms": -1.0 * s} for s in range(1, 6)],
                "receivers": [{"station": s, "static_ms": 0.5 * s} for s in range(0, 9)]}
json.dump(r, open(sys.argv[2], "w"))
PY
expect_status 0 "a survey page of two reports" -- "$TZERO" report --html "$T/index.html" "$Q" "$D/out/warned_qc.json"
expect_stdout "survey page of 2 lines \(1 line pages written" "the missing line page was written beside its report"
[ -s "$D/out/warned_qc.html" ] && ok "warned_qc.html written for the survey's link" || notok "warned_qc.html missing"

# comparison: the section against itself scaled by 2 (segyio): energy ratio 10 log10(4)
# = 6.02 dB at every CMP, peak correlation 1 at lag 0 (definitions of the ratio and of
# normalised cross-correlation)
"$PYTHON" - "$D/out/stack.sgy" "$T/double.sgy" <<'PY'
import shutil, sys
import segyio
shutil.copyfile(sys.argv[1], sys.argv[2])
with segyio.open(sys.argv[2], "r+", ignore_geometry=True) as f:
    for i in range(f.tracecount):
        f.trace[i] = f.trace[i] * 2
PY
expect_status 0 "compare --html" -- "$TZERO" compare "$D/out/stack.sgy" "$T/double.sgy" --html "$T/compare.html" --quiet

if [ -z "$CHROMIUM" ]; then
  for n in "line page loads without a JavaScript error" "fold of three CMPs read back" \
    "#cmp=250 shows CMP 250" "an error on the page is caught" "survey rows" "survey sorts" \
    "comparison ratio 6.02 dB" "statics chart" "print to PDF" "screenshots"; do skip "$n"; done
  exit 0
fi

# ---- line page
dump_dom "$(file_url "$T/line.html")#cmp=250" "$T/line.dom" "$T/line.log"
"$PYTHON" "$TOP/tests/e2e/page_dom.py" line "$T/line.dom" >"$T/line.json" || notok "line DOM unreadable"
"$PYTHON" - "$T/line.json" "$Q" "$T/line.log" <<'PY'
import json, sys
dom = json.load(open(sys.argv[1]))
rep = json.load(open(sys.argv[2]))
log = open(sys.argv[3], errors="replace").read()
def ok(c, d, x=""):
    print(("ok - " if c else "not ok - ") + d + ("" if c else ": " + str(x)[:300]))
ok(dom["js_error"] is None and dom["ready"] == "1", "line page: its script ran to the end without "
   "a JavaScript error", dom["js_error"])
ok("Uncaught" not in log, "line page: the browser logged no uncaught error",
   [l for l in log.splitlines() if "Uncaught" in l][:3])
cmps = rep["cmps"]
pick = [cmps[0], next(c for c in cmps if c["cmp"] == 250), cmps[-1]]
got = [dom["fold"].get(str(c["cmp"])) for c in pick]
ok(got == [c["fold"] for c in pick], "fold of three CMPs read back from the SVG equals the report's "
   "(consistency check)", f"{got} vs {[c['fold'] for c in pick]}")
ok(dom["fold"].get("250") == 6, "CMP 250 shows the brute-force fold 6 (N dg/(2 ds))", dom["fold"].get("250"))
ok(len(dom["fold"]) == len(cmps), "one fold bar per CMP of the report", len(dom["fold"]))
live = dom["series"].get("live_fraction", {})
ok(all(abs(live[str(c["cmp"])] - 100 * c["live_fraction"]) < 1e-6 for c in pick),
   "live-fraction bars hold 100 x the report's live_fraction", [live.get(str(c["cmp"])) for c in pick])
ok(dom["info_cmp"] == "250" and "fold 6" in dom["info"], "#cmp=250 shows CMP 250's numbers (the "
   "hover code path)", dom["info"])
th = dom["thumbnail"] or {}
fc = dom["charts"].get("fold", {})
ok(th.get("data-cmp0") == str(cmps[0]["cmp"]) and th.get("data-cmp1") == str(cmps[-1]["cmp"])
   and th.get("data-plot-x") == fc.get("data-plot-x") and th.get("data-plot-w") == fc.get("data-plot-w"),
   "the section thumbnail shares the fold chart's CMP axis", f"{th} {fc}")
ok(all(s.startswith("data:image/png;base64") for s in dom["images"]) and dom["images"],
   "images are embedded PNGs", dom["images"])
ok(not dom["external"], "nothing is loaded from outside the page", dom["external"])
ok("mute" in dom["charts"] and "velocity" in dom["charts"] and "offsets" in dom["charts"]
   and "full_fold_ms" in dom["charts"], "mute, velocity, offset and full-fold charts are drawn",
   list(dom["charts"]))
PY

# the error hook can fail: a page with a broken script says so
sed 's|</body>|<script>no_such_function();</script></body>|' "$T/line.html" >"$T/broken.html"
dump_dom "$(file_url "$T/broken.html")" "$T/broken.dom" "$T/broken.log"
"$PYTHON" "$TOP/tests/e2e/page_dom.py" line "$T/broken.dom" | grep -q '"js_error": "[^"]*no_such_function' &&
  ok "a script error on a page is caught and written into the DOM" ||
  notok "the error hook did not catch a broken script"

# ---- a report with statics draws them along the line, one series per station table
dump_dom "$(file_url "$D/out/warned_qc.html")" "$T/warned.dom" "$T/warned.log"
grep -q 'data-series="sources.static_ms" data-points="5"' "$T/warned.dom" &&
  grep -q 'data-series="receivers.static_ms" data-points="9"' "$T/warned.dom" &&
  grep -q 'href="#cmp=250"' "$T/warned.dom" &&
  ok "statics chart: 5 source and 9 receiver stations; the warning links to CMP 250" ||
  notok "statics chart or warning link missing in the warned line's page"

# ---- survey page: warnings first, links to the line pages, sortable
dump_dom "$(file_url "$T/index.html")" "$T/index.dom" "$T/index.log"
"$PYTHON" "$TOP/tests/e2e/page_dom.py" survey "$T/index.dom" >"$T/index.json"
"$PYTHON" - "$T/index.json" "$T" <<'PY'
import json, os, sys
dom = json.load(open(sys.argv[1]))
def ok(c, d, x=""):
    print(("ok - " if c else "not ok - ") + d + ("" if c else ": " + str(x)[:300]))
ok(dom["js_error"] is None and dom["ready"] == "1", "survey page: no JavaScript error", dom["js_error"])
rows = dom["rows"]
ok([r["data-report"] for r in rows] == ["warned_qc.json", "qc.json"], "one row per line, the line "
   "with a warning first", [r["data-report"] for r in rows])
ok(rows and rows[0].get("data-warnings") == "1", "the warned line counts its warning", rows[:1])
targets = [os.path.normpath(os.path.join(sys.argv[2], h)) for h in dom["links"]]
ok(len(targets) == 2 and all(os.path.isfile(t) and t.endswith(".html") for t in targets),
   "each line links to its page, which exists", targets)
PY
sed 's|</body>|<script>document.querySelector("#lines th").click();</script></body>|' "$T/index.html" >"$T/sorted.html"
dump_dom "$(file_url "$T/sorted.html")" "$T/sorted.dom" "$T/sorted.log"
"$PYTHON" "$TOP/tests/e2e/page_dom.py" survey "$T/sorted.dom" | "$PYTHON" -c '
import json, sys
d = json.load(sys.stdin)
r = [x["data-report"] for x in d["rows"]]
ok = r == ["qc.json", "warned_qc.json"] and d["sorted"][0] == "asc" and d["js_error"] is None
print(("ok - " if ok else "not ok - ") + "a click on the line heading sorts by line name" + ("" if ok else ": %s" % r))'

# ---- comparison page
dump_dom "$(file_url "$T/compare.html")#cmp=250" "$T/compare.dom" "$T/compare.log"
"$PYTHON" "$TOP/tests/e2e/page_dom.py" compare "$T/compare.dom" | "$PYTHON" -c '
import json, math, sys
d = json.load(sys.stdin)
db = d["series"].get("energy_ratio_db", {})
want = 10 * math.log10(4)
ok = d["js_error"] is None and db and all(abs(v - want) < 1e-3 for v in db.values())
print(("ok - " if ok else "not ok - ") + "comparison page: B = 2 A reads 6.02 dB at every CMP, no "
      "JavaScript error" + ("" if ok else ": %s %s" % (d["js_error"], list(db.values())[:5])))
ok = len(d["images"]) == 2 and "250" == d["info_cmp"]
print(("ok - " if ok else "not ok - ") + "comparison page: both thumbnails, #cmp=250 shows its numbers")'

# ---- screenshots a person can open
screenshot "$(file_url "$T/line.html")#cmp=250" "$SHOTS/line_page.png" 1180 2400
screenshot "$(file_url "$T/index.html")" "$SHOTS/survey_page.png" 1180 500
screenshot "$(file_url "$T/compare.html")" "$SHOTS/compare_page.png" 1180 1800
# printing uses the print style sheet; the PDF header is ISO 32000-1, section 7.5.2
browser --no-pdf-header-footer --print-to-pdf="$SHOTS/line_page.pdf" "$(file_url "$T/line.html")" >/dev/null 2>&1
if head -c 7 "$SHOTS/line_page.pdf" 2>/dev/null | grep -q '^%PDF-1\.' && [ "$(wc -c <"$SHOTS/line_page.pdf")" -gt 20000 ]; then
  ok "the line page prints to PDF ($SHOTS/line_page.pdf)"; else notok "printing the line page to PDF"; fi
"$PYTHON" - "$SHOTS" <<'PY'
import os, sys
import numpy as np
from PIL import Image
shots = sys.argv[1]
im = np.asarray(Image.open(os.path.join(shots, "line_page.png")).convert("RGB"))
blue = np.all(im == [70, 110, 180], axis=2).sum()      # the fold bars' colour
ok = im.shape[:2] == (2400, 1180) and blue > 1000
print(("ok - " if ok else "not ok - ") + f"screenshot {shots}/line_page.png shows the fold bars"
      + ("" if ok else f": {im.shape} {blue} px"))
for n in ("survey_page.png", "compare_page.png"):
    ok = os.path.getsize(os.path.join(shots, n)) > 10000
    print(("ok - " if ok else "not ok - ") + f"screenshot {shots}/{n}")
PY
