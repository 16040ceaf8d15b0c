"""test_synth -- `tzero synth` output read back with segyio, checked with NumPy.

References: segyio (Debian python3-segyio) reads the files by SEG-Y byte
position (SEG-Y rev 1, R1: field record 9, channel 13, energy source point 17,
CMP 21, trace kind 29, offset 37, elevations 41/45, source depth 49, scalars
69/71, source and receiver X/Y 73-88, samples 115, interval 117, CMP X/Y
181/185; binary header 3217, 3221, 3225, 3229). Positions are recomputed here
from the layout rules of docs/layout.md; traveltimes from Pythagoras on the
image source (Yilmaz 2001, hyperbolic moveout); RMS velocities from Taner and Koehler (1969).
"""
import json
import math
import os

import numpy as np
import segyio

from tzcheck import WORK, done, ok, run

layout = {
    "receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 6,
    "channels": 24, "spread": "split", "channels_behind": 10, "near_offset_m": 5,
    "azimuth_deg": 30, "first_station_x_m": 512000.25, "first_station_y_m": 6734000.75,
    "first_source_m": 100, "source_depth_m": 1.5, "first_field_record": 501,
    "first_shot_point": 11, "skipped_shot_points": [13],
    "station_elevations_m": [100 + 0.1 * k for k in range(200)],
}
model = {"layers": [{"thickness_m": 200, "velocity_mps": 2000, "density_kgm3": 2000},
                    {"thickness_m": 150, "velocity_mps": 2600, "density_kgm3": 2200},
                    {"velocity_mps": 3100, "density_kgm3": 2300}]}
lp = os.path.join(WORK, "layout.json")
mp = os.path.join(WORK, "model.json")
json.dump(layout, open(lp, "w"))
json.dump(model, open(mp, "w"))
out = os.path.join(WORK, "survey")
p = run("synth", "--model", mp, "--layout", lp, "--out", out, "--samples", 601,
        "--interval-ms", 1, "--peak-hz", 40, "--no-direct", "--no-head-wave", "--json")
ok(p.returncode == 0, "tzero synth writes a survey", p.stderr)
summary = json.loads(p.stdout) if p.returncode == 0 else {}
files = sorted(f for f in os.listdir(out) if f.endswith(".sgy")) if os.path.isdir(out) else []
ok(len(files) == 5, "one file per recorded shot (6 positions, 1 skipped)", str(files))
ok(files[:2] == ["shot_000501.sgy", "shot_000502.sgy"], "files named by field record", str(files))

su, cu = math.sin(math.radians(30)), math.cos(math.radians(30))


def elev(a):
    u = a / 5.0
    i = int(math.floor(u))
    return 100 + 0.1 * (i + (u - i))


shot_positions = [0, 1, 3, 4, 5]          # shot point 13 (index 2) skipped
bad = []
for k, fname in enumerate(files):
    with segyio.open(os.path.join(out, fname), ignore_geometry=True) as f:
        if k == 0:
            ok(f.bin[3217] == 1000 and f.bin[3221] == 601, "binary header interval and samples")
            ok(f.bin[3225] == 1, "IBM float format code 1 by default")
            ok(f.bin[3229] == 1, "sorting code 1 (as recorded)")
        sa = 100 + 10 * shot_positions[k]
        for c in range(24):
            h = f.header[c]
            ra = sa - 5 - (9 - c) * 5 if c < 10 else sa + 5 + (c - 10) * 5
            sx, sy = 512000.25 + sa * su, 6734000.75 + sa * cu
            rx, ry = 512000.25 + ra * su, 6734000.75 + ra * cu
            want = {9: 501 + k, 13: c + 1, 17: 11 + shot_positions[k], 29: 1,
                    37: round(ra - sa), 71: -100, 69: -100,
                    73: round(sx * 100), 77: round(sy * 100), 81: round(rx * 100),
                    85: round(ry * 100), 41: round(elev(ra) * 100), 45: round(elev(sa) * 100),
                    49: 150, 115: 601, 117: 1000}
            for pos, v in want.items():
                if abs(h[pos] - v) > (1 if pos in (73, 77, 81, 85, 41, 45) else 0):
                    bad.append((fname, c, pos, h[pos], v))
            # CMP X/Y lie on the line through station 0 (the layout's line).
            mx, my = h[181] / 100.0, h[185] / 100.0
            off = (mx - 512000.25) * cu - (my - 6734000.75) * su
            if abs(off) > 0.01:
                bad.append((fname, c, 181, off, 0))
