"""test_decon_fk -- Wiener deconvolution and the f-k fan filter against SciPy and NumPy.

Route: the library runs through build/tests/condition_driver (tests/unit/condition_driver.c)
on raw float32 records. References, written here from the published methods:
  - Levinson's recursion (Levinson 1947) against scipy.linalg.solve_toeplitz (Debian
    python3-scipy), random positive-definite Toeplitz systems, 1e-9 relative;
  - worked values of spiking and predictive filters (Robinson & Treitel 1980, Wiener
    normal equations; the numbers computed with NumPy from the formulas);
  - spiking deconvolution of a minimum-phase wavelet (the impulse response of a stable
    two-pole resonance, scipy.signal.lfilter, Robinson & Treitel 1980) convolved with a
    sparse reflectivity recovers it (correlation >= 0.95 at 1 % pre-whitening);
  - predictive deconvolution with the gap equal to the period of a reverberation
    x_n = s_n - c x_{n-P} (a water-layer-like train, Backus 1959, from memory) removes it
    by >= 20 dB, per trace and with the record's mean autocorrelation;
  - the f-k fan (Sheriff & Geldart 1995; Yilmaz 2001, f-k filtering) against an
    independent NumPy np.fft.rfft2 / irfft2 implementation of the same documented grid,
    padding and weight (docs/conditioning.md), 1e-5 of the record's peak;
  - a 300 m/s linear event is removed by >= 30 dB and a 2000 m/s hyperbola keeps >= 95 % of
    its energy at a trace spacing that does not alias them (f < v / (2 dx)).
"""
import os
import subprocess

import numpy as np
import scipy.linalg
import scipy.signal

from tzcheck import WORK, TZERO, fast_size, ok, done

DRIVER = os.path.join(os.path.dirname(TZERO), "tests", "condition_driver")
rng = np.random.default_rng(20261202)


def driver_text(args, numbers):
    p = subprocess.run([DRIVER, *map(str, args)], input=" ".join(repr(float(v)) for v in numbers),
                       capture_output=True, text=True)
    if p.returncode != 0:
        print(f"# condition_driver {args}: {p.stderr.strip()}")
        return None
    return np.array([float(v) for v in p.stdout.split()])


def run_record(x, dt, offsets, steps, spacing=1.0, omin=None, omax=None):
    ntr, ns = x.shape
    src, dst = os.path.join(WORK, "rec_in.f32"), os.path.join(WORK, "rec_out.f32")
    offs = os.path.join(WORK, "rec_offsets.txt")
    x.astype(np.float32).tofile(src)
    with open(offs, "w") as fp:
        fp.write("\n".join(repr(float(o)) for o in offsets))
    omin = min(offsets) if omin is None else omin
    omax = max(offsets) if omax is None else omax
    p = subprocess.run([DRIVER, "-r", offs, repr(spacing), repr(omin), repr(omax), "-", "0", "0",
                        repr(dt), str(ns), src, dst, *steps], capture_output=True, text=True)
    if p.returncode != 0:
        print(f"# condition_driver failed: {p.stderr.strip()}")
        return None
    return np.fromfile(dst, dtype=np.float32).reshape(ntr, ns).astype(np.float64)


# ---- Levinson against SciPy ----
for n in (1, 5, 37, 200):
    sig = rng.standard_normal(4 * n + 50)
    r = np.correlate(sig, sig, "full")[len(sig) - 1 : len(sig) - 1 + n] / len(sig)
    r[0] *= 1.001      # a sample autocorrelation is positive semi-definite; make it definite
    g = rng.standard_normal(n)
    got = driver_text(["levinson", n], np.concatenate([r, g]))
    want = scipy.linalg.solve_toeplitz(r, g)
    rel = np.max(np.abs(got - want)) / np.max(np.abs(want)) if got is not None else np.inf
    ok(rel < 1e-9, f"Levinson n={n} = scipy.linalg.solve_toeplitz (relative {rel:.2g})")

# Worked values (the Wiener normal equations, Robinson & Treitel 1980).
got = driver_text(["levinson", 3], [1, 0.5, 0.25, 1, 0, 0])
ok(got is not None and np.allclose(got, [4 / 3, -2 / 3, 0], atol=1e-12),
   "spiking filter of r = [1, 0.5, 0.25] is [4/3, -2/3, 0]", f"{got}")
