"""landline -- an independent NumPy generator of a 2D land line in rough terrain.

Used by the statics cross-checks (test_statics_land.py); it shares no code with
tzero. The near-surface model: surface elevation E(x) with 25 m of relief, a
weathering layer of thickness h(x) from 3 to 17 m at v0 = 700 m/s over a
refractor (the replacement medium) at v1 = 2000 m/s; flat datum D = 100 m.

Kinematics (each from its textbook definition, computed here):
- direct wave: straight path through the weathering, sqrt(dx^2 + dz^2) / v0;
- head wave: Fermat's principle over the refractor surface B(x) = E(x) - h(x):
  min over entry a <= exit b of |S - B(a)| / v0 + arc(a, b) / v1 + |B(b) - R| / v0
  (Sheriff and Geldart 1995, refraction chapter: the head wave travels along the
  refractor at v1 and leaves it towards the surface);
- first arrival: the earlier of the two;
- reflections from flat interfaces below the datum, hyperbolic at the datum
  (t^2 = t0^2 + x^2 / v^2) and delayed by each station's vertical near-surface
  time, so that the true station static is -(h / v0 + (E - h - D) / v1) ms
  (the datum static through weathering and replacement medium, common practice).
Wavelet: zero-phase Ricker (Ricker 1953), so the true arrival time is the
centre (peak) of the first-arrival wavelet.
"""
import json
import os

import numpy as np
import segyio

DG = 10.0            # receiver interval (m)
NREC = 121           # receiver stations 0..120
SHOT_STEP = 2        # a shot at every second station
HALF = 24            # channels on each side of the shot (split spread)
DT_US = 1000
NS = 700
V0, V1, DATUM = 700.0, 2000.0, 100.0
FREQ = 30.0          # reflections
FB_FREQ = 45.0       # first arrivals (the near surface passes higher frequencies)
EVENTS = [(0.200, 2100.0, 0.35), (0.330, 2250.0, -0.3), (0.480, 2400.0, 0.3)]
Y0 = 5000.0
REVERSED, NOISY, DEAD = (10, 5), (30, 20), (20, 12)   # (record, channel) when nasty


def elevation(x):
    return 130.0 + 12.5 * np.sin(2 * np.pi * x / 900.0)


def thickness(x):
    return 10.0 + 7.0 * np.sin(2 * np.pi * x / 700.0 + 1.0)


def true_static_ms(x):
    e, h = elevation(x), thickness(x)
    return -1000.0 * (h / V0 + (e - h - DATUM) / V1)


def ricker(t, f=FREQ):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def shots():
    return list(range(0, NREC, SHOT_STEP))


def receivers_of(s):
    return [r for r in range(s - HALF, s + HALF + 1) if r != s and 0 <= r < NREC]


class Refractor:
    """Head-wave times by Fermat's principle on a fine grid of the refractor."""

    def __init__(self):
        self.u = np.arange(-300.0, DG * NREC + 300.0, 0.5)
        b = elevation(self.u) - thickness(self.u)
        seg = np.hypot(np.diff(self.u), np.diff(b))
        self.arc = np.concatenate([[0.0], np.cumsum(seg)])
        self.b = b
        self.leg = {}

    def legs(self, x):
        if x not in self.leg:
            self.leg[x] = np.hypot(self.u - x, elevation(x) - self.b) / V0
        return self.leg[x]

    def head_time(self, xs, xr):
        ts, tr = self.legs(xs), self.legs(xr)
        if xr < xs:
            xs, xr, ts, tr = xr, xs, tr, ts
        pre = np.minimum.accumulate(ts - self.arc / V1)
        return float(np.min(pre + self.arc / V1 + tr))


def first_arrival_times():
    """{(record, channel): true first-arrival time in s}."""
    ref = Refractor()
    out = {}
    for k, s in enumerate(shots()):
        xs = s * DG
        for c, r in enumerate(receivers_of(s)):
            xr = r * DG
            td = np.hypot(xr - xs, elevation(xr) - elevation(xs)) / V0
            th = ref.head_time(xs, xr)
            out[(k + 1, c + 1)] = (min(td, th), td, th)
    return out


