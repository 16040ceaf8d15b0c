"""test_picture -- `tzero picture` read back with PIL and recomputed with NumPy.

References: the sections are written by segyio (Debian python3-segyio), an
independent SEG-Y implementation; the PNG files are decoded by PIL (Debian
python3-pil), an independent PNG reader; the clip is NumPy's np.percentile
(default linear method) of |amplitude|; the expected colour of every plot
pixel is computed here from the mapping written in docs/pictures.md (pixel
centre to nearest trace and sample, then the colour map formulas), not from
tzero. The fold chart is drawn from a QC report written by hand below.
"""
import json
import os

import numpy as np
import segyio
from PIL import Image

from tzcheck import WORK, done, ok, run

# docs/pictures.md: fixed margins around the plot area (panels; charts: CHART_RIGHT)
LEFT, TOP, RIGHT, BOTTOM, CHART_RIGHT = 80, 72, 110, 16, 24
NS, DT_US = 250, 4000


def write_section(path, cmps, data, delay_ms=0):
    spec = segyio.spec()
    spec.format = 5
    spec.samples = list(range(data.shape[1]))
    spec.tracecount = len(cmps)
    with segyio.create(path, spec) as f:
        f.bin.update({segyio.BinField.Interval: DT_US, segyio.BinField.Samples: data.shape[1],
                      segyio.BinField.Format: 5, segyio.BinField.SortingCode: 4})
        for i, c in enumerate(cmps):
            f.header[i] = {segyio.TraceField.CDP: int(c),
                           segyio.TraceField.TRACE_SAMPLE_COUNT: data.shape[1],
                           segyio.TraceField.TRACE_SAMPLE_INTERVAL: DT_US,
                           segyio.TraceField.DelayRecordingTime: delay_ms,
                           segyio.TraceField.TraceIdentificationCode: 1}
            f.trace[i] = data[i].astype(np.float32)


def rnd(x):
    # docs/pictures.md: channels are floor(x + 0.5), limited to 0..255
    return np.clip(np.floor(x + 0.5), 0, 255).astype(np.uint8)


def colours(a, clip, cmap):
    """The documented colour maps, written from docs/pictures.md."""
    u = np.clip(a / clip, -1, 1)
    out = np.zeros(u.shape + (3,), np.uint8)
    if cmap == "diverging":
        pos = u >= 0
        out[..., 0] = np.where(pos, 255, rnd(255 * (1 + u)))
        out[..., 1] = np.where(pos, rnd(255 * (1 - u)), rnd(255 * (1 + u)))
        out[..., 2] = np.where(pos, rnd(255 * (1 - u)), 255)
    elif cmap == "grey":
        g = rnd(127.5 * (1 - u))
        out[..., 0] = out[..., 1] = out[..., 2] = g
    else:
        knots = [0, 0.25, 0.5, 0.75, 1]
        rgb = [(0, 0, 96), (0, 96, 255), (0, 200, 200), (255, 220, 0), (200, 0, 0)]
        for ch in range(3):
            out[..., ch] = rnd(np.interp(np.clip(u, 0, 1), knots, [k[ch] for k in rgb]))
    return out


def expected_plot(data, pw, ph, clip, cmap):
    # pixel centre (c + 0.5) -> trace floor((c + 0.5) n / w); rows likewise
    ti = np.floor((np.arange(pw) + 0.5) * data.shape[0] / pw).astype(int)
    sj = np.floor((np.arange(ph) + 0.5) * data.shape[1] / ph).astype(int)
    return colours(data[np.ix_(ti, sj)].T.astype(np.float64), clip, cmap)


def png(path):
    im = Image.open(path)
    return im, np.asarray(im.convert("RGB"))


# --- 1. a single spike: extreme colour at its pixels, the zero colour elsewhere
cmps = np.arange(101, 141)
spike = np.zeros((40, NS), np.float32)
spike[17, 100] = 5.0                     # CMP 118 at 400 ms
sec = os.path.join(WORK, "spike.sgy")
write_section(sec, cmps, spike)
out = os.path.join(WORK, "spike.png")
W, H = 600 + LEFT + RIGHT, 500 + TOP + BOTTOM
p = run("picture", sec, "--out", out, "--width", W, "--height", H, "--style", "density",
        "--clip-percentile", "100", "--json")
ok(p.returncode == 0, "picture of a segyio section runs", p.stderr)
im, px = png(out)
ok(im.format == "PNG" and im.size == (W, H), "PIL reads a PNG of the requested size",
   f"{im.format} {im.size}")
