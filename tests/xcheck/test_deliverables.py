"""test_deliverables -- what the interpreter receives, read back with independent
tools: the stacked and migrated sections with segyio (Debian python3-segyio),
the navigation file and the velocity export with NumPy, the history's digests
with Python's hashlib (SHA-256, FIPS 180-4).

Line: the independent NumPy generator (landline.py), field shot points from 101.

Checks and their sources:
- textual header, SEG-Y rev 1 (2002) section 3: card 39 "C39 SEG Y REV1", card 40
  "C40 END TEXTUAL HEADER"; cards 1-38 hold the line name, the job's client,
  contractor and CRS strings, datum elevation and replacement velocity, polarity
  convention, tzero's version and the date, the processing sequence in order;
- binary header, SEG-Y rev 1 (2002): bytes 3255-3256 measurement system 1 (metres),
  3257-3258 impulse polarity code 2 for the job's "positive"; trace bytes 89-90
  coordinate units 1 (length);
- the navigation file equals the section's trace headers (bytes 21-24, 197-202,
  181-188 with 71-72, 41-48 and 53-60 with 69-70, 33-34) row by row;
- velocity export: x/y equal the section's CMP X/Y (181-188); RMS velocities between
  control CMPs equal the table interpolated in NumPy (linear in time, then linear in
  CMP at equal time, as docs/velocity-table.md states); interval velocities equal
  Dix (1955), Geophysics 20(1), 68-86, V_int,n^2 = (V_n^2 t_n - V_n-1^2 t_n-1) /
  (t_n - t_n-1), computed in NumPy; an imaginary interval is left empty;
- history: every input digest equals hashlib.sha256 of the file; the command line.
"""
import csv
import hashlib
import json
import os
import re
import time

import numpy as np
import segyio

import landline
from tzcheck import WORK, done, ok, run

F = segyio.TraceField
d = os.path.join(WORK, "dl")
landline.make_line(d, first_shot_point=101)
job = json.load(open(os.path.join(d, "line.json")))
# two control CMPs; at CMP 200 V_rms^2 t decreases from 250 to 400 ms (imaginary)
with open(os.path.join(d, "vel2.csv"), "w") as f:
    f.write("cmp,time_ms,velocity_mps\n40,0,2000\n40,200,2100\n40,330,2250\n40,480,2400\n"
            "200,0,1900\n200,250,2200\n200,400,1700\n")
job["velocity"] = "vel2.csv"
job["statics"] = {"datum_m": landline.DATUM, "replacement_velocity_mps": landline.V1,
                  "elevation": True}
job["client"] = "Brindlecote Water Co-operative (invented)"
job["contractor"] = "Tarrowvane Field Geophysics (invented)"
job["crs"] = "EPSG:32630"
job["polarity"] = "positive"
job["mute"] = {"top": [[0, 0], [240, 150]]}
job["migration"] = {"method": "phase-shift"}
job["output"].update({"navigation": "out/nav.csv", "history": "out/history.md",
                      "migrated": "out/migrated.sgy"})
jp = os.path.join(d, "dl.json")
json.dump(job, open(jp, "w"))
env = dict(os.environ)
env.pop("SOURCE_DATE_EPOCH", None)
day_before = time.strftime("%Y-%m-%d", time.gmtime())
r = run("stack", "--job", jp, "--quiet", env=env)
days = {day_before, time.strftime("%Y-%m-%d", time.gmtime())}
ok(r.returncode == 0, "tzero stack writes section, navigation, history and migrated section",
   r.stderr.strip())
version = run("--version").stdout.split()[-1]


def scaled(v, s):
    v = np.asarray(v, dtype=float)
    return v / -s if s < 0 else v * (s if s > 0 else 1)


def read(path):
    with segyio.open(path, ignore_geometry=True) as f:
        h = [f.header[i] for i in range(f.tracecount)]
    with open(path, "rb") as f:
        b = f.read(3600)
    # EBCDIC, IBM code page 037, decoded by Python's own codec
    return b[:3200].decode("cp037"), h, b


