"""test_condition_numpy -- tzero's trace conditioning against independent NumPy code.

Route: the library runs through the small driver build/tests/condition_driver
(tests/unit/condition_driver.c) on raw float32 traces. The references below are
written in float64 NumPy from the documents only:
  - trapezoid band-pass (Ormsby 1961): np.fft.rfft / irfft of the trace
    zero-padded to the documented length (smallest 2^a 3^b 5^c >= 2 ns), times
    A(|f|) on np.fft.rfftfreq; and, separately, a direct time-domain convolution
    with the sampled Ormsby wavelet (np.convolve), which no FFT is involved in;
  - spherical divergence t V_rms^2(t) / (t_ref V_rms^2(t_ref)) (Newman 1973,
    Newman 1973) with V_rms from np.interp of the table knots (docs/velocity-table.md
    rules), times clamped to one sample interval as docs/conditioning.md says;
  - power gain (t / t_ref)^alpha (Claerbout 1985);
  - AGC: window RMS / mean |x| by np.convolve with a box of 2h+1 samples, cut at
    the trace ends, guard 1e-6 of the whole-trace level (docs/conditioning.md).
Tolerances: 2e-5 of the trace peak for the FFT route (float32 FFTW against float64
NumPy); 2e-3 of the peak against the convolution (the FFT route periodises the
wavelet over nfft samples: its tails beyond nfft - ns samples alias back).
"""
import os
import subprocess

import numpy as np

import tzcheck as tz
from tzcheck import WORK, TZERO, ok, done

DRIVER = os.path.join(os.path.dirname(TZERO), "tests", "condition_driver")
TABLE = """# Tollerby Moss line 2 (invented)
cmp,time_ms,velocity_mps
200,0,1600
200,600,1900
200,1500,2700
"""


def fast_size(n):
    """Smallest 2^a 3^b 5^c >= n."""
    while True:
        m = n
        for p in (2, 3, 5):
            while m % p == 0:
                m //= p
        if m == 1:
            return n
        n += 1


def trapezoid(f, c):
    f = np.abs(f)
    f1, f2, f3, f4 = c
    a = np.zeros_like(f)
    a = np.where((f > f1) & (f < f2), (f - f1) / (f2 - f1), a)
    a = np.where((f >= f2) & (f <= f3), 1.0, a)
    a = np.where((f > f3) & (f < f4), (f4 - f) / (f4 - f3), a)
    return a


def bandpass_fft(x, dt, c):
    n = fast_size(2 * x.shape[-1])
    spec = np.fft.rfft(x.astype(np.float64), n) * trapezoid(np.fft.rfftfreq(n, dt), c)
    return np.fft.irfft(spec, n)[..., : x.shape[-1]]


def ormsby(t, c):
    """Ormsby 1961, with np.sinc(u) = sin(pi u)/(pi u)."""
    f1, f2, f3, f4 = c
    s = lambda f: f * f * np.sinc(f * t) ** 2
    return (s(f4) - s(f3)) / (f4 - f3) - (s(f2) - s(f1)) / (f2 - f1)


def bandpass_conv(x, dt, c):
    ns = x.shape[-1]
    lags = np.arange(-(ns - 1), ns) * dt
    h = dt * ormsby(lags, c)
    return np.array([np.convolve(tr, h)[ns - 1 : 2 * ns - 1] for tr in x.astype(np.float64)])


def agc(x, dt, window_s, measure):
    h = int(np.floor(window_s / (2 * dt) + 0.5))
    box = np.ones(2 * h + 1)
    out = []
    for tr in x.astype(np.float64):
        v = tr * tr if measure == "rms" else np.abs(tr)
        ns = len(v)   # full convolution, centred: sample i sums v[i-h .. i+h] inside the trace
        cnt = np.convolve(np.ones_like(v), box)[h : h + ns]
        lev = np.convolve(v, box)[h : h + ns] / cnt
        whole = v.mean()
        if measure == "rms":
            lev, whole = np.sqrt(lev), np.sqrt(whole)
        out.append(tr / (lev + 1e-6 * whole + np.finfo(np.float32).tiny))
    return np.array(out)


