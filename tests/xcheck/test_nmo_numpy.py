"""test_nmo_numpy -- tzero's NMO against an independent NumPy implementation.

Route: `tzero nmo` needs a job file and a whole survey, so this script writes a gather and its offsets as raw float32 files and runs
the library through the tiny driver build/tests/nmo_driver (tests/unit/nmo_driver.c).
The reference below re-implements, in float64 NumPy and from the documents only:
  - velocity sampling of docs/velocity-table.md (np.interp in time, constant outside the knots;
    linear in CMP number between control CMPs);
  - exact hyperbolic pull NMO t = sqrt(t0^2 + x^2/v(t0)^2) (Yilmaz 2001, hyperbolic moveout) with
    linear interpolation (np.interp) and, separately, the 8-point Kaiser(beta 5)
    windowed sinc documented in docs/nmo.md (np.i0, np.sinc);
  - the stretch mute (t - t0)/t0 > limit (Yilmaz 2001, NMO stretch) and the trace-end rule.
Tolerance: 1e-3 of the unit event amplitude (float32 arithmetic in tzero against
float64 here; the sinc8 table quantises the fractional position to 1/2048 sample),
and at most one sample per trace where the live masks differ (edge rounding).
"""
import os
import subprocess

import numpy as np

from tzcheck import WORK, TZERO, ok, done

DRIVER = os.path.join(os.path.dirname(TZERO), "tests", "nmo_driver")

TABLE = """# Wendlebury Flats line 3 (invented)
cmp,time_ms,velocity_mps
100,0,1550
100,400,1800
100,900,2300
100,1400,2600
300,0,1500
300,500,2000
300,1200,2800
"""
CMP, TF, DT, NS, LIMIT = 160, 0.05, 0.002, 700, 45.0


def velocity_numpy(t):
    """docs/velocity-table.md rules, written independently: CMP 160 is 0.3 of the way 100 -> 300."""
    k100 = (np.array([0, 400, 900, 1400]) / 1e3, np.array([1550, 1800, 2300, 2600.0]))
    k300 = (np.array([0, 500, 1200]) / 1e3, np.array([1500, 2000, 2800.0]))
    w = (CMP - 100) / (300 - 100)
    return (1 - w) * np.interp(t, *k100) + w * np.interp(t, *k300)


def ricker(t, fp=25.0):
    a = (np.pi * fp * t) ** 2   # Ricker 1953
    return (1 - 2 * a) * np.exp(-a)


def sinc8_weights(frac):
    """Kaiser(beta 5) windowed sinc, taps at floor(u)-3 .. floor(u)+4, unit sum."""
    d = frac[:, None] + 3 - np.arange(8)[None, :]
    w = np.sinc(d) * np.i0(5.0 * np.sqrt(np.clip(1 - (d / 4) ** 2, 0, None))) / np.i0(5.0)
    return w / w.sum(axis=1, keepdims=True)


def nmo_numpy(gather, offsets, interp):
    t0 = TF + DT * np.arange(NS)
    v = velocity_numpy(t0)
    out = np.zeros_like(gather, dtype=np.float64)
    live = np.zeros(gather.shape, dtype=bool)
    for j, x in enumerate(offsets):
        t = np.sqrt(t0 ** 2 + x ** 2 / v ** 2)
        u = (t - TF) / DT
        keep = (t0 >= 0) & (u <= NS - 1) & ~((t - t0) > LIMIT / 100 * t0)
        tr = gather[j].astype(np.float64)
        if interp == "linear":
            val = np.interp(u, np.arange(NS), tr)
        else:
            k = np.floor(u).astype(int)
            idx = np.clip(k[:, None] - 3 + np.arange(8)[None, :], -1, NS)
            padded = np.concatenate([[0.0], tr, [0.0]])
            val = (sinc8_weights(u - k) * padded[idx + 1]).sum(axis=1)
        out[j] = np.where(keep, val, 0.0)
        live[j] = keep
    return out, live


rng = np.random.default_rng(20261201)
offsets = np.concatenate([np.arange(-1150, 0, 100), np.arange(50, 1200, 100)]).astype(np.float32)
tt = TF + DT * np.arange(NS)
gather = np.zeros((len(offsets), NS))
for t0e in (0.3, 0.6, 1.0):
    ve = velocity_numpy(np.array([t0e]))[0]
    for j, x in enumerate(offsets):
        gather[j] += ricker(tt - np.sqrt(t0e ** 2 + float(x) ** 2 / ve ** 2))
gather += 0.05 * rng.standard_normal(gather.shape)
gather = gather.astype(np.float32)

table = os.path.join(WORK, "v.csv")
with open(table, "w") as f:
    f.write(TABLE)
fin, foff = os.path.join(WORK, "in.f32"), os.path.join(WORK, "off.f32")
gather.tofile(fin)
offsets.tofile(foff)

for interp in ("linear", "sinc8"):
    fout, fw = os.path.join(WORK, f"out_{interp}.f32"), os.path.join(WORK, f"w_{interp}.f32")
    p = subprocess.run([DRIVER, table, *map(str, [CMP, TF, DT, NS, interp, LIMIT, 0, fin, foff, fout, fw])],
                       capture_output=True, text=True)
    if not ok(p.returncode == 0, f"nmo_driver runs ({interp})", p.stderr.strip()):
        continue
    got = np.fromfile(fout, dtype=np.float32).reshape(gather.shape)
    wts = np.fromfile(fw, dtype=np.float32).reshape(gather.shape)
    ref, live = nmo_numpy(gather, offsets, interp)
    tz_live = wts > 0
    mism = (tz_live != live).sum(axis=1)
    ok(mism.max() <= 1, f"{interp}: live masks agree with the NumPy stretch/end rules "
       f"(worst trace differs in {mism.max()} samples)")
    both = tz_live & live
    diff = np.abs(got - ref)[both].max()
    ok(diff < 1e-3, f"{interp}: tzero and NumPy exact NMO agree within 1e-3 "
       f"(max difference {diff:.2e} over {both.sum()} samples)")
    ok(np.all(got[~tz_live] == 0), f"{interp}: muted samples are zero")
    ok(both.sum() > 0.5 * gather.size, f"{interp}: most of the gather is live "
       f"({both.sum()} of {gather.size})")
    # Flatness: after correction the three events line up across offsets.
    for t0e in (0.6, 1.0):
        i = int(round((t0e - TF) / DT))
        col = got[:, i][tz_live[:, i]]
        ok(col.size >= 8 and np.all(col > 0.8),
           f"{interp}: event at {t0e} s is flat (peak amplitude > 0.8 on {col.size} live traces)")
done()
