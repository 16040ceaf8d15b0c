"""test_synth_source -- `tzero synth` source wavelet, reverberation and ground roll,
read back with segyio and rebuilt with NumPy/SciPy from docs/earth-model.md.

References: the minimum-phase wavelet exp(-pi f t) sin(2 pi f t) (the impulse response
of a damped two-pole resonance, poles in the left half-plane: minimum phase; Robinson
& Treitel 1980), the reverberation filter 1 / (1 + c z^P) applied with
scipy.signal.lfilter (Debian python3-scipy); reflection amplitude R 1000 m / (t v)
over a half-space (Newman 1973, docs/earth-model.md); exact traveltime sqrt(t0^2 +
x^2/v^2) (Yilmaz 2001); the dispersive train's sum of cosines written here from
docs/earth-model.md.
"""
import json
import math
import os

import numpy as np
import scipy.signal
import segyio

from tzcheck import WORK, done, ok, run

layout = {"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 1, "channels": 24,
          "spread": "ahead", "near_offset_m": 5, "azimuth_deg": 90, "first_station_x_m": 1000,
          "first_station_y_m": 0, "first_source_m": 0, "first_field_record": 1}
V1, V2, D1, D2, H = 1800.0, 2600.0, 2000.0, 2200.0, 300.0
model = {"layers": [{"thickness_m": H, "velocity_mps": V1, "density_kgm3": D1},
                    {"velocity_mps": V2, "density_kgm3": D2}]}
lp, mp = os.path.join(WORK, "ss_layout.json"), os.path.join(WORK, "ss_model.json")
json.dump(layout, open(lp, "w"))
json.dump(model, open(mp, "w"))
NS, DT, FP = 800, 0.002, 25.0


def read(folder):
    fs = sorted(f for f in os.listdir(folder) if f.endswith(".sgy"))
    with segyio.open(os.path.join(folder, fs[0]), ignore_geometry=True) as f:
        offs = np.array([f.header[i][segyio.TraceField.offset] for i in range(f.tracecount)], float)
        return offs, np.array([np.array(f.trace[i], float) for i in range(f.tracecount)])


def synth(name, *extra):
    out = os.path.join(WORK, name)
    p = run("synth", "--model", mp, "--layout", lp, "--out", out, "--samples", NS,
            "--interval-ms", DT * 1e3, "--peak-hz", FP, "--format", "ieee", "--no-direct",
            "--no-head-wave", "--quiet", *extra)
    ok(p.returncode == 0, f"tzero synth {' '.join(map(str, extra))}", p.stderr.strip())
    return read(out) if p.returncode == 0 else (None, None)


def minphase(t):
    return np.where(t >= 0, np.exp(-np.pi * FP * t) * np.sin(2 * np.pi * FP * t), 0.0) / 0.51419838006


R = (D2 * V2 - D1 * V1) / (D2 * V2 + D1 * V1)
t = np.arange(NS) * DT
offs, x = synth("ss_mp", "--wavelet", "minimum-phase", "--reverb-period-ms", 40,
                "--reverb-coefficient", -0.6)
if x is not None:
    want = []
    for o in offs:
        te = math.sqrt((2 * H / V1) ** 2 + (o / V1) ** 2)
        tr = R * 1000.0 / (te * V1) * minphase(t - te)
        tr = np.where(t - te <= 8 / (np.pi * FP), tr, 0.0)
        want.append(scipy.signal.lfilter([1.0], np.r_[1.0, np.zeros(19), -0.6], tr))
    want = np.array(want)
    err = np.max(np.abs(x - want)) / np.max(np.abs(want))
    ok(err < 1e-5, f"minimum-phase reflection through 1/(1 - 0.6 z^20) = SciPy lfilter ({err:.2g})")
    k = np.argmax(np.abs(x[0]))
    te0 = math.sqrt((2 * H / V1) ** 2 + (offs[0] / V1) ** 2)
    ok(0 < t[k] - te0 < 0.5 / FP, "the wavelet is causal: its peak follows the event time")
    ok(np.all(np.abs(x[0][t < te0 - DT]) == 0), "nothing before the event time")

FT, VMIN, VMAX = 8.0, 250.0, 600.0
offs, y = synth("ss_gr", "--no-reflections", "--noise-train-amplitude", 2, "--noise-train-hz", FT,
                "--noise-train-velocity", VMIN, "--noise-train-velocity-max", VMAX)
if y is not None:
    df = 0.25
    f = df * np.arange(1, int(3 * FT / df) + 1)
    Rf = f ** 2 * np.exp(-(f ** 2) / FT ** 2)
    Rf /= Rf.sum()
    v = np.interp(f, [0.5 * FT, 2 * FT], [VMAX, VMIN])
    want = np.array([2 * np.sum(Rf[:, None] * np.cos(2 * np.pi * f[:, None] * (t[None, :] - abs(o) / v[:, None])),
                                axis=0) for o in offs])
    err = np.max(np.abs(y - want)) / np.max(np.abs(want))
    ok(err < 1e-4, f"dispersive ground roll = the documented sum of cosines ({err:.2g})")
    # group velocity of the low band differs from the high band's: the train spreads out
    far, near = y[-1], y[0]
    width = lambda tr: np.sum(np.abs(tr) > 0.2 * np.max(np.abs(tr))) * DT
    ok(width(far) > width(near), f"the train disperses with offset ({width(near):.3f} s "
       f"near, {width(far):.3f} s far)")

p = run("synth", "--model", mp, "--layout", lp, "--out", os.path.join(WORK, "ss_bad"),
        "--reverb-period-ms", 40, "--reverb-coefficient", 1.5, check=False)
ok(p.returncode == 64 and "--reverb-coefficient" in p.stderr, "a reverberation coefficient of "
   "1.5 is refused (64)", p.stderr.strip())
done()
