"""test_semblance_window -- the default semblance window follows the data's dominant period.

The line is written here with NumPy and segyio, independently of tzero: a 48-
channel split spread at 10 m receivers rolled along at 20 m shots over three
flat reflectors on exact hyperbolas t = sqrt(t0^2 + x^2 / v^2) with a 50 Hz
Ricker wavelet (Ricker 1953), 1 ms sampling, weak Gaussian noise.

Checks (each names its source):
  - the window semblance chose by default is 1.5 periods of the supergather's
    dominant frequency: the amplitude spectrum of a Ricker wavelet of peak
    frequency fp, (2/sqrt(pi)) f^2/fp^3 exp(-f^2/fp^2), is largest at f = fp
    (Ricker 1953), so 1.5 / 50 Hz = 30 ms (within 10 %: the spectrum is sampled
    on the FFT's frequency grid and moveout stretch lowers it a little);
  - with that default the picks lie within 1 ms of the true zero-offset times
    t0 of the NumPy model, and within 2 % of its velocities (the stacking
    velocity of a flat layer over a constant-velocity overburden is its
    velocity: the hyperbola is exact, Dix 1955);
  - an explicit --window is still taken as given (the summary reports it).
"""
import json
import os
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

NS, DT_US = 800, 1000               # 0.8 s at 1 ms
CHANNELS, DG, DS, SHOTS = 48, 10.0, 20.0, 30
X0 = 1000.0
FP = 50.0
EVENTS = [(0.200, 1600.0), (0.350, 1900.0), (0.550, 2300.0)]
BIN, ORIGIN = DG / 2, DG / 4


def ricker(t, f=FP):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def offset(c):
    return (c - (CHANNELS - 1) / 2) * DG


def make_line(d):
    rng = np.random.default_rng(5)
    t = np.arange(NS) * DT_US * 1e-6
    os.makedirs(os.path.join(d, "shots"), exist_ok=True)
    F = segyio.TraceField
    for s in range(SHOTS):
        sx = X0 + s * DS
        spec = segyio.spec()
        spec.samples = list(range(NS))
        spec.format = 5
        spec.tracecount = CHANNELS
        with segyio.create(os.path.join(d, "shots", f"r{s + 1:03d}.sgy"), spec) as f:
            f.bin.update(hdt=DT_US, hns=NS, format=5, mfeet=1)
            for c in range(CHANNELS):
                x = offset(c)
                tr = sum(ricker(t - np.sqrt(t0 * t0 + x * x / (v * v))) for t0, v in EVENTS)
                tr = tr + rng.normal(0.0, 0.02, NS)
                f.header[c] = {
                    F.TRACE_SEQUENCE_LINE: s * CHANNELS + c + 1, F.TRACE_SEQUENCE_FILE: c + 1,
                    F.FieldRecord: s + 1, F.TraceNumber: c + 1, F.TraceIdentificationCode: 1,
                    F.offset: int(round(x)), F.SourceGroupScalar: -10,
                    F.SourceX: int(round(sx * 10)), F.SourceY: 50000,
                    F.GroupX: int(round((sx + x) * 10)), F.GroupY: 50000,
                    F.CoordinateUnits: 1, F.TRACE_SAMPLE_COUNT: NS, F.TRACE_SAMPLE_INTERVAL: DT_US,
                }
                f.trace[c] = tr.astype(np.float32)
    job = {"name": "Tarrowvane 50 Hz line", "shots": ["shots/*.sgy"],
           "bins": {"size_m": BIN, "origin_x_m": ORIGIN, "origin_y_m": 5000, "azimuth_deg": 90,
                    "first_cmp": 0},
           "moveout": {"stretch_limit_pct": 50},
           "output": {"section": "stack.sgy", "report": "qc.json"}}
    with open(os.path.join(d, "line.json"), "w") as f:
        json.dump(job, f)


def fold_by_cmp():
    n = {}
    for s in range(SHOTS):
        for c in range(CHANNELS):
            k = int(np.floor((X0 + s * DS + offset(c) / 2 - ORIGIN) / BIN + 0.5))
            n[k] = n.get(k, 0) + 1
    return n


D = os.path.join(tz.WORK, "hz50")
make_line(D)
J = os.path.join(D, "line.json")
fold = fold_by_cmp()
mid = (min(fold) + max(fold)) // 2
full = max(fold.values())
cmps = [k for k in (mid - 20, mid, mid + 20) if fold.get(k, 0) >= full // 2]
tz.ok(len(cmps) == 3, f"CMPs {cmps} have at least half the full fold {full} (NumPy count)")

p = tz.run("semblance", "--job", J, "--cmps", ",".join(map(str, cmps)), "--supergather", 1,
           "--velocity-min", 1200, "--velocity-max", 3000, "--velocity-step", 10, "--json",
           check=False)
res = json.loads(p.stdout) if p.returncode == 0 else {"cmps": []}
for r in res["cmps"]:
    w = r.get("window_ms")
    tz.ok(w is not None and abs(w - 1.5e3 / FP) <= 0.1 * 1.5e3 / FP,
          f"CMP {r['cmp']}: default window {w} ms is 1.5 periods of {FP:g} Hz (30 ms, Ricker 1953)",
          json.dumps(r)[:300])
    picks = r["picks"]
    for t0, v in EVENTS:
        near = [x for x in picks if abs(x["time_ms"] - t0 * 1e3) <= 15]
        dt = abs(near[0]["time_ms"] - t0 * 1e3) if len(near) == 1 else 99
        dv = abs(near[0]["velocity_mps"] / v - 1) if len(near) == 1 else 1
        print(f"# CMP {r['cmp']} t0 {t0 * 1e3:.0f} ms: {json.dumps(near)}")
        tz.ok(dt <= 1.0, f"CMP {r['cmp']}: pick within 1 ms of t0 = {t0 * 1e3:.0f} ms ({dt:.2f} ms)",
              json.dumps(picks))
        tz.ok(dv <= 0.02, f"CMP {r['cmp']}: pick within 2 % of {v:.0f} m/s ({100 * dv:.2f} %)")
tz.ok(len(res["cmps"]) == 3, "three CMPs analysed", p.stderr)

p = tz.run("semblance", "--job", J, "--cmps", cmps[1], "--window", 40, "--velocity-min", 1200,
           "--velocity-max", 3000, "--json", check=False)
r = json.loads(p.stdout)["cmps"][0] if p.returncode == 0 else {}
tz.ok(r.get("window_ms") == 40 and json.loads(p.stdout)["parameters"]["window"] == "given",
      "--window 40 is taken as given", p.stdout[:300])
tz.done()