got = driver_text(["levinson", 3], [1.01, 0.5, 0.25, 1, 0, 0])
ok(got is not None and np.allclose(got, [1.311532, -0.647165, -0.004258], atol=1e-6),
   "with 1 % pre-whitening: [1.311532, -0.647165, -0.004258]", f"{got}")
got = driver_text(["pef", 1, 2, 0], [1, 0.5, 0.25, 0.125])
ok(got is not None and np.allclose(got, [1, -0.5, 0], atol=1e-12),
   "prediction error filter of an AR(1) series is [1, -0.5, 0]", f"{got}")
# Spiking = gap-1 prediction error filter = spiking filter / its first value.
r = np.array([1.0, 0.6, 0.1, -0.2, -0.15, 0.05])
spk = scipy.linalg.solve_toeplitz(r * np.r_[1.01, np.ones(5)], np.r_[1.0, np.zeros(5)])
got = driver_text(["pef", 1, 5, 1], r)
ok(got is not None and np.allclose(got, spk / spk[0], atol=1e-12),
   "gap-1 prediction error filter = SciPy spiking filter / its first value")
# A non-positive-definite system is refused.
p = subprocess.run([DRIVER, "levinson", "2"], input="1 2 1 0", capture_output=True, text=True)
ok(p.returncode == 1 and "not positive definite" in p.stderr, "indefinite Toeplitz refused",
   p.stderr.strip())

# ---- spiking deconvolution recovers a sparse series ----
DT, NS = 0.002, 1500
theta = 2 * np.pi * 30 * DT                       # a 30 Hz resonance, poles at radius 0.92
poles_a = [1, -2 * 0.92 * np.cos(theta), 0.92 ** 2]
imp = np.zeros(NS)
imp[0] = 1
wavelet = scipy.signal.lfilter([1.0, -0.3], poles_a, imp)[:100]   # zero 0.3: minimum phase
ok(np.all(np.abs(np.roots(poles_a)) < 1) and np.all(np.abs(np.roots(wavelet[::-1])) > 1),
   "test wavelet is minimum phase (all zeros of W(z) outside the unit circle)")
ntr = 6
series = np.zeros((ntr, NS))
for j in range(ntr):
    idx = rng.choice(NS - 200, 40, replace=False) + 100
    series[j, idx] = rng.standard_normal(40)
traces = np.array([np.convolve(s, wavelet)[:NS] for s in series])
offs = np.arange(ntr) * 20.0 + 50
for ens in ("trace", "record"):
    got = run_record(traces, DT, offs, [f"decon:120,0,1,{ens},0/100/2900"], spacing=20)
    if got is None:
        ok(False, f"spiking decon ({ens}) ran")
        continue
    cc = [np.corrcoef(got[j, 100:NS - 100], series[j, 100:NS - 100])[0, 1] for j in range(ntr)]
    ok(min(cc) >= 0.95, f"spiking decon ({ens} ensemble, 120 ms, 1 %) recovers a sparse series: "
       f"correlation min {min(cc):.3f} >= 0.95")
    cin = [np.corrcoef(traces[j, 100:NS - 100], series[j, 100:NS - 100])[0, 1] for j in range(ntr)]
    ok(max(cin) < 0.8, f"(the input itself correlates only {max(cin):.2f})")

# ---- predictive deconvolution removes a periodic reverberation ----
P, C = 40, 0.6                                    # 80 ms period, -0.6 per bounce
NS = 3000
white = rng.standard_normal((ntr, NS))
rev = scipy.signal.lfilter([1.0], np.r_[1.0, np.zeros(P - 1), C], white, axis=1)
e_in = np.sum((rev - white) ** 2)
for ens in ("trace", "record"):
    got = run_record(rev, DT, offs, [f"decon:{(P + 4) * DT * 1e3:g},{P * DT * 1e3:g},0.1,{ens},0/0/5998"], spacing=20)
    if got is None:
        ok(False, f"predictive decon ({ens}) ran")
        continue
    e_out = np.sum((got - white) ** 2)
    db = 10 * np.log10(e_out / e_in)
    ok(db <= -20, f"predictive decon gap = period ({ens}): reverberation energy {db:.1f} dB (<= -20)")

