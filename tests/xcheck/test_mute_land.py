"""test_mute_land -- top mutes that follow the ground, on a rough-terrain line made by
the independent NumPy generator landline.py (Fermat head waves, Ricker 1953 wavelets),
here with a weathering layer 4 to 30 m thick along the line, so the head wave's
intercept time moves by about 70 ms from one end to the other.

Each component is written alone (the first arrival: the head wave beyond the
crossover distance, the direct wave before it; reflections) so the energy each mute
leaves can be measured: the traces go through `tzero nmo` at 100 km/s (NMO moves no
sample by more than a tenth of a millisecond at the times that matter) with the
stretch mute off, once without a top mute and once with it.

Checks (the criteria of the mutes work; the energy and sample measures are common
practice):
- a top mute from 5 controls (the head-wave time of the model at each control CMP
  plus a 16 ms pad, past the 45 Hz Ricker wavelet's main lobe) leaves at most 3 % of
  the first-arrival energy and removes at most 2 % of the reflection samples (|a|
  above a tenth of the CMP's largest, kept at less than half) at every CMP;
- the same for a top mute 16 ms after the first-break picks of `tzero firstbreaks`,
  and again with elevation statics in the job (the field-time picks then move to the
  processing datum by each trace's static);
- the best single polyline (each control's polyline shifted by -60 to +60 ms, the
  same for the whole line) fails one of the two at some CMP;
- tzero's muted gathers equal the unmuted gathers times the raised-cosine mute weight
  computed in NumPy (to 2 % of the largest sample: NMO at 100 km/s is not exactly the
  identity).
"""
import os

import numpy as np
import segyio

import landline
from tzcheck import WORK, done, ok, run

V0, V1 = landline.V0, landline.V1
LINE = landline.DG * (landline.NREC - 1)       # 1200 m
landline.thickness = lambda x: 17.0 + 13.0 * np.cos(np.pi * np.asarray(x) / LINE)
EVENTS = [(0.100, 2100.0, 1.0), (0.220, 2300.0, -0.8)]
landline.NS = 400                              # 400 ms hold both events at every offset
PAD_MS, TAPER_MS = 16.0, 10.0


def crit_distance(x):
    """Critical distance 2 h tan(theta_c), sin(theta_c) = v0 / v1 (Snell)."""
    h = landline.thickness(x)
    s = V0 / V1
    return 2 * h * s / np.sqrt(1 - s * s)


def first_part(t, x, td, th, delay):
    # the first arrival: the head wave beyond the crossover distance, the direct wave
    # before it (Sheriff and Geldart 1995, refraction chapter)
    return landline.ricker(t - min(td, th), landline.FB_FREQ)


def later_part(t, x, td, th, delay):
    # the later of the two at 0.3 (landline's rule): not a first arrival; beyond the
    # crossover it is the direct wave, a linear event a top mute is not for
    return 0.3 * landline.ricker(t - max(td, th), landline.FB_FREQ)


def refl_part(t, x, td, th, delay):
    tr = np.zeros_like(t)
    for t0, v, a in EVENTS:
        tr += a * landline.ricker(t - delay - np.sqrt(t0 * t0 + x * x / (v * v)))
    return tr


def everything(t, x, td, th, delay):
    return first_part(t, x, td, th, delay) + later_part(t, x, td, th, delay) + \
        refl_part(t, x, td, th, delay)


def make(name, fn, noise):
    d = os.path.join(WORK, name)
    landline.make_line(d, noise=noise, nasty=False, trace_fn=fn)
    with open(os.path.join(d, "velocity.csv"), "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n1,0,100000\n")
    return d


_fa = landline.first_arrival_times()     # the same kinematics for the three lines
landline.first_arrival_times = lambda: _fa
dirs = {"all": make("all", everything, 0.01), "head": make("head", first_part, 0.0),
        "refl": make("refl", refl_part, 0.0)}

# --- the 5 controls: head-wave time of the model at the control CMP plus the pad
ref = landline.Refractor()
NCMP = int(round(LINE / (landline.DG / 2))) + 1    # CMPs 1..241, bins of 5 m from x = 0
ctl_cmps = [1 + int(round(k * (NCMP - 1) / 4)) for k in range(5)]
offs = np.arange(0.0, 250.0, 10.0)


def head_polyline(cmp):
    m = (cmp - 1) * landline.DG / 2
    return [[float(x), round(1000 * ref.head_time(m - x / 2, m + x / 2) + PAD_MS, 2)] for x in offs]


controls = [{"cmp": c, "polyline": head_polyline(c)} for c in ctl_cmps]


def job_with(d, mute, name, statics=False):
    import json
    j = json.load(open(os.path.join(d, "line.json")))
    j["moveout"] = {"stretch_limit_pct": 0, "interpolation": "linear"}
    j.pop("statics", None)
    if statics:   # elevation statics to the model's datum: times move by -(E - D) / v_r
        j["statics"] = {"datum_m": landline.DATUM, "replacement_velocity_mps": V1,
                        "elevation": True}
    if mute is not None:
        j["mute"] = dict(mute, taper_ms=TAPER_MS)
    p = os.path.join(d, name + ".json")
    json.dump(j, open(p, "w"), indent=1)
    return p


picks = os.path.join(dirs["all"], "picks.csv")
r = run("firstbreaks", "--job", os.path.join(dirs["all"], "line.json"), "--out", picks, "--quiet")
ok(r.returncode == 0, "tzero firstbreaks picks the NumPy line", r.stderr.strip())

mutes = {"none": None, "controls": {"top": {"controls": controls}},
         "picks": {"top": {"after_first_break_ms": PAD_MS, "picks": picks}}}


