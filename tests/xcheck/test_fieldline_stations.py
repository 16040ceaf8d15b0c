"""test_fieldline_stations -- statics station numbers on the field-style line of
fieldline.py (segyio, GPS scatter: 0.03 m RMS along the line, 0.4 m across it),
at the default station interval (the receiver interval, 5 m).

The processing line is fitted through the midpoints, so its origin lies half a
station off the receivers; numbered from the origin, two scattered receivers
4.9 m apart could fall on one station. tzero anchors the station grid on the
receivers. Checked here:
- against NumPy: the anchor recomputed from the same receivers (each record's
  first and last channel) as the circular mean of the fractional station
  positions (Mardia & Jupp, "Directional Statistics", 2000, sec. 2.2.1) refined
  by the median of the wrapped differences, and every receiver's station as
  floor((s - anchor) / interval + 1/2) of its position s along the fitted line;
- against the generator: one tzero station per field station and the numbers
  in step with the field's (station - field station constant), on the straight
  line and on a line bent by 40 degrees (fieldline.true_line).
"""
import csv
import json
import math
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
import fieldline as fl  # noqa: E402
from tzcheck import WORK, done, ok, run  # noqa: E402


def field_stations():
    """(rx, ry) as stored -> field receiver station, from the generator."""
    out = {}
    for ffid, s in fl.records():
        for c, r in enumerate(fl.receivers(s)):
            out[(ffid, c + 1)] = r
    return out


def elevation_table(d, crooked):
    with open(os.path.join(d, "v.csv"), "w") as f:
        f.write("cmp,time_ms,velocity_mps\n1,0,1800\n1,220,2000\n1,330,2300\n")
    job = {"shots": ["shots/*.sgy"], "velocity": "v.csv",
           "statics": {"datum_m": 100, "replacement_velocity_mps": 2000}}
    if crooked:
        job["bins"] = {"crooked": {"smoothing_m": 100}}
    jp = os.path.join(d, "job.json")
    with open(jp, "w") as f:
        json.dump(job, f)
    out = os.path.join(d, "elev.csv")
    p = run("statics", "elevation", "--job", jp, "--out", out)
    ok(p.returncode == 0, f"statics elevation at the default interval ({'bent' if crooked else 'straight'} line)",
       p.stderr.strip())
    if p.returncode:
        return jp, {}
    rows = {}
    with open(out) as f:
        for r in csv.DictReader(line for line in f if not line.startswith("#")):
            if r["kind"] == "receiver":
                rows[int(r["station"])] = (float(r["x_m"]), float(r["y_m"]))
    return jp, rows


def in_step(rows, pos, name):
    """One tzero station per field station, numbered in step with the field's."""
    fs = field_stations()
    by_xy = {}
    for key, (sx, sy, rx, ry) in pos.items():
        by_xy[(round(rx, 2), round(ry, 2))] = fs[key]
    field = sorted(set(fs.values()))
    diffs = {st - by_xy.get((round(x, 2), round(y, 2)), -10 ** 9) for st, (x, y) in rows.items()}
    ok(len(rows) == len(field), f"{name}: {len(rows)} receiver stations for {len(field)} field stations")
    ok(len(diffs) == 1, f"{name}: station = field station + one constant ({sorted(diffs)[:4]})")


# ---- the straight line
d = os.path.join(WORK, "straight")
fl.write_shots(d)
pos = fl.positions()
jp, rows = elevation_table(d, False)
in_step(rows, pos, "straight line")
p = run("geometry", "--json", "--job", jp)
line = json.loads(p.stdout)["line"] if p.returncode == 0 else {}
ok(line.get("kind") == "straight", "geometry --json gives the fitted line", p.stderr.strip())
if line:
    a = math.radians(line["azimuth_deg"])
    u = np.array([math.sin(a), math.cos(a)])
    o = np.array([line["origin_x_m"], line["origin_y_m"]])
    iv = fl.DG
    ends = []
    for ffid, _ in fl.records():
        for c in (1, 2 * fl.HALF):
            ends.append(pos[(ffid, c)][2:])
    s = (np.array(ends) - o) @ u / iv
    r = s - np.floor(s)
    phi0 = math.atan2(np.sin(2 * np.pi * r).sum(), np.cos(2 * np.pi * r).sum()) / (2 * np.pi)
    w = r - phi0
    phi = phi0 + float(np.median(w - np.floor(w + 0.5)))
    phi -= math.floor(phi + 0.5 + 1e-6)
    anchor = phi * iv
    ok(abs(abs(phi) - 0.5) < 0.05,
       f"NumPy: the fitted line's origin is half a station off the receivers (phase {phi:+.4f})")
    allr = np.array(sorted({v[2:] for v in pos.values()}))
    sr = (allr - o) @ u
    old = np.floor(sr / iv + 0.5 + 1e-9)
    ok(len(set(old)) < len(allr),
       f"NumPy: numbered from the origin, {len(allr)} receivers share {len(set(old))} stations")
    new = np.floor((sr - anchor) / iv + 0.5 + 1e-9).astype(int)
    ok(len(set(new)) == len(allr), f"NumPy: anchored, {len(allr)} receivers on distinct stations")
    frac = (sr - anchor) / iv - new
    ok(np.abs(frac).max() < 0.05, f"NumPy: anchored receivers within {np.abs(frac).max():.4f} "
       "intervals of a station centre")
    np_st = {(round(x, 2), round(y, 2)): int(k) for (x, y), k in zip(allr, new)}
    tz = {(round(x, 2), round(y, 2)): st for st, (x, y) in rows.items()}
    ok(tz == np_st, "every receiver's station = NumPy floor((s - anchor) / 5 m + 1/2)",
       str(sorted(set(tz.items()) ^ set(np_st.items()))[:4]))

# ---- a bent line: stations numbered along the crooked processing line
d = os.path.join(WORK, "bent")
fl.write_shots(d, bend=40.0)
_, rows = elevation_table(d, True)
in_step(rows, fl.positions(bend=40.0), "line bent by 40 degrees")

done()