# Design window follows the offset polyline: a window that misses the reverberation's
# trace section changes nothing else; here a trace's window is [start, end] interpolated
# in |offset|: checked by refusing a window shorter than operator + gap.
p = subprocess.run([DRIVER, "-r", os.path.join(WORK, "rec_offsets.txt"), "20", "0", "200", "-",
                    "0", "0", "0.002", str(NS), os.path.join(WORK, "rec_in.f32"),
                    os.path.join(WORK, "rec_bad.f32"), "decon:100,0,1,trace,0/100/150"],
                   capture_output=True, text=True)
ok(p.returncode == 1 and "shorter than the operator" in p.stderr,
   "design window shorter than the operator refused", p.stderr.strip())


# ---- f-k fan: NumPy reference of the documented grid and weight ----


def fall(u):
    return np.where(u <= 0, 1.0, np.where(u >= 1, 0.0, 0.5 * (1 + np.cos(np.pi * np.clip(u, 0, 1)))))


def fk_weight(f, k, v1, v2, taper, min_hz, passing):
    f, k = np.abs(f), np.abs(k)
    with np.errstate(divide="ignore", invalid="ignore"):
        v = np.where(k > 0, f / np.where(k > 0, k, 1), np.inf)
    w = taper / 100 * (v2 - v1)
    inside = (v >= v1) & (v <= v2)
    if w > 0:
        below = fall((v1 - v) / w)
        above = np.where(np.isinf(v), 0.0, fall(np.where(np.isinf(v), 1, v - v2) / w))
        r = np.where(inside, 1.0, np.where(v < v1, below, above))
    else:
        r = inside.astype(float)
    m = 1 - r if passing else r
    a = np.ones_like(f)
    if min_hz > 0:
        wf = taper / 100 * min_hz
        a = np.where(f < min_hz, 0.0, 1 - fall((f - min_hz) / wf) if wf > 0 else 1.0)
    return 1 - a * m