ok(not bad, "trace headers hold the documented geometry (segyio)", str(bad[:5]))

# Reflection times: the strongest sample of a far trace lies at the exact
# two-way time of the first interface (single homogeneous layer above it).
with segyio.open(os.path.join(out, files[2]), ignore_geometry=True) as f:
    tr = f.trace[23]
    x = abs(f.header[23][37])
    t = math.sqrt(x * x + 4 * 200.0 ** 2) / 2000.0
    i = int(np.argmax(tr[:int((t + 0.05) * 1000)]))
    ok(abs(i - t * 1000) <= 1, f"first reflection peaks at {t*1000:.1f} ms (x = {x} m)",
       f"peak at sample {i}")
    sp = np.abs(np.fft.rfft(tr[int(t * 1000) - 60:int(t * 1000) + 60] * np.hanning(120), 1024))
    fpk = np.argmax(sp) * 1000.0 / 1024
    ok(abs(fpk - 40) < 6, "its spectrum peaks near the Ricker peak frequency (NumPy FFT)",
       f"{fpk:.1f} Hz")

# RMS velocity table: V_rms^2 = sum v^2 dt / t0 (Taner and Koehler 1969).
rows = [l.strip().split(",") for l in open(os.path.join(out, "rms_velocity.csv"))
        if l.strip() and not l.startswith("#")]
ok(rows[0] == ["cmp", "time_ms", "velocity_mps"], "velocity table header (docs/velocity-table.md)")
dt = [0.2, 150 * 2 / 2600.0]
t0 = np.cumsum(dt)
vr = np.sqrt(np.cumsum(np.array([2000.0, 2600.0]) ** 2 * dt) / t0)
vals = [r for r in rows[1:] if int(r[0]) == summary.get("first_cmp")]
ok(len(vals) == 3 and all(abs(float(vals[i + 1][1]) - t0[i] * 1000) < 1e-3 and
                          abs(float(vals[i + 1][2]) - vr[i]) < 1e-3 for i in range(2)),
   "RMS table matches Taner and Koehler's formula", str(vals))
cmps = sorted({int(r[0]) for r in rows[1:]})
ok(cmps == [summary.get("first_cmp"), summary.get("last_cmp")], "first and last CMP as controls",
   str(cmps))

# --bare-headers: geometry left out.
bare = os.path.join(WORK, "bare")
p = run("synth", "--model", mp, "--layout", lp, "--out", bare, "--samples", 101, "--bare-headers",
        "--format", "ieee", "--quiet")
ok(p.returncode == 0, "synth --bare-headers", p.stderr)
with segyio.open(os.path.join(bare, "shot_000501.sgy"), ignore_geometry=True) as f:
    h = f.header[5]
    ok(h[9] == 501 and h[13] == 6 and all(h[b] == 0 for b in (21, 37, 73, 77, 81, 85, 181)),
       "bare headers keep record and channel, no geometry")
    ok(f.bin[3225] == 5, "--format ieee writes format code 5")

# Same seed, same noise; another seed, other noise.
n1, n2, n3 = (os.path.join(WORK, s) for s in ("n1", "n2", "n3"))
for d, seed in ((n1, 7), (n2, 7), (n3, 8)):
    run("synth", "--model", mp, "--layout", lp, "--out", d, "--samples", 101, "--noise", 0.1,
        "--seed", seed, "--quiet")
a, b, c = (open(os.path.join(d, "shot_000503.sgy"), "rb").read() for d in (n1, n2, n3))
ok(a == b and a != c, "noise is reproducible from its seed")
done()
