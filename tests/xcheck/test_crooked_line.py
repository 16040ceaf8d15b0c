"""test_crooked_line -- an automatic crooked processing line on a bent field line.

fieldline.py (segyio) writes the field-style line bent by 40 degrees between 150 m
and 400 m along it. Independent reference: SciPy's smoothing spline
(scipy.interpolate.UnivariateSpline, FITPACK's curfit) through the midpoints in a
frame turned to the line's mean direction, with the smoothing factor set to the
midpoints' count times the variance they have about the curve (the FITPACK rule
s = m sigma^2). Checked: the job's "bins": {"crooked": {"smoothing_m": 100}} line
lies near the spline (within 1.5 m at every node), its RMS midpoint distance is
close to the spline's, far below a straight line's; the CMP numbers follow the
distance along the curve (NumPy arc length of the spline, CMP = first +
round(s / size), tzero-geometry(1)).
"""
import json
import os
import sys

import numpy as np
from scipy.interpolate import UnivariateSpline

sys.path.insert(0, os.path.dirname(__file__))
import fieldline as fl  # noqa: E402
from tzcheck import WORK, done, ok, run  # noqa: E402

BEND = 40.0
d = os.path.join(WORK, "bent")
paths = fl.write_shots(d, bend=BEND)
pos = fl.positions(bend=BEND)
mids = np.array([((v[0] + v[2]) / 2, (v[1] + v[3]) / 2) for k, v in sorted(pos.items())
                 if k != fl.DEAD])

p = run("geometry", "--json", "--crooked-smoothing", 100, *paths)
ok(p.returncode == 0, "geometry --crooked-smoothing 100", p.stderr)
g = json.loads(p.stdout) if p.returncode == 0 else {"line": {}}
line = g["line"]
nodes = np.array(line.get("nodes", [[0, 0], [1, 1]]))
ok(line.get("kind") == "crooked" and len(nodes) >= 8, f"a crooked line of {len(nodes)} nodes")

# SciPy reference in a frame along the mean azimuth (55 degrees): u along, w across.
az = np.radians(fl.AZ_DEG + BEND / 2)
ua, wa = np.array([np.sin(az), np.cos(az)]), np.array([np.cos(az), -np.sin(az)])
o = mids.mean(axis=0)
u, w = (mids - o) @ ua, (mids - o) @ wa
order = np.argsort(u, kind="stable")
u, w = u[order], w[order]
uu, idx = np.unique(u, return_index=True)            # strictly increasing abscissae
ww = np.array([w[(u == x)].mean() for x in uu])
cnt = np.array([(u == x).sum() for x in uu])
spl0 = UnivariateSpline(uu, ww, w=np.sqrt(cnt), s=len(uu) * 25.0)
sig2 = np.average((ww - spl0(uu)) ** 2, weights=cnt)
spl = UnivariateSpline(uu, ww, w=np.sqrt(cnt), s=len(uu) * sig2 * 1.0)
res = w - spl(u)
rms_spline = float(np.sqrt(np.mean(res ** 2)))
nu, nw = (nodes - o) @ ua, (nodes - o) @ wa
# within one smoothing length of either end both curves see one-sided data: compared inside
inside = (nu > uu[0] + 100) & (nu < uu[-1] - 100)
dev = float(np.max(np.abs(nw[inside] - spl(nu[inside]))))
ok(inside.sum() >= 10 and dev < 1.5,
   f"{inside.sum()} inner nodes within 1.5 m of SciPy's smoothing spline (largest {dev:.2f} m)")
rms = line.get("fit_rms_off_line_m", 99.0)
ok(rms < 1.25 * rms_spline + 0.1,
   f"RMS midpoint distance {rms:.3f} m close to the spline's {rms_spline:.3f} m")
p2 = run("geometry", "--json", *paths)
straight = json.loads(p2.stdout)["line"]["fit_rms_off_line_m"] if p2.returncode == 0 else 0
ok(straight > 5 * rms, f"a straight fit is far worse ({straight:.2f} m RMS)")

# CMP numbers against the spline's arc length (NumPy): fold per CMP.
grid = np.linspace(uu[0], uu[-1], 20001)
arc = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(grid), np.diff(spl(grid))))])
size = line.get("bin_size_m", 2.5)
s_mid = np.interp(u, grid, arc)
first_node_s = np.interp(nu[0], grid, arc) if uu[0] <= nu[0] <= uu[-1] else 0.0
cmp_np = 1 + np.floor((s_mid - s_mid.min()) / size + 0.5).astype(int)
fold_np = np.bincount(cmp_np)[1:]
fold_tz = np.array([c["fold"] for c in g.get("cmps", [])])
ok(abs(len(fold_tz) - len(fold_np)) <= 2,
   f"CMP count along the curve {len(fold_tz)} = NumPy {len(fold_np)} (within 2)")
# at the bend the fold of single bins scatters (midpoints of long offsets fall inside
# the curve) in both: the distributions are compared, not bin by bin
ok(fold_tz.sum() == fold_np.sum() and abs(fold_tz.mean() - fold_np.mean()) < 0.3 and
   abs(int(fold_tz.max()) - int(fold_np.max())) <= 2 and
   np.median(np.abs(np.sort(fold_tz)[-len(fold_np):] - np.sort(fold_np)[-len(fold_tz):])) == 0,
   f"fold max {fold_tz.max()} / mean {fold_tz.mean():.2f} ~ NumPy {fold_np.max()} / {fold_np.mean():.2f}")
done()