def times(tf, dt, ns):
    t = tf + dt * np.arange(ns)
    return np.maximum(t, dt)


def run(x, tf, dt, steps, table="-", cmp=200):
    ntr, ns = x.shape
    src, dst = os.path.join(WORK, "cond_in.f32"), os.path.join(WORK, "cond_out.f32")
    x.astype(np.float32).tofile(src)
    p = subprocess.run([DRIVER, table, str(cmp), repr(tf), repr(dt), str(ns), src, dst, *steps],
                       capture_output=True, text=True)
    if p.returncode != 0:
        print(f"# condition_driver failed: {p.stderr.strip()}")
        return None
    return np.fromfile(dst, dtype=np.float32).reshape(ntr, ns).astype(np.float64)


def close(got, want, tol, desc):
    if got is None:
        return ok(False, desc, "driver failed")
    err = np.max(np.abs(got - want)) / np.max(np.abs(want))
    return ok(err < tol, desc, f"max error {err:.3g} of the peak (tolerance {tol})")


rng = np.random.default_rng(20261201)
x = rng.standard_normal((6, 700))
tf, dt = 0.0, 0.002

for c in ([5, 10, 40, 50], [2, 6, 90, 140], [20, 20.5, 21, 30]):
    arg = "bandpass:" + ",".join(str(v) for v in c)
    got = run(x, tf, dt, [arg])
    close(got, bandpass_fft(x, dt, c), 2e-5, f"band-pass {c} Hz = NumPy rfft/irfft on random data")
    if c[1] - c[0] >= 4:   # steep ramps ring for seconds (Ormsby 1961): tails alias more
        close(got, bandpass_conv(x, dt, c), 2e-3,
              f"band-pass {c} Hz = convolution with the Ormsby wavelet")

# A trace longer than the padding rule's power of two (1500 -> 3000 = 2^3 3 5^3), 4 ms.
y = rng.standard_normal((3, 1500))
got = run(y, 0.0, 0.004, ["bandpass:3,8,50,70"])
close(got, bandpass_fft(y, 0.004, [3, 8, 50, 70]), 2e-5, "band-pass on 1500 samples at 4 ms = NumPy")

# Gains: constant-velocity spherical divergence reduces to t / t_ref; power gain.
t = times(-0.04, dt, 700)
got = run(x, -0.04, dt, ["spherical:0.8,2200"])
close(got, x * t / 0.8, 1e-6, "spherical divergence, constant velocity = t / t_ref (Newman 1973)")
got = run(x, -0.04, dt, ["power:1.7,0.5"])
close(got, x * (t / 0.5) ** 1.7, 1e-5, "power gain (t / t_ref)^1.7")

# Spherical divergence from a velocity table (np.interp of the knots, Newman 1973).
tab = os.path.join(WORK, "cond_vel.csv")
with open(tab, "w") as fp:
    fp.write(TABLE)
kt, kv = np.array([0, 0.6, 1.5]), np.array([1600, 1900, 2700.0])
v = np.interp(tf + dt * np.arange(700), kt, kv)
vref = np.interp(1.2, kt, kv)
want_sph = x * times(tf, dt, 700) * v ** 2 / (1.2 * vref ** 2)
got = run(x, tf, dt, ["spherical:1.2,0"], table=tab)
close(got, want_sph, 1e-5, "spherical divergence from the velocity table = NumPy")

# AGC, both measures and a window longer than the trace.
for w, m in ((0.25, "rms"), (0.1, "mean_abs"), (3.0, "rms")):
    got = run(x, tf, dt, [f"agc:{w},{m}"])
    close(got, agc(x, dt, w, m), 1e-5, f"AGC {w * 1e3:g} ms {m} = NumPy box-window level")

# The whole chain in order: spherical (table), band-pass, AGC.
want = agc(bandpass_fft(want_sph, dt, [4, 8, 60, 90]), dt, 0.3, "rms")
got = run(x, tf, dt, ["spherical:1.2,0", "bandpass:4,8,60,90", "agc:0.3,rms"], table=tab)
close(got, want, 1e-4, "chain spherical -> band-pass -> AGC = NumPy")