def check_text(text, what, steps):
    cards = [text[i * 80:(i + 1) * 80] for i in range(40)]
    ok(cards[38].rstrip() == "C39 SEG Y REV1" and cards[39].rstrip() == "C40 END TEXTUAL HEADER",
       f"{what}: cards 39-40 as SEG-Y rev 1 section 3 gives them",
       f"{cards[38]!r} {cards[39]!r}")
    ok(all(c.startswith("C%2d " % (i + 1)) for i, c in enumerate(cards)),
       f"{what}: every card starts 'Cnn ' (SEG-Y rev 1 section 3)")
    body = "\n".join(c[4:].rstrip() for c in cards[:38])
    want = [job["name"], job["client"], job["contractor"], job["crs"],
            f"datum elevation {landline.DATUM:g} m", f"replacement velocity {landline.V1:g} m/s",
            "positive (SEG-Y code 2)", f"tzero {version}"]
    missing = [w for w in want if w not in body]
    ok(not missing, f"{what}: line, client, contractor, CRS, datum, replacement velocity, "
       "polarity and version are in the textual header", f"missing {missing}")
    ok(any(day in cards[0] for day in days), f"{what}: card 1 gives the run's date",
       cards[0].rstrip())
    seq = [re.match(r"C\d\d +(\d+) ([a-zA-Z -]+):", c) for c in cards]
    got = [(int(m.group(1)), m.group(2)) for m in seq if m]
    ok([n for n, _ in got] == list(range(1, len(got) + 1)) and [s for _, s in got] == steps,
       f"{what}: the processing sequence one step per card, in order", str(got))


stack = os.path.join(d, "out", "stack.sgy")
text, h, b = read(stack)
check_text(text, "stack", ["input", "geometry", "statics", "NMO", "top mute", "stack"])
ok(b[3254:3256] == b"\x00\x01", "binary header 3255-3256: measurement system 1 (metres)")
ok(b[3256:3258] == b"\x00\x02", "binary header 3257-3258: polarity code 2 for \"positive\"",
   b[3256:3258].hex())
ok({x[F.CoordinateUnits] for x in h} == {1}, "trace bytes 89-90: coordinate units 1 (length)")

mtext, mh, mb = read(os.path.join(d, "out", "migrated.sgy"))
check_text(mtext, "migrated section",
           ["input", "geometry", "statics", "NMO", "top mute", "stack", "time migration"])
ok(mb[3256:3258] == b"\x00\x02", "migrated section: polarity code 2 kept")
ok([x[F.ShotPoint] for x in mh] == [x[F.ShotPoint] for x in h],
   "migrated section: the stack's shot points (bytes 197-200) kept")

r = run("migrate", stack, "--velocity", os.path.join(d, "vel2.csv"), "--method", "kirchhoff",
        "--out", os.path.join(d, "out", "kirchhoff.sgy"), "--quiet", env=env)
ok(r.returncode == 0, "tzero migrate of the stack", r.stderr.strip())
ktext, kh, kb = read(os.path.join(d, "out", "kirchhoff.sgy"))
check_text(ktext, "tzero migrate",
           ["input", "geometry", "statics", "NMO", "top mute", "stack", "time migration"])
ok("Kirchhoff" in ktext and kb[3256:3258] == b"\x00\x02",
   "tzero migrate: the step names the method; polarity code kept")

# navigation = headers
cmp = np.array([x[F.CDP] for x in h])
sp = np.array([scaled(x[F.ShotPoint], x[F.ShotPointScalar]) for x in h])
cx = np.array([scaled(x[F.CDP_X], x[F.SourceGroupScalar]) for x in h])
cy = np.array([scaled(x[F.CDP_Y], x[F.SourceGroupScalar]) for x in h])
el = np.array([scaled(x[F.SourceSurfaceElevation], x[F.ElevationScalar]) for x in h])
da = np.array([scaled(x[F.SourceDatumElevation], x[F.ElevationScalar]) for x in h])
fold = np.array([x[F.NStackedTraces] for x in h])
rows = list(csv.reader(open(os.path.join(d, "out", "nav.csv"))))
ok(rows[0] == ["cmp", "shot_point", "x_m", "y_m", "surface_elevation_m", "datum_m", "fold"],
   "navigation columns as the issue names them", str(rows[0]))
nav = np.array([[float(v) for v in row] for row in rows[1:]])
hdr = np.column_stack([cmp, sp, cx, cy, el, da, fold])
ok(nav.shape == hdr.shape and np.max(np.abs(nav - hdr)) < 1e-9,
   f"navigation file equals the section's headers ({len(nav)} rows)",
   f"shape {nav.shape} vs {hdr.shape}")
c103 = int(round(((103 - 101) * landline.SHOT_STEP * landline.DG) / (landline.DG / 2))) + 1
ok(abs(nav[nav[:, 0] == c103, 1][0] - 103) <= 0.5, f"navigation: shot point 103 at CMP {c103}")