def fk_numpy(x, dt, offsets, dx, omin, omax, v1, v2, taper, min_hz, passing):
    ntr, ns = x.shape
    slot0 = int(np.round(omin / dx))
    nslots = int(np.round(omax / dx)) - slot0 + 1
    npad = max(4, nslots // 10)
    nx, nt = fast_size(nslots + 2 * npad), fast_size(ns + ns // 2)
    rows = np.round(np.asarray(offsets) / dx).astype(int) - slot0 + npad
    grid = np.zeros((nx, ns))
    count = np.zeros(nx, int)
    for j, rr in enumerate(rows):
        grid[rr] += x[j]
        count[rr] += 1
    grid[count > 0] /= count[count > 0, None]
    F = np.fft.rfft2(grid, s=(nx, nt))
    f = np.fft.rfftfreq(nt, dt)[None, :]
    k = np.fft.fftfreq(nx, dx)[:, None]
    out = np.fft.irfft2(F * fk_weight(f, k, v1, v2, taper, min_hz, passing), s=(nx, nt))[:, :ns]
    y = np.empty_like(x)
    for j, rr in enumerate(rows):
        y[j] = out[rr] if count[rr] == 1 else x[j] - (grid[rr] - out[rr])
    return y


def ricker(t, fp):
    a = (np.pi * fp * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


DX, NSF = 2.0, 600
offs = np.r_[np.arange(-95, 0) * DX, np.arange(1, 96) * DX]
offs = np.delete(offs, [20, 21, 130])            # missing traces
offs = np.r_[offs, 31.0, -60.3]                  # a duplicate position and an off-grid one
offs[5] += 0.4
t = np.arange(NSF) * DT


def linear(v, t0=0.08, fp=20):
    return np.array([ricker(t - t0 - abs(o) / v, fp) for o in offs])


def hyperbola(v, t0=0.5, fp=20):
    return np.array([ricker(t - np.sqrt(t0 ** 2 + (o / v) ** 2), fp) for o in offs])


slow, fast = linear(300.0), hyperbola(2000.0)
noise = 0.1 * rng.standard_normal(slow.shape)
rec = slow + fast + noise
OMIN, OMAX = -230.0, 230.0                        # the line's offsets: wider than this record
for name, args in (("reject [0, 600] 10 %", (0, 600, 10, 0, False)),
                   ("reject [100, 700] 0 %, min 5 Hz", (100, 700, 0, 5, False)),
                   ("pass [1500, 100000] 20 %, min 8 Hz", (1500, 100000, 20, 8, True))):
    v1, v2, tp, mh, ps = args
    step = f"fk{'pass' if ps else 'reject'}:{v1},{v2},{tp},{mh}"
    got = run_record(rec, DT, offs, [step], spacing=DX, omin=OMIN, omax=OMAX)
    want = fk_numpy(rec, DT, offs, DX, OMIN, OMAX, v1, v2, tp, mh, ps)
    err = np.max(np.abs(got - want)) / np.max(np.abs(rec)) if got is not None else np.inf
    ok(err < 1e-5, f"f-k {name} = NumPy rfft2/irfft2 of the same fan ({err:.2g} of the peak)")

# 300 m/s aliases above 300 / (2 x 2 m) = 75 Hz; the 20 Hz Ricker has almost no energy
# there. An off-end record of 190 channels; both events wholly inside the 2 s traces.
NSL = 1000
tl = np.arange(NSL) * DT
offe = np.arange(1, 191) * DX
slow = np.array([ricker(tl - 0.1 - o / 300.0, 20) for o in offe])
fast = np.array([ricker(tl - np.sqrt(0.5 ** 2 + (o / 2000.0) ** 2), 20) for o in offe])
step = "fkreject:0,600,10,0"
out_slow = run_record(slow, DT, offe, [step], spacing=DX, omin=0, omax=400)
out_fast = run_record(fast, DT, offe, [step], spacing=DX, omin=0, omax=400)
if out_slow is not None and out_fast is not None:
    e_out, e_in = np.sum(out_slow ** 2, axis=1), np.sum(slow ** 2, axis=1)
    whole = 10 * np.log10(e_out.sum() / e_in.sum())
    db = 10 * np.log10(e_out[10:-10].sum() / e_in[10:-10].sum())
    # The record's ends are where a truncated event leaks to every wavenumber (the end of
    # a line is a point in x, spread over all k): docs/conditioning.md; printed, not judged.
    ok(db <= -30, f"linear event at 300 m/s removed by {-db:.1f} dB away from the record's ends "
       f"(>= 30; the 10 end channels included: {-whole:.1f} dB)")
    kept = np.sum(out_fast ** 2) / np.sum(fast ** 2)
    ok(kept >= 0.95, f"hyperbola at 2000 m/s keeps {100 * kept:.1f} % of its energy (>= 95)")
    both = run_record(slow + fast, DT, offe, [step], spacing=DX, omin=0, omax=400)
    ok(both is not None and np.allclose(both, out_slow + out_fast, atol=1e-4 * np.max(np.abs(fast))),
       "the filter is linear (sum of the outputs = output of the sum)")
else:
    ok(False, "f-k runs on the synthetic record")

# Offsets outside the line's grid and reversed fans are refused.
p = subprocess.run([DRIVER, "-r", os.path.join(WORK, "rec_offsets.txt"), "2", "-50", "50", "-",
                    "0", "0", "0.002", str(NSL), os.path.join(WORK, "rec_in.f32"),
                    os.path.join(WORK, "rec_bad.f32"), step], capture_output=True, text=True)
ok(p.returncode == 1 and "outside the line's offset range" in p.stderr,
   "a trace outside the line's offset grid is refused", p.stderr.strip())
p = subprocess.run([DRIVER, "-", "0", "0", "0.002", str(NSL), os.path.join(WORK, "rec_in.f32"),
                    os.path.join(WORK, "rec_bad.f32"), "fkreject:600,0,10,0"],
                   capture_output=True, text=True)
ok(p.returncode == 1 and "reversed" in p.stderr, "reversed fan velocities refused", p.stderr.strip())

done()