# Refusals: a corner at Nyquist (250 Hz at 2 ms) is an error naming it.
p = subprocess.run([DRIVER, "-", "0", "0", "0.002", "700", os.path.join(WORK, "cond_in.f32"),
                    os.path.join(WORK, "cond_bad.f32"), "bandpass:5,10,200,250"],
                   capture_output=True, text=True)
ok(p.returncode == 1 and "f4 = 250 Hz is at or above the Nyquist frequency 250 Hz" in p.stderr,
   "corner at Nyquist refused with its value", p.stderr.strip())

# ---- `tzero stack` and `tzero nmo` with a "conditioning" job key, on a file written by
# segyio. Zero-offset traces (source = receiver), one per CMP: NMO is then the identity
# (t = t0, Yilmaz 2001, hyperbolic moveout) and each CMP stacks one trace, so the section must be the
# conditioned input. Reference: the NumPy chain above (independent of tzero).
import json  # noqa: E402

import segyio  # noqa: E402

NTR, NSS, DTUS = 12, 600, 2000
sdir = os.path.join(WORK, "cond_line")
os.makedirs(os.path.join(sdir, "shots"), exist_ok=True)
os.makedirs(os.path.join(sdir, "out"), exist_ok=True)
raw = rng.standard_normal((NTR, NSS))
spec = segyio.spec()
spec.samples = list(range(NSS))
spec.format = 5
spec.tracecount = NTR
with segyio.create(os.path.join(sdir, "shots", "zero_offset.sgy"), spec) as f:
    f.bin.update(hdt=DTUS, hns=NSS, format=5, mfeet=1)
    F = segyio.TraceField
    for k in range(NTR):
        f.header[k] = {F.TRACE_SEQUENCE_LINE: k + 1, F.TRACE_SEQUENCE_FILE: k + 1,
                       F.FieldRecord: k + 1, F.TraceNumber: 1, F.TraceIdentificationCode: 1,
                       F.offset: 0, F.SourceGroupScalar: -100,
                       F.SourceX: (2000 + 10 * k) * 100, F.SourceY: 0,
                       F.GroupX: (2000 + 10 * k) * 100, F.GroupY: 0, F.CoordinateUnits: 1,
                       F.TRACE_SAMPLE_COUNT: NSS, F.TRACE_SAMPLE_INTERVAL: DTUS}
        f.trace[k] = raw[k].astype(np.float32)
with open(os.path.join(sdir, "velocity.csv"), "w") as fp:
    fp.write(TABLE.replace("200,", "1,"))   # one control CMP: the same function everywhere
job = {
    "name": "Tollerby Moss zero-offset test (invented)",
    "shots": ["shots/*.sgy"],
    "bins": {"size_m": 10, "origin_x_m": 2000, "origin_y_m": 0, "azimuth_deg": 90,
             "first_cmp": 1},
    "velocity": "velocity.csv",
    "conditioning": [
        {"step": "spherical_divergence", "reference_time_ms": 1200},
        {"step": "bandpass", "corners_hz": [4, 8, 60, 90]},
        {"step": "agc", "window_ms": 300},
    ],
    "output": {"section": "out/stack.sgy", "report": "out/qc.json"},
}
with open(os.path.join(sdir, "line.json"), "w") as fp:
    json.dump(job, fp, indent=2)
dts = DTUS * 1e-6
vz = np.interp(dts * np.arange(NSS), kt, kv)
want_line = agc(bandpass_fft(raw * times(0, dts, NSS) * vz ** 2 / (1.2 * vref ** 2), dts,
                             [4, 8, 60, 90]), dts, 0.3, "rms")
