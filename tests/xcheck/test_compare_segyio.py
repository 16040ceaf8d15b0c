"""test_compare_segyio -- `tzero compare` on sections written by segyio.

References: the sections are written by segyio (Debian python3-segyio), an
independent SEG-Y implementation; the expected per-CMP measures are computed
with NumPy (np.correlate for the cross-correlation, sums of squares for the
energies) from the definitions in compare.h.
"""
import json
import os

import numpy as np
import segyio

from tzcheck import WORK, done, ok, run

NS, DT_US = 400, 2000


def ricker(t, t0, f=28.0):
    # Ricker (1953)
    u = np.pi * f * (t - t0)
    return (1 - 2 * u**2) * np.exp(-u**2)


def write(path, cmps, traces):
    spec = segyio.spec()
    spec.format = 5
    spec.samples = list(range(NS))
    spec.tracecount = len(cmps)
    with segyio.create(path, spec) as f:
        f.bin.update({segyio.BinField.Interval: DT_US, segyio.BinField.Samples: NS,
                      segyio.BinField.Format: 5, segyio.BinField.SortingCode: 4})
        for i, (c, tr) in enumerate(zip(cmps, traces)):
            f.header[i] = {segyio.TraceField.CDP: int(c), segyio.TraceField.TRACE_SAMPLE_COUNT: NS,
                           segyio.TraceField.TRACE_SAMPLE_INTERVAL: DT_US,
                           segyio.TraceField.TraceIdentificationCode: 1}
            f.trace[i] = tr.astype(np.float32)


t = np.arange(NS) * DT_US * 1e-6
rng = np.random.default_rng(7)
cmps_a = np.arange(300, 340)
tr_a = [ricker(t, 0.3) + 0.6 * ricker(t, 0.55) + 0.05 * rng.normal(size=NS) for _ in cmps_a]
# B: CMPs 310-349, stronger by 1.5x on 310-319, weaker (0.5x) on 320-329, the same
# with a 4 ms delay on 330-339, in reverse file order (matching is by CMP number).
cmps_b, tr_b = [], []
for c in range(310, 350):
    if c < 340:
        base = tr_a[c - 300]
    else:
        base = ricker(t, 0.3)
    if c < 320:
        x = 1.5 * base
    elif c < 330:
        x = 0.5 * base
    elif c < 340:
        x = np.concatenate([np.zeros(2), base[:-2]])
    else:
        x = base
    cmps_b.append(c)
    tr_b.append(x)
pa, pb = os.path.join(WORK, "a.sgy"), os.path.join(WORK, "b.sgy")
write(pa, cmps_a, tr_a)
write(pb, cmps_b[::-1], tr_b[::-1])

p = run("compare", "--json", "--max-lag", "20", pa, pb)
ok(p.returncode == 0, "compare runs on segyio-written sections", p.stderr.strip())
r = json.loads(p.stdout) if p.returncode == 0 else {"cmps": []}
ok(r.get("cmps_compared") == 30 and r.get("cmps_only_a") == 10 and r.get("cmps_only_b") == 10,
   "CMPs matched by number: 30 common, 10 only in each")

A = {int(c): np.asarray(x, np.float32).astype(float) for c, x in zip(cmps_a, tr_a)}
B = {int(c): np.asarray(x, np.float32).astype(float) for c, x in zip(cmps_b, tr_b)}
bad = []
for c in r["cmps"]:
    a, b = A[c["cmp"]], B[c["cmp"]]
    ea, eb = np.sum(a * a), np.sum(b * b)
    xc = np.correlate(b, a, mode="full") / np.sqrt(ea * eb)   # index NS-1 is lag 0
    lags = np.arange(-NS + 1, NS)
    sel = np.abs(lags) <= 10
    k = np.argmax(xc[sel])
    want = {"rms_a": np.sqrt(ea / NS), "rms_b": np.sqrt(eb / NS),
            "rms_difference": np.sqrt(np.mean((b - a) ** 2)),
            "energy_ratio_db": 10 * np.log10(eb / ea),
            "peak_correlation": xc[sel][k], "lag_ms": lags[sel][k] * DT_US / 1000.0}
    for key, v in want.items():
        if abs(c[key] - v) > 1e-6 * max(1.0, abs(v)):
            bad.append((c["cmp"], key, c[key], v))
ok(not bad, "per-CMP RMS, difference, energy ratio, correlation peak and lag match NumPy",
   str(bad[:3]))
runs = [(x["first_cmp"], x["last_cmp"], x["b_is"]) for x in r.get("ranges", [])]
ok(runs == [(310, 319, "stronger"), (320, 329, "weaker"), (330, 339, "similar")],
   "summary ranges: B stronger on 310-319, weaker on 320-329, similar on 330-339", str(runs))
delayed = [c["lag_ms"] for c in r["cmps"] if 330 <= c["cmp"] < 340]
ok(all(abs(x - 4.0) < 1e-9 for x in delayed), "2-sample (4 ms) delay found as lag +4 ms")

# Different sample interval: a clear error, no output.
spec_path = os.path.join(WORK, "c.sgy")
DT_SAVE = DT_US
DT_US = 4000
write(spec_path, cmps_a[:5], tr_a[:5])
DT_US = DT_SAVE
csv = os.path.join(WORK, "out.csv")
p = run("compare", "--csv", csv, pa, spec_path, check=False)
ok(p.returncode == 65 and "different sample axes" in p.stderr and "4000 us" in p.stderr,
   "different sample intervals: exit 65 naming both axes", p.stderr.strip())
ok(not os.path.exists(csv), "no CSV written after the error")

# CSV output parses with NumPy and matches the JSON.
p = run("compare", "--quiet", "--csv", csv, pa, pb)
ok(p.returncode == 0 and p.stdout == "", "--quiet prints nothing")
data = np.genfromtxt(csv, delimiter=",", names=True, dtype=None, encoding="ascii")
ok(len(data) == 30 and np.allclose(data["energy_ratio_db"], [c["energy_ratio_db"] for c in r["cmps"]], atol=1e-5),
   "CSV rows match the JSON per-CMP values")
done()