# velocity export at the control CMPs, then every 10 CMPs
xy = {int(c): (x, y) for c, x, y in zip(cmp, cx, cy)}
for every in (None, 10):
    out = os.path.join(d, "out", f"vel_{every}.csv")
    args = ["velocity", "--job", jp, "--export", out, "--quiet"]
    if every:
        args += ["--every", every]
    r = run(*args)
    ok(r.returncode == 0, f"velocity export{' every %d CMPs' % every if every else ''}",
       r.stderr.strip())
    rows = list(csv.DictReader(open(out)))
    ok(list(rows[0].keys()) == ["cmp", "shot_point", "x_m", "y_m", "time_ms", "rms_mps",
                                "interval_mps"], "velocity export columns as the issue names them")
    bad_xy = [r_ for r_ in rows if int(r_["cmp"]) in xy and
              (abs(float(r_["x_m"]) - xy[int(r_["cmp"])][0]) > 1e-9 or
               abs(float(r_["y_m"]) - xy[int(r_["cmp"])][1]) > 1e-9)]
    ok(not bad_xy and any(int(r_["cmp"]) in xy for r_ in rows),
       "velocity export x/y equal the section's CMP X/Y (bytes 181-188)", str(bad_xy[:2]))
    worst, imag, nimag = 0.0, 0, 0
    for c in sorted({int(r_["cmp"]) for r_ in rows}):
        g = [r_ for r_ in rows if int(r_["cmp"]) == c]
        t = np.array([float(r_["time_ms"]) for r_ in g]) / 1000
        v = np.array([float(r_["rms_mps"]) for r_ in g])
        num = v ** 2 * t - np.concatenate([[0], v[:-1] ** 2 * t[:-1]])
        den = t - np.concatenate([[0], t[:-1]])
        vi2 = np.where(den > 0, num / np.where(den > 0, den, 1), v ** 2)
        for k, r_ in enumerate(g):
            if vi2[k] <= 0:
                nimag += 1
                imag += r_["interval_mps"] == ""
            else:
                worst = max(worst, abs(float(r_["interval_mps"]) - np.sqrt(vi2[k])))
    # the printed RMS velocities carry 0.005 m/s of rounding, which Dix magnifies
    ok(worst < 0.5, f"interval velocities equal Dix (1955) in NumPy (largest difference "
       f"{worst:.3f} m/s)")
    ok(nimag > 0 and imag == nimag, f"the {nimag} imaginary intervals are left empty")
    if every:
        ctl = {40: ([0, 200, 330, 480], [2000, 2100, 2250, 2400]),
               200: ([0, 250, 400], [1900, 2200, 1700])}
        err = 0.0
        for r_ in rows:
            c, tm = int(r_["cmp"]), float(r_["time_ms"])
            a, bb = (np.interp(tm, *ctl[k]) for k in (40, 200))
            want = a if c <= 40 else bb if c >= 200 else a + (bb - a) * (c - 40) / 160
            err = max(err, abs(float(r_["rms_mps"]) - want))
        ok(err <= 0.006, f"RMS between control CMPs equals NumPy interpolation of the table "
           f"(largest difference {err:.4f} m/s)")
        cmps = sorted({int(r_["cmp"]) for r_ in rows})
        # times: the knots of the nearest control CMP (the lower of two as near)
        wrong_t = [c for c in cmps if [float(r_["time_ms"]) for r_ in rows if int(r_["cmp"]) == c]
                   != ctl[40 if abs(c - 40) <= abs(c - 200) else 200][0]]
        ok(not wrong_t, "each CMP at the knot times of its nearest control CMP", str(wrong_t[:3]))
        ok(cmps == list(range(int(cmp[0]), int(cmp[-1]) + 1, 10)),
           "every 10th CMP of the line from its first", str(cmps[:4]))

# history
hist = open(os.path.join(d, "out", "history.md")).read()
paths = [jp, os.path.join(d, "vel2.csv")] + sorted(
    os.path.join(d, "shots", n) for n in os.listdir(os.path.join(d, "shots")))
wrong = [p for p in paths if hashlib.sha256(open(p, "rb").read()).hexdigest() not in hist]
ok(not wrong, f"history: the SHA-256 of every input ({len(paths)} files) as hashlib gives it",
   str(wrong[:2]))
ok(f"tzero stack --job {jp} --quiet" in hist, "history: the command line")
want = ["## Inputs", "## Geometry", "## Edits", "## Statics", "## Processing sequence",
        "## Parameters of every step", "## Velocity controls", "## Mutes", "## QC figures",
        "## Warnings", job["client"], job["crs"]]
ok(all(w in hist for w in want), "history: every part a processing report needs",
   str([w for w in want if w not in hist]))
ok("imaginary" in hist.lower(), "history: the velocity table's imaginary interval is a warning")
done()
