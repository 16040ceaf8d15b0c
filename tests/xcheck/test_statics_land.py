"""test_statics_land -- first breaks and statics of a rough-terrain line made by
an independent NumPy generator (landline.py: topography of 25 m, weathering of
3 to 17 m at 700 m/s over 2000 m/s, head waves by Fermat's principle, zero-phase
Ricker wavelets of Ricker 1953, a reversed, a noisy and a dead trace).

Checks (the criteria of the land-statics work, sources as named):
- first-break picks within one sample of the true first arrival (the centre of
  the first-arrival wavelet) on at least 98 % of the live traces;
- picks bitwise identical for 1 and 2 threads (DEVELOPERS.md, threads);
"""
import os
import subprocess
import sys

import numpy as np

import landline
from tzcheck import WORK, done, ok, run

d = os.path.join(WORK, "line")
truth = landline.make_line(d)
job = os.path.join(d, "line.json")

# --- first breaks
p1 = os.path.join(d, "picks1.csv")
r = run("firstbreaks", "--job", job, "--out", p1, "--threads", "1", "--quiet")
ok(r.returncode == 0, "tzero firstbreaks runs on the NumPy line", r.stderr.strip())
picks = np.genfromtxt(p1, delimiter=",", skip_header=1, names=True)
live = [k for k in truth if k != landline.DEAD]
got = {(int(a), int(b)): t for a, b, t in zip(picks["record"], picks["channel"], picks["time_ms"])}
dt_ms = landline.DT_US / 1000.0
good = sum(1 for k in live if k in got and abs(got[k] - 1000.0 * truth[k][0]) <= dt_ms)
ok(good >= 0.98 * len(live), f"picks within one sample of the true first arrival on >= 98 % of "
   f"live traces ({good} of {len(live)})")
ok(landline.DEAD not in got, "the dead trace has no pick")
p2 = os.path.join(d, "picks2.csv")
run("firstbreaks", "--job", job, "--out", p2, "--threads", "2", "--quiet")
ok(open(p1, "rb").read() == open(p2, "rb").read(), "picks bitwise identical for 1 and 2 threads")
st = {(int(a), int(b)): (int(s), int(q)) for a, b, s, q in
      zip(picks["record"], picks["channel"], picks["source_station"], picks["receiver_station"])}
shots = landline.shots()
want = {(k + 1, c + 1): (s, r_) for k, s in enumerate(shots)
        for c, r_ in enumerate(landline.receivers_of(s))}
ok(all(st[k] == want[k] for k in st), "stations numbered along the line by the receiver interval "
   "(station = position / 10 m)")
done()