def make_line(d, residual=None, statics_in_data=True, noise=0.02, seed=1, nasty=True,
              first_shot_point=None, trace_fn=None):
    """Writes shots/shot_NNNN.sgy, the true statics table and a job file.

    residual: optional (source_ms, receiver_ms) dicts by station of extra shifts
    (added to the data's times). trace_fn(t, x, td, th, delay): optional, returns
    the samples of a trace at offset x instead of the default arrivals (td, th:
    direct and head-wave times, delay: the reflections' near-surface delay, s).
    Returns the first-arrival truth."""
    os.makedirs(os.path.join(d, "shots"), exist_ok=True)
    rng = np.random.default_rng(seed)
    fa = first_arrival_times()
    t = np.arange(NS) * DT_US * 1e-6
    F = segyio.TraceField
    for k, s in enumerate(shots()):
        xs = s * DG
        recs = receivers_of(s)
        spec = segyio.spec()
        spec.samples = list(range(NS))
        spec.format = 5
        spec.tracecount = len(recs)
        with segyio.create(os.path.join(d, "shots", f"shot_{k + 1:04d}.sgy"), spec) as f:
            f.bin.update(hdt=DT_US, hns=NS, format=5, mfeet=1)
            for c, r in enumerate(recs):
                xr = r * DG
                x = xr - xs
                tfb, td, th = fa[(k + 1, c + 1)]
                # the first arrival at full amplitude, the later of the two at 0.3
                # (the direct wave fades in the weathering beyond the crossover, the
                # head wave is weak near its critical distance)
                tr = ricker(t - td, FB_FREQ) * (1.0 if td <= th else 0.3) + \
                    ricker(t - th, FB_FREQ) * (1.0 if th < td else 0.3)
                delay = 0.0
                if statics_in_data:
                    delay = -(true_static_ms(xs) + true_static_ms(xr)) / 1000.0
                if residual:
                    delay += (residual[0][s] + residual[1][r]) / 1000.0
                if trace_fn is not None:
                    tr = trace_fn(t, x, td, th, delay)
                for t0, v, a in EVENTS if trace_fn is None else ():
                    tr += a * ricker(t - delay - np.sqrt(t0 * t0 + x * x / (v * v)))
                tr += noise * rng.standard_normal(NS)
                kind = 1
                if nasty and (k + 1, c + 1) == REVERSED:
                    tr = -tr                      # a receiver wired the wrong way round
                if nasty and (k + 1, c + 1) == NOISY:
                    tr += 20 * noise * rng.standard_normal(NS)
                if nasty and (k + 1, c + 1) == DEAD:
                    tr[:] = 0.0
                    kind = 2
                f.header[c] = {
                    F.TRACE_SEQUENCE_LINE: c + 1,
                    F.TRACE_SEQUENCE_FILE: c + 1,
                    F.FieldRecord: k + 1,
                    F.TraceNumber: c + 1,
                    F.TraceIdentificationCode: kind,
                    F.offset: int(round(x)),
                    F.ElevationScalar: -100,
                    F.ReceiverGroupElevation: int(round(elevation(xr) * 100)),
                    F.SourceSurfaceElevation: int(round(elevation(xs) * 100)),
                    F.SourceGroupScalar: -100,
                    F.SourceX: int(round(xs * 100)),
                    F.SourceY: int(Y0 * 100),
                    F.GroupX: int(round(xr * 100)),
                    F.GroupY: int(Y0 * 100),
                    F.CoordinateUnits: 1,
                    **({F.EnergySourcePoint: first_shot_point + k}
                       if first_shot_point is not None else {}),
                    F.TRACE_SAMPLE_COUNT: NS,
                    F.TRACE_SAMPLE_INTERVAL: DT_US,
                }
                f.trace[c] = tr.astype(np.float32)
    with open(os.path.join(d, "true_statics.csv"), "w") as fp:
        fp.write("# true station statics of the model (ms)\n"
                 "kind,station,x_m,y_m,elevation_m,static_ms\n")
        for s in shots():
            fp.write(f"source,{s},{s * DG:.2f},{Y0:.2f},{elevation(s * DG):.3f},"
                     f"{true_static_ms(s * DG):.4f}\n")
        for r in range(NREC):
            fp.write(f"receiver,{r},{r * DG:.2f},{Y0:.2f},{elevation(r * DG):.3f},"
                     f"{true_static_ms(r * DG):.4f}\n")
    with open(os.path.join(d, "velocity.csv"), "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n1,0,2100\n")
        for t0, v, a in EVENTS:
            fp.write(f"1,{t0 * 1000:.1f},{v:.1f}\n")
    job = {
        "name": "Tarrowvane test line R-1",
        "shots": ["shots/shot_*.sgy"],
        "geometry": "headers",
        "bins": {"size_m": DG / 2, "origin_x_m": 0, "origin_y_m": Y0, "azimuth_deg": 90,
                 "first_cmp": 1},
        "velocity": "velocity.csv",
        "moveout": {"stretch_limit_pct": 60, "interpolation": "sinc8"},
        "output": {"section": "out/stack.sgy", "report": "out/qc.json"},
    }
    os.makedirs(os.path.join(d, "out"), exist_ok=True)
    with open(os.path.join(d, "line.json"), "w") as fp:
        json.dump(job, fp, indent=2)
    return fa


if __name__ == "__main__":
    import sys
    make_line(sys.argv[1])
