"""test_statics_stack -- stacks made with the statics tzero finds against stacks made
with the true statics, on rough-terrain lines from the independent NumPy generator
(landline.py; segyio reads the sections back).

Checks (the criteria of the land-statics work; correlation as numpy.corrcoef):
- refraction statics (first breaks picked on the raw line, delay-time solution) in
  statics.tables: the stack correlates >= 0.98 with the stack made with the true
  station statics at every CMP of half the nominal fold or more; without statics it
  does not (the check can fail);
- residual statics on a line with exact statics plus source and receiver shifts of
  +-6 ms: the stack with the true statics and the residual table correlates >= 0.98
  with the stack made with the true statics and the true shifts (less their mean and
  linear trend, which no surface-consistent method can see), at every CMP of half
  the nominal fold or more.
Both lines carry a reversed, a dead and a 20x-noisy trace; the jobs kill dead and
noisy traces automatically (edits.auto), as a processor would.
"""
import json
import os

import numpy as np
import segyio

import landline
from tzcheck import WORK, done, ok, run


def job_with(d, name, tables, statics=True):
    job = json.load(open(os.path.join(d, "line.json")))
    if statics:
        job["statics"] = {"datum_m": landline.DATUM, "replacement_velocity_mps": landline.V1,
                          "elevation": False, "tables": tables}
    # the line's 20x-noisy trace is killed, as a processor would (its white noise,
    # shifted by a fraction of a millisecond between two stacks, would decorrelate them)
    job["edits"] = {"auto": {"dead": True, "rms_ratio_max": 3, "window_ms": [300, 690]}}
    job["output"] = {"section": f"out/{name}.sgy", "report": f"out/{name}.json"}
    path = os.path.join(d, f"{name}.json")
    json.dump(job, open(path, "w"), indent=2)
    return path


def stack(job):
    r = run("stack", "--job", job, "--quiet")
    ok(r.returncode == 0, f"tzero stack {os.path.basename(job)}", r.stderr.strip())
    d, name = os.path.dirname(job), os.path.basename(job)[:-5]
    rep = json.load(open(os.path.join(d, "out", name + ".json")))
    with segyio.open(os.path.join(d, "out", name + ".sgy"), ignore_geometry=True) as f:
        data = np.array([f.trace[i] for i in range(f.tracecount)])
    return data, rep


def worst_corr(a, ra, b):
    nominal = ra["fold"]["nominal"]
    worst = 1.0
    for i, c in enumerate(ra["cmps"]):
        if c["fold"] < nominal / 2:
            continue
        x, y = a[i], b[i]
        if np.std(x) == 0 or np.std(y) == 0:
            return -1.0
        worst = min(worst, float(np.corrcoef(x, y)[0, 1]))
    return worst


# --- refraction statics
d = os.path.join(WORK, "refr")
landline.make_line(d)
raw = os.path.join(d, "line.json")
picks = os.path.join(d, "picks.csv")
table = os.path.join(d, "refraction.csv")
ok(run("firstbreaks", "--job", raw, "--out", picks, "--quiet").returncode == 0, "first breaks")
ok(run("statics", "refraction", "--job", raw, "--picks", picks, "--out", table, "--datum-m",
       landline.DATUM, "--replacement-velocity", landline.V1, "--quiet").returncode == 0,
   "refraction statics")
found, rep = stack(job_with(d, "found", ["refraction.csv"]))
true, _ = stack(job_with(d, "true", ["true_statics.csv"]))
none, _ = stack(job_with(d, "none", [], statics=False))
w = worst_corr(found, rep, true)
ok(w >= 0.98, f"stack with refraction statics correlates >= 0.98 with the true-statics stack at "
   f"every CMP of half nominal fold or more (worst {w:.4f})")
w0 = worst_corr(none, rep, true)
ok(w0 < 0.98, f"without statics it does not (worst {w0:.4f})")

# --- residual statics
d = os.path.join(WORK, "resid")
rng = np.random.default_rng(7)
S = {s: float(rng.uniform(-6, 6)) for s in landline.shots()}
R = {r: float(rng.uniform(-6, 6)) for r in range(landline.NREC)}
landline.make_line(d, residual=(S, R))


def detrend(v):
    """The shifts less their mean and linear trend along the line: the part surface-
    consistent statics cannot tell from structure (Wiggins, Larner and Wisecup 1976)."""
    k = np.array(sorted(v))
    y = np.array([v[i] for i in k])
    A = np.vstack([np.ones(len(k)), k]).T
    y = y - A @ np.linalg.lstsq(A, y, rcond=None)[0]
    return dict(zip(k.tolist(), y.tolist()))


Sd, Rd = detrend(S), detrend(R)
with open(os.path.join(d, "true_shifts.csv"), "w") as fp:
    fp.write("kind,station,x_m,y_m,elevation_m,static_ms\n")
    for s, v in Sd.items():
        fp.write(f"source,{s},{s * landline.DG:.2f},{landline.Y0:.2f},"
                 f"{landline.elevation(s * landline.DG):.3f},{-v:.4f}\n")
    for r_, v in Rd.items():
        fp.write(f"receiver,{r_},{r_ * landline.DG:.2f},{landline.Y0:.2f},"
                 f"{landline.elevation(r_ * landline.DG):.3f},{-v:.4f}\n")
base = job_with(d, "base", ["true_statics.csv"])
rr = run("statics", "residual", "--job", base, "--out", os.path.join(d, "residual.csv"),
         "--window-ms", "170,620", "--iterations", 4, "--quiet")
ok(rr.returncode == 0, "residual statics on the line with exact statics", rr.stderr.strip())
found, rep = stack(job_with(d, "rfound", ["true_statics.csv", "residual.csv"]))
true, _ = stack(job_with(d, "rtrue", ["true_statics.csv", "true_shifts.csv"]))
before, _ = stack(job_with(d, "rbefore", ["true_statics.csv"]))
w = worst_corr(found, rep, true)
ok(w >= 0.98, f"final stack correlates >= 0.98 with the true-shift stack at every CMP of half "
   f"nominal fold or more (worst {w:.4f})")
w0 = worst_corr(before, rep, true)
ok(w0 < w, f"and better than before residual statics (worst {w0:.4f} before, {w:.4f} after)")
done()
