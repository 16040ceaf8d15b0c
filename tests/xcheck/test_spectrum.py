"""test_spectrum -- `tzero spectrum` against formulas and an independent NumPy spectrum.

The shot file is written with segyio (Debian python3-segyio), independent of tzero.
Checks and sources:
  - a pure sinusoid's spectrum peaks at its frequency, within half a frequency step
    (Fourier analysis; the step is 1 / (nfft dt), nfft the documented padding);
  - a Ricker wavelet's amplitude spectrum is f^2 exp(-f^2 / f_p^2), peaking at f_p
    (Ricker 1953): the normalised curve within 1 % of it;
  - the whole averaged curve equals NumPy's np.fft.rfft of the same tapered,
    zero-padded windows (docs/spectra.md), 1e-5 of the peak;
  - selections by record, channel, |offset| and time window pick the traces and
    samples named; dead and auxiliary traces are left out.
"""
import json
import os

import numpy as np
import segyio

import tzcheck as tz
from tzcheck import WORK, fast_size, ok, done

NS, DT = 1000, 0.002
t = np.arange(NS) * DT


def ricker(tt, fp):
    a = (np.pi * fp * tt) ** 2
    return (1 - 2 * a) * np.exp(-a)


rng = np.random.default_rng(7)
traces = []   # (record, channel, offset, kind, samples)
for ch in range(1, 5):
    traces.append((1, ch, 50.0 * ch, 1, 2.0 * np.sin(2 * np.pi * 37.5 * t + 0.3 * ch)))
for ch in range(1, 5):
    traces.append((2, ch, 50.0 * ch, 1, ricker(t - 0.4 - 0.05 * ch, 30.0)))
traces.append((2, 5, 250.0, 1, np.zeros(NS)))                    # dead
traces.append((2, 6, 300.0, 4, rng.standard_normal(NS)))          # time break (aux)
for ch in range(1, 7):
    traces.append((3, ch, -40.0 * ch, 1, rng.standard_normal(NS)))
path = os.path.join(WORK, "spectra.sgy")
spec = segyio.spec()
spec.samples = list(range(NS))
spec.format = 5
spec.tracecount = len(traces)
with segyio.create(path, spec) as f:
    f.bin.update(hdt=int(DT * 1e6), hns=NS, format=5)
    F = segyio.TraceField
    for i, (rec, ch, off, kind, x) in enumerate(traces):
        f.header[i] = {F.TRACE_SEQUENCE_LINE: i + 1, F.FieldRecord: rec, F.TraceNumber: ch,
                       F.TraceIdentificationCode: kind, F.offset: int(off),
                       F.TRACE_SAMPLE_COUNT: NS, F.TRACE_SAMPLE_INTERVAL: int(DT * 1e6)}
        f.trace[i] = x.astype(np.float32)




def tukey(n, pct):
    m = pct / 100 * n
    d = np.minimum(np.arange(n), n - 1 - np.arange(n)) + 0.5
    return np.where(d >= m, 1.0, 0.5 * (1 - np.cos(np.pi * d / max(m, 1e-30))))


def numpy_spectrum(xs, pct):
    n = xs.shape[1]
    nfft = fast_size(max(2 * n, 64))
    a = np.mean(np.abs(np.fft.rfft(xs * tukey(n, pct), nfft)), axis=0)
    return a / a.max(), 1 / (nfft * DT)


def spectrum(*args):
    p = tz.run("spectrum", "--json", *args, path)
    return json.loads(p.stdout) if p.returncode == 0 else None


r = spectrum("--records", "1")
if ok(r is not None, "spectrum of the sinusoid record runs"):
    df = r["frequency_step_hz"]
    ok(abs(r["peak_hz"] - 37.5) <= df / 2, f"sinusoid: peak {r['peak_hz']:.3f} Hz within "
       f"{df / 2:.3f} Hz of 37.5 Hz")
    ok(r["traces"] == 4, f"4 traces averaged ({r['traces']})")
    a = np.array(r["amplitude"])
    want, _ = numpy_spectrum(np.array([x for (rec, _c, _o, _k, x) in traces if rec == 1]), 10)
    err = np.max(np.abs(a - want))
    ok(err < 1e-5, f"sinusoid spectrum = NumPy rfft of the tapered windows ({err:.2g})")

r = spectrum("--records", "2", "--taper-pct", "20")
if ok(r is not None, "spectrum of the Ricker record runs"):
    f = np.array(r["frequency_hz"])
    a = np.array(r["amplitude"])
    ok(abs(r["peak_hz"] - 30.0) <= r["frequency_step_hz"], f"Ricker: peak {r['peak_hz']:.3f} Hz "
       f"at f_p = 30 Hz (within one step {r['frequency_step_hz']:.3f})")
    R = f ** 2 * np.exp(-(f ** 2) / 30.0 ** 2)
    R /= R.max()
    sel = f <= 120
    dev = np.max(np.abs(a[sel] - R[sel]))
    ok(dev < 0.01, f"Ricker spectrum = f^2 exp(-f^2/f_p^2) within {dev:.4f} (< 0.01)")
    ok(r["traces"] == 4 and r["traces_dead"] == 1,
       f"dead trace left out and counted, aux trace ignored ({r['traces']}, {r['traces_dead']})")
    want, _ = numpy_spectrum(np.array([x for (rec, _c, _o, k, x) in traces
                                       if rec == 2 and k == 1 and np.any(x)]), 20)
    ok(np.max(np.abs(a - want)) < 1e-5, "Ricker record = NumPy rfft average")

# Selections: channels, |offset| range and a time window.
r = spectrum("--records", "3", "--channels", "2-3,6", "--offsets", "70:200", "--window", "100:1100")
if ok(r is not None, "selection by channel, offset and window runs"):
    pick = np.array([x[50:551] for (rec, ch, off, _k, x) in traces
                     if rec == 3 and ch in (2, 3, 6) and 70 <= abs(off) <= 200])
    ok(r["traces"] == len(pick) == 2, f"channels 2-3,6 within 70-200 m: {r['traces']} traces")
    ok(r["window_samples"] == 501 and abs(r["window_start_ms"] - 100) < 1e-9,
       f"window 100-1100 ms is samples 50-550 ({r['window_samples']})")
    want, _ = numpy_spectrum(pick, 10)
    ok(np.max(np.abs(np.array(r["amplitude"]) - want)) < 1e-5, "selected traces = NumPy")

p = tz.run("spectrum", "--records", "99", path, check=False)
ok(p.returncode == 64 and "no live data trace" in p.stderr, "a selection of nothing is 64",
   p.stderr.strip())

done()
