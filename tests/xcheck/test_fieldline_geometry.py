"""test_fieldline_geometry -- `tzero geometry` on the field-style line of fieldline.py
(written with segyio, independent of tzero) against NumPy computed here.

Sources: midpoint and offset as the half-sum and the distance of the source and
receiver positions (Sheriff & Geldart 1995; common practice); the receiver interval as
the median of neighbouring receiver distances measured along the line (issue 17;
common practice), which cross-line GPS scatter must not lengthen; the line's
true interval of 5 m, the misfire and the unused record number as the generator
made them.
"""
import json
import math
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
import fieldline as fl  # noqa: E402
from tzcheck import WORK, done, ok, run  # noqa: E402

d = os.path.join(WORK, "field")
paths = fl.write_shots(d)
p = run("geometry", "--json", *paths)
ok(p.returncode == 0, "geometry --json on the field line", p.stderr)
g = json.loads(p.stdout) if p.returncode == 0 else {}

pos = fl.positions()
recs = fl.records()
# NumPy: the old estimate (median of per-record medians of hypot steps) is biased
# by cross-line scatter; the along-line one is not.
hyp, along = [], []
for ffid, _ in recs:
    r = np.array([pos[(ffid, c)][2:] for c in range(1, 2 * fl.HALF + 1)])
    st = np.diff(r, axis=0)
    hyp.append(np.median(np.hypot(st[:, 0], st[:, 1])))
    c = r - r.mean(axis=0)
    u = np.linalg.svd(c, full_matrices=False)[2][0]      # principal axis (NumPy SVD)
    along.append(np.median(np.abs(st @ u)))
hyp_med, along_med = float(np.median(hyp)), float(np.median(along))
ok(hyp_med > 5.02, f"NumPy: hypot steps are lengthened by the scatter ({hyp_med:.4f} m)")
ok(abs(along_med - 5.0) < 0.025, f"NumPy: along-line steps within 0.5 % of 5 m ({along_med:.4f})")
ok(g.get("receiver_interval_m") == 5.0,
   f"receiver interval 5.000 m, rounded (got {g.get('receiver_interval_m')})")
ok(abs(g.get("receiver_step_median_m", 0) - along_med) < 2e-3,
   f"measured along-line step {g.get('receiver_step_median_m')} m = NumPy {along_med:.4f} m")
ok(g.get("source_interval_m") == 10.0, f"source interval 10 m (got {g.get('source_interval_m')})")

ms = g.get("missing_shots", {})
gaps = ms.get("gaps", [])
ok(ms.get("count") == 2 and len(gaps) == 2, f"two missing shots in two gaps ({ms.get('count')})")
mis = [x for x in gaps if x["in_source_positions"]]
skip = [x for x in gaps if x["in_record_numbers"]]
sp_before = fl.FIRST_SHOT_STATION + fl.STATION_STEP * (fl.MISFIRE_POSITION - 1)
ok(len(mis) == 1 and mis[0]["source_point_before"] == sp_before and
   mis[0]["source_point_after"] == sp_before + 2 * fl.STATION_STEP and mis[0]["in_source_points"]
   and not mis[0]["in_record_numbers"] and mis[0]["missing"] == 1,
   "the misfire: a source position and a source point missing, record numbers run on", str(mis))
if mis:
    sx, sy = mis[0]["source_x_before_m"], mis[0]["source_y_before_m"]
    ffid_b = mis[0]["record_before"]
    ok(abs(sx - pos[(ffid_b, 1)][0]) < 1e-6 and abs(sy - pos[(ffid_b, 1)][1]) < 1e-6,
       "the misfire gap is placed at the source of the record before it")
ok(len(skip) == 1 and skip[0]["record_before"] == fl.SKIPPED_RECORD - 1 and
   skip[0]["record_after"] == fl.SKIPPED_RECORD + 1 and not skip[0]["in_source_positions"],
   "the unused record number: a gap in record numbers only", str(skip))

# Offsets per shot against NumPy (hypot of the stored positions).
shots = {s["field_record"]: s for s in g.get("shots", [])}
worst = 0.0
for ffid, _ in recs:
    o = [math.hypot(pos[(ffid, c)][2] - pos[(ffid, c)][0], pos[(ffid, c)][3] - pos[(ffid, c)][1])
         for c in range(1, 2 * fl.HALF + 1) if (ffid, c) != fl.DEAD]
    s = shots.get(ffid, {})
    worst = max(worst, abs(s.get("offset_min_m", -1) - min(o)), abs(s.get("offset_max_m", -1) - max(o)))
ok(worst < 1e-6, f"offset range of every record = NumPy (worst {worst:.2e} m)")
done()
