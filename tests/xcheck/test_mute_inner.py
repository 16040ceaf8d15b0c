"""test_mute_inner -- the inner (cone) mute on a line made by the independent NumPy
generator landline.py: a linear event at 400 m/s (ground roll, a 15 Hz Ricker 1953
wavelet) and a reflection hyperbola t^2 = t0^2 + x^2/v^2 (Yilmaz 2001, hyperbolic
moveout), each written alone. The traces go through `tzero nmo` at 100 km/s (NMO
then moves no sample by more than a tenth of a millisecond at these times) with the
stretch mute off, without and with a cone around the linear event: 60 ms on either
side of t = |x| / 400 m/s, from controls at two CMPs.

Checks (the criteria of the mutes work; the energy measure is common practice):
- the cone removes the linear event by at least 30 dB (energy after / before);
- it keeps at least 98 % of the hyperbola's energy that lies outside the cone;
- tzero's muted gathers equal the unmuted ones times the cone's weight computed in
  NumPy (zero inside, raised-cosine ramps of the taper outside each edge), to 2 % of
  the largest sample;
- a cone given as controls and the same cone from a CSV file give the same gathers.
"""
import json
import os

import numpy as np
import segyio

import landline
from tzcheck import WORK, done, ok, run

V_LIN, HALF_MS, TAPER_MS = 400.0, 60.0, 5.0
T0, V_HYP = 0.300, 1800.0


def linear(t, x, td, th, delay):
    return landline.ricker(t - abs(x) / V_LIN, 15.0)


def hyperbola(t, x, td, th, delay):
    return landline.ricker(t - np.sqrt(T0 * T0 + x * x / (V_HYP * V_HYP)), 30.0)


XMAX = 240.0
cone = [[0.0, -HALF_MS, HALF_MS], [XMAX, 1000 * XMAX / V_LIN - HALF_MS, 1000 * XMAX / V_LIN + HALF_MS]]
controls = [{"cmp": 60, "polyline": cone}, {"cmp": 180, "polyline": cone}]
_fa = landline.first_arrival_times()
landline.first_arrival_times = lambda: _fa


def make(name, fn):
    d = os.path.join(WORK, name)
    landline.make_line(d, noise=0.0, nasty=False, trace_fn=fn)
    with open(os.path.join(d, "velocity.csv"), "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n1,0,100000\n")
    with open(os.path.join(d, "cone.csv"), "w") as fp:
        fp.write("# the cone at two control CMPs\ncmp,offset_m,time_ms,time_end_ms\n")
        for c in controls:
            for p in c["polyline"]:
                fp.write(f"{c['cmp']},{p[0]:g},{p[1]:g},{p[2]:g}\n")
    return d


def gathers(d, mute, name):
    j = json.load(open(os.path.join(d, "line.json")))
    j["moveout"] = {"stretch_limit_pct": 0, "interpolation": "linear"}
    if mute is not None:
        j["mute"] = dict(mute, taper_ms=TAPER_MS)
    jp = os.path.join(d, name + ".json")
    json.dump(j, open(jp, "w"), indent=1)
    out = os.path.join(d, name + ".sgy")
    r = run("nmo", "--job", jp, "--cmps", "1-241", "--out", out, "--quiet")
    ok(r.returncode == 0, f"tzero nmo: {os.path.basename(d)}, {name}", r.stderr.strip())
    with segyio.open(out, ignore_geometry=True) as f:
        off = np.abs(f.attributes(segyio.TraceField.offset)[:]).astype(float)
        data = segyio.tools.collect(f.trace[:]).astype(np.float64)
    return off, data


res = {}
for part, fn in (("linear", linear), ("hyperbola", hyperbola)):
    d = make(part, fn)
    res[(part, "none")] = gathers(d, None, "none")
    res[(part, "cone")] = gathers(d, {"inner": {"controls": controls}}, "cone")
    res[(part, "file")] = gathers(d, {"inner_file": "cone.csv"}, "file")

off = res[("linear", "none")][0]
t_ms = np.arange(landline.NS) * landline.DT_US / 1000.0
lo = np.interp(off, [p[0] for p in cone], [p[1] for p in cone])[:, None]
hi = np.interp(off, [p[0] for p in cone], [p[2] for p in cone])[:, None]
inside = (t_ms[None, :] >= lo) & (t_ms[None, :] <= hi)

e_lin0 = np.sum(res[("linear", "none")][1] ** 2)
e_lin1 = np.sum(res[("linear", "cone")][1] ** 2)
db = 10 * np.log10(e_lin0 / max(e_lin1, 1e-30))
ok(db >= 30, f"the cone removes the 400 m/s linear event by at least 30 dB ({db:.1f} dB)")
h0, h1 = res[("hyperbola", "none")][1], res[("hyperbola", "cone")][1]
kept = np.sum(h1 ** 2) / np.sum((h0 * ~inside) ** 2)
ok(kept >= 0.98, f"the cone keeps at least 98 % of the hyperbola's energy outside it "
   f"({100 * kept:.2f} %)")


def ramp(r):
    r = np.clip(r, 0.0, 1.0)
    return np.sin(0.5 * np.pi * r) ** 2


w = np.where(inside, 0.0, 1.0)
w = w * np.where(t_ms[None, :] < lo, ramp((lo - t_ms[None, :]) / TAPER_MS), 1.0)
w = w * np.where(t_ms[None, :] > hi, ramp((t_ms[None, :] - hi) / TAPER_MS), 1.0)
for part in ("linear", "hyperbola"):
    a0, a1 = res[(part, "none")][1], res[(part, "cone")][1]
    err = np.abs(a0 * w - a1).max() / np.abs(a0).max()
    ok(err < 0.02, f"{part}: tzero's cone equals the NumPy cone weight (largest difference "
       f"{100 * err:.2f} % of the largest sample)")
    ok(np.array_equal(res[(part, "cone")][1], res[(part, "file")][1]),
       f"{part}: the cone from a CSV file gives the same gathers as the controls")
done()