def gathers(part, mute, statics=False):
    d = dirs[part]
    tag = mute + ("_datum" if statics else "")
    out = os.path.join(d, f"g_{tag}.sgy")
    r = run("nmo", "--job", job_with(d, mutes[mute], "job_" + tag, statics), "--cmps", f"1-{NCMP}",
            "--out", out, "--quiet")
    ok(r.returncode == 0, f"tzero nmo: {part} with top mute '{mute}'", r.stderr.strip())
    with segyio.open(out, ignore_geometry=True) as f:
        cmp = f.attributes(segyio.TraceField.CDP)[:]
        off = f.attributes(segyio.TraceField.offset)[:]
        data = segyio.tools.collect(f.trace[:]).astype(np.float64)
    return cmp, np.abs(off).astype(float), data


G = {(p, m): gathers(p, m) for p in ("head", "refl") for m in mutes}
# with elevation statics the picks (field times, as tzero firstbreaks wrote them from a
# job without statics) are moved to the processing datum by each trace's static
GD = {(p, m): gathers(p, m, True) for p in ("head", "refl") for m in ("none", "picks")}
cmp, off, _ = G[("head", "none")]
ok(all(np.array_equal(G[(p, m)][0], cmp) for p in ("head", "refl") for m in mutes),
   "every run writes the same traces in the same order")
t_ms = np.arange(landline.NS) * landline.DT_US / 1000.0
cmps = np.unique(cmp)


ci = np.searchsorted(cmps, cmp)


def measure(h0, r0):
    """per_cmp(head_m, refl_m) against the unmuted gathers h0 (first arrivals), r0."""
    e0 = np.bincount(ci, np.sum(h0 ** 2, axis=1), len(cmps))
    a0 = np.abs(r0)
    big = np.zeros(len(cmps))
    np.maximum.at(big, ci, a0.max(axis=1))
    refl_mask = a0 > 0.1 * big[ci][:, None]
    n_mask = np.bincount(ci, refl_mask.sum(axis=1), len(cmps))

    def per_cmp(head_m, refl_m):
        """Largest first-arrival energy left and reflection-sample fraction removed."""
        fh = np.bincount(ci, np.sum(head_m ** 2, axis=1), len(cmps)) / np.maximum(e0, 1e-30)
        # a CMP whose first arrival the static moved off the trace (before its first
        # sample, at the line's end) has next to no first-arrival energy: not judged
        fh[e0 < 1e-4 * np.median(e0)] = 0.0
        gone = refl_mask & (np.abs(refl_m) < 0.5 * a0)
        fr = np.bincount(ci, gone.sum(axis=1), len(cmps)) / np.maximum(n_mask, 1)
        return fh.max(), fr.max(), (cmps[np.argmax(fh)], cmps[np.argmax(fr)])
    return per_cmp


h0, r0 = G[("head", "none")][2], G[("refl", "none")][2]
per_cmp = measure(h0, r0)
per_cmp_datum = measure(GD[("head", "none")][2], GD[("refl", "none")][2])
for m, f, g, what in (("controls", per_cmp, G, ""), ("picks", per_cmp, G, ""),
                      ("picks", per_cmp_datum, GD, " with statics (picks moved to the datum)")):
    wh, wr, (ch, cr) = f(g[("head", m)][2], g[("refl", m)][2])
    ok(wh <= 0.03, f"top mute from {m}{what}: at most 3 % of the first-arrival energy left at "
       f"every CMP (worst {100 * wh:.2f} % at CMP {ch})")
    ok(wr <= 0.02, f"top mute from {m}{what}: at most 2 % of the reflection samples removed at "
       f"every CMP (worst {100 * wr:.2f} % at CMP {cr})")


# --- the same mute in NumPy: the weight of a top mute at tm with a raised-cosine
# taper (0 before tm, sin^2(pi/2 (t - tm) / taper) over the taper, then 1)
def weight(tm):
    r = np.clip((t_ms[None, :] - tm[:, None]) / TAPER_MS, 0.0, 1.0)
    return np.sin(0.5 * np.pi * r) ** 2


def interp_controls(ctl, c, x):
    cc = np.array([k["cmp"] for k in ctl], float)
    tt = np.array([np.interp(x, [p[0] for p in k["polyline"]], [p[1] for p in k["polyline"]])
                   for k in ctl])
    return np.array([np.interp(ci, cc, tt[:, i]) for i, ci in enumerate(c)])


tm_ctl = interp_controls(controls, cmp.astype(float), off)
emu = h0 * weight(tm_ctl)
scale = np.abs(h0).max()
err = np.abs(emu - G[("head", "controls")][2]).max() / scale
ok(err < 0.02, f"tzero's controlled top mute equals the NumPy mute weight (largest difference "
   f"{100 * err:.2f} % of the largest sample)")

best = None
for k in controls:
    px = [p[0] for p in k["polyline"]]
    pt = [p[1] for p in k["polyline"]]
    for s in np.arange(-60.0, 61.0, 3.0):
        w = weight(np.interp(off, px, np.array(pt) + s))
        wh, wr, _ = per_cmp(h0 * w, r0 * w)
        score = max(wh / 0.03, wr / 0.02)
        if best is None or score < best[0]:
            best = (score, wh, wr, k["cmp"], s)
score, wh, wr, bc, bs = best
ok(wh > 0.03 or wr > 0.02, f"the best single polyline (CMP {bc}'s shifted {bs:+.0f} ms) fails: "
   f"{100 * wh:.2f} % of the first-arrival energy left, {100 * wr:.2f} % of the reflection samples "
   f"removed at the worst CMPs")
done()