info = json.loads(p.stdout)
ok(info["plot_area_px"] == {"x": LEFT, "y": TOP, "width": 600, "height": 500},
   "plot area sits inside the documented margins", str(info["plot_area_px"]))
plot = px[TOP:TOP + 500, LEFT:LEFT + 600]
want = expected_plot(spike, 600, 500, 5.0, "diverging")
ok(np.array_equal(plot, want), "every plot pixel has the documented colour (spike panel)",
   f"{np.sum(np.any(plot != want, axis=2))} pixels differ")
red = np.all(plot == [255, 0, 0], axis=2)
ys, xs = np.nonzero(red)
# trace 17 of 40 in 600 px: columns 255..269; sample 100 of 250 in 500 px: rows 200..201
ok(red.sum() == 15 * 2 and xs.min() == 255 and xs.max() == 269 and ys.min() == 200
   and ys.max() == 201, "the spike is pure red exactly at its trace and time",
   f"{red.sum()} px, x {xs.min() if len(xs) else None}-{xs.max() if len(xs) else None}")
ok(np.all(plot[~red] == 255), "everything else is the zero colour (white)")

# --- 2. random amplitudes: clip = np.percentile(|a|, P); colours from that clip
rng = np.random.default_rng(11)
noise = (rng.standard_normal((40, NS)) * np.linspace(0.5, 3, NS)).astype(np.float32)
sec2 = os.path.join(WORK, "noise.sgy")
write_section(sec2, cmps, noise, delay_ms=20)
for pct, cmap in ((99, "diverging"), (90, "grey"), (100, "semblance")):
    out2 = os.path.join(WORK, f"noise_{cmap}.png")
    args = ["picture", sec2, "--out", out2, "--width", 400 + LEFT + RIGHT, "--height",
            300 + TOP + BOTTOM, "--style", "density", "--colour-map", cmap, "--json"]
    if cmap != "semblance":                       # semblance: default percentile 100
        args += ["--clip-percentile", pct]
    p = run(*args)
    info = json.loads(p.stdout) if p.returncode == 0 else {}
    clip = float(np.percentile(np.abs(noise.astype(np.float64)), pct))
    ok(abs(info.get("clip", 0) - clip) <= 1e-6 * clip,
       f"clip at the {pct}th percentile matches np.percentile ({cmap})",
       f"{info.get('clip')} vs {clip}")
    _, px2 = png(out2)
    plot = px2[TOP:TOP + 300, LEFT:LEFT + 400].astype(int)
    want = expected_plot(noise, 400, 300, clip, cmap).astype(int)
    diff = np.abs(plot - want).max()
    ok(diff <= 1, f"plot pixels follow the {cmap} map at that clip (within 1 level)",
       f"max difference {diff}")

# --- 3. selections: --cmps and --time-ms keep exactly those traces and samples
out3 = os.path.join(WORK, "window.png")
p = run("picture", sec2, "--out", out3, "--cmps", "110-129", "--time-ms", "100-600",
        "--width", 400 + LEFT + RIGHT, "--height", 300 + TOP + BOTTOM, "--style", "density",
        "--clip", "2.5", "--json")
info = json.loads(p.stdout) if p.returncode == 0 else {}
ok(info.get("traces") == 20 and info.get("cmp_first") == 110 and info.get("cmp_last") == 129
   and info.get("time_first_ms") == 100 and info.get("time_last_ms") == 600,
   "the summary gives the CMPs and times drawn", str(info))
