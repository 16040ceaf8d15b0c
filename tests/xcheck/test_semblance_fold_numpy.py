"""test_semblance_fold_numpy -- semblance knows when it cannot pick: --min-fold and --supergather.

The line is written here with NumPy and segyio, independently of tzero: a 48-
channel split spread at 25 m receivers rolled along at 50 m shots over two
flat reflectors on exact hyperbolas t = sqrt(t0^2 + x^2 / v^2) with a 25 Hz
Ricker wavelet (Ricker 1953), plus Gaussian random noise as strong as the signal (its RMS equals the RMS
of the noise-free records).
Which CMPs have which fold is counted here by brute force over (shot, channel).

Checks (each names its source):
  - at a line-end CMP of fold 2 no pick is made, and stderr says why (too few
    live traces, the count) and suggests --supergather: two noisy traces give
    semblance near 1 for almost any moveout (semblance of N incoherent traces
    is about 1/N, Neidell & Taner 1971), so a pick there is noise;
  - the table written with that CMP and a full-fold one lists the fold-2 CMP in
    its comment, and the stack's QC report counts it among its velocity warnings
    (kind low_fold), which max_velocity_warnings then catches;
  - the same CMP with --supergather 6 picks both events within 2 % of the
    velocities the line was made with.
"""
import json
import os
import re
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

NS, DT_US = 300, 4000               # 1.2 s at 4 ms
CHANNELS, DG, DS, SHOTS = 48, 25.0, 50.0, 30
X0 = 1000.0
EVENTS = [(0.400, 1800.0), (0.800, 2300.0)]
BIN, ORIGIN = DG / 2, DG / 4


def ricker(t, f=25.0):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def offset(c):
    return (c - (CHANNELS - 1) / 2) * DG


def clean(t, x):
    return sum(ricker(t - np.sqrt(t0 * t0 + x * x / (v * v))) for t0, v in EVENTS)


def make_line(d):
    rng = np.random.default_rng(21)
    t = np.arange(NS) * DT_US * 1e-6
    # noise as strong as the signal: its RMS equals the RMS of the noise-free
    # records (all channels of a record, NumPy)
    noise = float(np.sqrt(np.mean([clean(t, offset(c)) ** 2 for c in range(CHANNELS)])))
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
                tr = clean(t, x) + rng.normal(0.0, noise, NS)
                f.header[c] = {
                    F.TRACE_SEQUENCE_LINE: s * CHANNELS + c + 1, F.TRACE_SEQUENCE_FILE: c + 1,
                    F.FieldRecord: s + 1, F.TraceNumber: c + 1, F.TraceIdentificationCode: 1,
                    F.offset: int(round(x)), F.SourceGroupScalar: -10,
                    F.SourceX: int(round(sx * 10)), F.SourceY: 50000,
                    F.GroupX: int(round((sx + x) * 10)), F.GroupY: 50000,
                    F.CoordinateUnits: 1, F.TRACE_SAMPLE_COUNT: NS, F.TRACE_SAMPLE_INTERVAL: DT_US,
                }
                f.trace[c] = tr.astype(np.float32)
    job = {"name": "Tarrowvane noisy line", "shots": ["shots/*.sgy"],
           "bins": {"size_m": BIN, "origin_x_m": ORIGIN, "origin_y_m": 5000, "azimuth_deg": 90,
                    "first_cmp": 0},
           "velocity": "picked.csv",
           "limits": {"max_velocity_warnings": 0},
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


D = os.path.join(tz.WORK, "noisy")
make_line(D)
J = os.path.join(D, "line.json")
fold = fold_by_cmp()
first = min(fold)
end2 = min(k for k in fold if fold[k] == 2)          # a line-end CMP of fold 2
inner = max(fold, key=lambda k: (fold[k], -abs(k - (min(fold) + max(fold)) / 2)))
tz.ok(fold[end2] == 2 and end2 - first < 10, f"CMP {end2} at the line end has fold 2 (NumPy count)")

p = tz.run("semblance", "--job", J, "--cmps", end2, "--velocity-max", 4000, check=False)
tz.ok(p.returncode == 0 and re.search(rf"no pick for lack of fold at CMP {end2} \(2 live\)", p.stderr)
      is not None and "--supergather" in p.stderr,
      "fold 2: no pick, stderr names the CMP, its live traces and suggests --supergather", p.stderr)
tz.ok(re.search(rf"CMP {end2} .*: 0 picks", p.stdout) is not None, "fold 2: zero picks", p.stdout)

out = os.path.join(D, "picked.csv")
p = tz.run("semblance", "--job", J, "--cmps", f"{end2},{inner}", "--velocity-max", 4000, "--out",
           out, "--quiet", check=False)
text = open(out).read() if os.path.exists(out) else ""
tz.ok(p.returncode == 0 and re.search(rf"^# no pick for lack of fold .*: CMP {end2}$", text, re.M),
      "the table's comment lists the fold-2 CMP", text[:200])
p = tz.run("stack", "--job", J, "--quiet", "--check", check=False)
rep = json.load(open(os.path.join(D, "qc.json"))) if os.path.exists(os.path.join(D, "qc.json")) else {}
w = [x for x in rep.get("velocity", {}).get("warnings", []) if x.get("kind") == "low_fold"]
tz.ok(len(w) == 1 and w[0]["cmp"] == end2, "the QC report counts it among the velocity warnings",
      json.dumps(rep.get("velocity", {}).get("warnings"))[:300])
tz.ok(p.returncode == 1 and "max_velocity_warnings" in p.stderr,
      "stack --check: max_velocity_warnings 0 breaks", f"{p.returncode} {p.stderr}")

p = tz.run("semblance", "--job", J, "--cmps", end2, "--supergather", 6, "--velocity-max", 4000,
           "--json", check=False)
picks = json.loads(p.stdout)["cmps"][0]["picks"] if p.returncode == 0 else []
for t0, v in EVENTS:
    near = [x for x in picks if abs(x["time_ms"] - t0 * 1e3) <= 20]
    err = abs(near[0]["velocity_mps"] / v - 1) if len(near) == 1 else 1
    print(f"# pick near {t0 * 1e3:.0f} ms: {json.dumps(near)} (error {100 * err:.2f} %)")
    tz.ok(err <= 0.02,
          f"--supergather 6: pick at {t0 * 1e3:.0f} ms within 2 % of {v:.0f} m/s",
          json.dumps(picks))
tz.done()