p = tz.run("stack", "--job", os.path.join(sdir, "line.json"), "--quiet", "--threads", 2)
if ok(p.returncode == 0, "tzero stack runs a job with a conditioning chain", p.stderr.strip()):
    with segyio.open(os.path.join(sdir, "out", "stack.sgy"), ignore_geometry=True) as f:
        sec = np.array([f.trace[i] for i in range(f.tracecount)], dtype=np.float64)
    ok(sec.shape == want_line.shape, "one stacked trace per zero-offset CMP", str(sec.shape))
    if sec.shape == want_line.shape:
        # the last sample is left out: NMO mutes what maps to the trace end (docs/nmo.md)
        close(sec[:, :-1], want_line[:, :-1], 1e-4, "stacked zero-offset section = NumPy "
              "chain of the input (spherical -> band-pass -> AGC)")
    with open(os.path.join(sdir, "out", "qc.json")) as fp:
        steps = json.load(fp)["parameters"]["conditioning"]
    ok([s["step"] for s in steps] == ["spherical_divergence", "bandpass", "agc"]
       and steps[1]["corners_hz"] == [4, 8, 60, 90] and steps[2]["measure"] == "rms",
       "QC report records the resolved conditioning chain", json.dumps(steps))
gout = os.path.join(sdir, "out", "gathers.sgy")
p = tz.run("nmo", "--job", os.path.join(sdir, "line.json"), "--cmps", "3-5", "--out", gout,
           "--quiet")
if ok(p.returncode == 0, "tzero nmo runs a job with a conditioning chain", p.stderr.strip()):
    with segyio.open(gout, ignore_geometry=True) as f:
        gat = np.array([f.trace[i] for i in range(f.tracecount)], dtype=np.float64)
    close(gat[:, :-1], want_line[2:5, :-1], 1e-4,
          "NMO gathers of CMPs 3-5 carry the same conditioning")

# A NaN sample: the SEG-Y reader replaces it by 0 (docs/segy-reading.md), so it cannot
# smear over the filtered trace; the section equals the chain of the input with a 0 there.
bad = os.path.join(sdir, "nan")
os.makedirs(os.path.join(bad, "shots"), exist_ok=True)
os.makedirs(os.path.join(bad, "out"), exist_ok=True)
with segyio.open(os.path.join(sdir, "shots", "zero_offset.sgy"), ignore_geometry=True) as src:
    with segyio.create(os.path.join(bad, "shots", "zero_offset.sgy"), spec) as f:
        f.bin.update(hdt=DTUS, hns=NSS, format=5, mfeet=1)
        for k in range(NTR):
            f.header[k] = src.header[k]
            tr = np.array(src.trace[k])
            if k == 3:
                tr[100] = np.nan
            f.trace[k] = tr
with open(os.path.join(bad, "velocity.csv"), "w") as fp:
    fp.write(TABLE.replace("200,", "1,"))
with open(os.path.join(bad, "line.json"), "w") as fp:
    json.dump(job, fp)
zeroed = raw.copy()
zeroed[3, 100] = 0
want_nan = agc(bandpass_fft(zeroed * times(0, dts, NSS) * vz ** 2 / (1.2 * vref ** 2), dts,
                            [4, 8, 60, 90]), dts, 0.3, "rms")
p = tz.run("stack", "--job", os.path.join(bad, "line.json"), "--quiet")
if ok(p.returncode == 0, "a line with a NaN sample stacks", p.stderr.strip()):
    with segyio.open(os.path.join(bad, "out", "stack.sgy"), ignore_geometry=True) as f:
        sec = np.array([f.trace[i] for i in range(f.tracecount)], dtype=np.float64)
    ok(np.all(np.isfinite(sec)), "no NaN in the conditioned section")
    close(sec[:, :-1], want_nan[:, :-1], 1e-4, "NaN sample conditioned as 0")

# A band-pass corner above Nyquist (250 Hz at 2 ms) is a job error naming the step.
job["conditioning"] = [{"step": "bandpass", "corners_hz": [5, 10, 200, 300]}]
with open(os.path.join(sdir, "nyquist.json"), "w") as fp:
    json.dump(job, fp)
p = tz.run("stack", "--job", os.path.join(sdir, "nyquist.json"), "--quiet", check=False)
ok(p.returncode == 65 and "$.conditioning[0] (bandpass): corner f4 = 300 Hz is at or above the "
   "Nyquist frequency 250 Hz" in p.stderr, "corner above Nyquist: exit 65 naming the step",
   f"{p.returncode}: {p.stderr.strip()}")
ok(not os.path.exists(os.path.join(sdir, "out", "nyquist.sgy")), "no section left behind")

done()