sub = noise[110 - 101:129 - 101 + 1, (100 - 20) // 4:(600 - 20) // 4 + 1]   # delay 20 ms
_, px3 = png(out3)
want = expected_plot(sub, 400, 300, 2.5, "diverging").astype(int)
diff = np.abs(px3[TOP:TOP + 300, LEFT:LEFT + 400].astype(int) - want).max()
ok(p.returncode == 0 and diff <= 1, "CMP 110-129, 100-600 ms (delay 20 ms) show exactly that "
   "window", f"max difference {diff}")

# --- 4. fold chart from a hand-written QC report: bars proportional to fold
folds = [1, 2, 3, 4, 6, 6, 6, 0, 5, 3]
live = [0.2, 0.4, 0.5, 0.8, 1.0, 0.95, 0.9, 0.0, 0.6, 0.3]
qc = {"format": "tzero-qc/1", "inputs": [], "parameters": {}, "traces": {},
      "fold": {"nominal": 6, "min": 0, "max": 6, "mean": 3.6},
      "cmps": [{"cmp": 201 + i, "x_m": 0, "y_m": 0, "fold": f, "offset_min_m": 0,
                "offset_max_m": 0, "live_fraction": lf} for i, (f, lf) in enumerate(zip(folds, live))]}
qcp = os.path.join(WORK, "qc.json")
with open(qcp, "w") as fh:
    json.dump(qc, fh)
outf = os.path.join(WORK, "fold.png")
FW, FH = 500 + LEFT + CHART_RIGHT, 400
p = run("picture", "--fold", qcp, "--out", outf, "--width", FW, "--height", FH)
im, pf = png(outf)
ok(p.returncode == 0 and im.size == (FW, FH), "fold chart of the requested size", p.stderr)
plot_h = FH - TOP - BOTTOM
ph1 = int(np.floor(0.7 * (plot_h - 24) + 0.5))          # docs/pictures.md layout
ph2 = plot_h - 24 - ph1
cols = LEFT + (np.arange(10) * 50 + 25)                 # centre column of each CMP's slot
fold_h = np.array([np.sum(np.all(pf[TOP:TOP + ph1, c] == [70, 110, 180], axis=1)) for c in cols])
y_live = TOP + ph1 + 24
live_h = np.array([np.sum(np.all(pf[y_live:y_live + ph2, c] == [220, 120, 30], axis=1))
                   for c in cols])
k = fold_h[4] / 6.0
ok(fold_h[7] == 0 and np.all(np.abs(fold_h - k * np.array(folds)) <= 0.5 + 1e-9) and k > 10,
   "fold bar heights are proportional to fold (zero fold: no bar)", f"{fold_h.tolist()}")
ok(np.all(np.abs(live_h - np.array(live) * ph2) <= 0.5 + 1e-9),
   "live-fraction bars are live_fraction x the lower panel height", f"{live_h.tolist()}")
# the tallest bar stays below the top of the fold panel (headroom over the largest fold)
ok(fold_h.max() < ph1, "headroom above the largest fold")

# --- 5. the same chart as SVG: PIL cannot read SVG, so the XML is parsed with the
# standard library (xml.etree) and the bars read back: one per CMP of the report,
# its data-fold the report's fold, its height in proportion; text kept as text
import xml.etree.ElementTree as ET
outs = os.path.join(WORK, "fold.svg")
p = run("picture", "--fold", qcp, "--out", outs, "--width", FW, "--height", FH, "--json")
info = json.loads(p.stdout) if p.returncode == 0 else {}
ok(info.get("format") == "svg", "the .svg extension chooses SVG", str(info))
root = ET.parse(outs).getroot()
NS = "{http://www.w3.org/2000/svg}"
ok(root.tag == NS + "svg" and root.get("width") == str(FW) and root.get("height") == str(FH),
   "an SVG document of the requested size", f"{root.tag} {root.get('width')}x{root.get('height')}")
bars = [r for r in root.iter(NS + "rect") if r.get("data-fold") is not None]
got = {int(r.get("data-cmp")): float(r.get("data-fold")) for r in bars}
want = {201 + i: float(f) for i, f in enumerate(folds) if f > 0}
ok(got == want, "every CMP with fold has a bar carrying the report's fold", f"{got}")
hs = {int(r.get("data-cmp")): float(r.get("height")) for r in bars}
ok(all(abs(hs[c] - k * want[c]) <= 0.5 + 1e-9 for c in want),
   "SVG bar heights equal the PNG's (proportional to fold)", f"{hs}")
texts = [t.text for t in root.iter(NS + "text")]
ok("Fold" in texts and "Live (%)" in texts and "CMP" in texts and "Nominal fold 6" in texts,
   "axis titles and the legend are real text in the SVG", str(texts[:12]))

# --- 6. PDF and --format: a PDF file header (ISO 32000-1, section 7.5.2) whatever the name
outp = os.path.join(WORK, "fold.out")
p = run("picture", "--fold", qcp, "--out", outp, "--format", "pdf")
with open(outp, "rb") as fh:
    head = fh.read(8)
ok(p.returncode == 0 and head.startswith(b"%PDF-1."), "--format pdf writes a PDF", str(head))
p = run("picture", "--fold", qcp, "--out", os.path.join(WORK, "fold.gif"), check=False)
ok(p.returncode == 64 and "--format" in p.stderr, "an unknown extension asks for --format",
   p.stderr)
done()
