"""test_poststack -- `tzero condition` (post-stack conditioning) against NumPy and SciPy.

Sections are built here in NumPy and written with segyio (Debian python3-segyio);
tzero conditions them; the results are read back with segyio and measured here.
  - f-x prediction filtering (Canales, L. L., 1984, "Random noise reduction", 54th
    SEG Annual Meeting, Expanded Abstracts): a section with a flat event and one of
    20 degrees true dip (unmigrated time dip 2 sin(theta) / v, the zero-offset slope
    of Chun & Jacewitz 1981, Geophysics 46, 717-733, at v = 2000 m/s), Ricker
    wavelets (Ricker 1953), plus random noise of the same amplitude spectrum scaled
    to signal-to-noise 1 (RMS of the noise-free section over RMS of the noise, both
    over the whole section). Required by the issue: the ratio rises by >= 6 dB and
    each event keeps >= 90 % of its amplitude (least-squares gain of the output on
    the noise-free event over the event's samples).
  - time-variant band-pass: each window's zero-phase trapezoid (Ormsby 1961) applied
    with scipy.fft.rfft / irfft to the trace zero-padded to the documented length
    (smallest 2^a 3^b 5^c >= 2 ns), then blended with the documented weights (linear
    cross-fade over the overlap of adjacent windows, filters held before the first
    window and after the last: docs/poststack.md), computed here from that text.
  - balance: RMS in the window equals the target (definition, common practice).
  - AGC: x / (RMS over a centred box of 2h + 1 samples, cut at the ends, + 1e-6 of
    the trace's RMS), h = round(window / (2 dt)) (docs/conditioning.md).
  - headers: CMP numbers (21-24), fold (33-34), CMP X/Y (181-188), trace kind
    (29-30) read back equal to the input's; a dead trace (kind 2) stays zero.
"""
import json
import os

import numpy as np
import scipy.fft
import segyio

import tzcheck as tz
from tzcheck import WORK, ok, done, run

TF = segyio.TraceField


def write_section(path, data, dt, kinds=None):
    ntr, ns = data.shape
    spec = segyio.spec()
    spec.format = 5
    spec.samples = np.arange(ns) * dt * 1000
    spec.tracecount = ntr
    with segyio.create(path, spec) as f:
        f.bin.update(hdt=int(round(dt * 1e6)), hns=ns, format=5)
        for i in range(ntr):
            f.header[i] = {TF.CDP: 101 + i, TF.TRACE_SAMPLE_INTERVAL: int(round(dt * 1e6)),
                           TF.TRACE_SAMPLE_COUNT: ns, TF.NStackedTraces: 10 + i % 7,
                           TF.TraceIdentificationCode: kinds[i] if kinds is not None else 1,
                           TF.SourceGroupScalar: -100,
                           TF.CDP_X: int(round((500000 + 12.5 * i) * 100)),
                           TF.CDP_Y: 6000000 * 100}
            f.trace[i] = data[i].astype(np.float32)


def read_section(path):
    with segyio.open(path, ignore_geometry=True) as f:
        data = np.array([f.trace[i] for i in range(f.tracecount)], dtype=np.float64)
        heads = [(f.header[i][TF.CDP], f.header[i][TF.NStackedTraces], f.header[i][TF.CDP_X],
                  f.header[i][TF.CDP_Y], f.header[i][TF.TraceIdentificationCode])
                 for i in range(f.tracecount)]
        text = bytes(f.text[0]).decode("ascii", "replace")   # segyio decodes the EBCDIC
    return data, heads, text


def condition(src, steps, out, check=True):
    sp = os.path.join(WORK, os.path.basename(out) + ".steps.json")
    with open(sp, "w") as fp:
        json.dump(steps, fp)
    return run("condition", src, "--steps", sp, "--out", out, "--quiet", check=check)


def ricker(t, f):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def trapezoid(f, c):
    f = np.abs(f)
    f1, f2, f3, f4 = c
    return np.select([(f > f1) & (f < f2), (f >= f2) & (f <= f3), (f > f3) & (f < f4)],
                     [(f - f1) / (f2 - f1), 1.0, (f4 - f) / (f4 - f3)], 0.0)


# ---------------------------------------------------------------- f-x prediction
def fx_check():
    rng = np.random.default_rng(23)
    ntr, ns, dt, dx, v, fp = 160, 500, 0.004, 12.5, 2000.0, 25.0
    t = np.arange(ns) * dt
    x = np.arange(ntr) * dx
    p = 2 * np.sin(np.radians(20)) / v          # s/m, unmigrated zero-offset slope
    flat = np.array([ricker(t - 0.6, fp) for _ in range(ntr)])
    dip = np.array([ricker(t - (0.9 + p * xi), fp) for xi in x])
    S = flat + dip
    Z = rng.standard_normal((ntr, ns))
    f = np.fft.rfftfreq(ns, dt)
    N = np.fft.irfft(np.fft.rfft(Z, axis=1) * (f ** 2 * np.exp(-f ** 2 / fp ** 2)), ns, axis=1)
    N *= np.sqrt(np.mean(S ** 2) / np.mean(N ** 2))
    D = S + N
    src = os.path.join(WORK, "fx_in.sgy")
    out = os.path.join(WORK, "fx_out.sgy")
    write_section(src, D, dt)
    steps = [{"step": "fx_prediction", "window_traces": 20, "window_ms": 200,
              "operator_traces": 4, "prewhitening_pct": 1, "min_hz": 2, "max_hz": 90}]
    r = condition(src, steps, out)
    if not ok(r.returncode == 0, "f-x prediction runs"):
        return
    Y, heads, _ = read_section(out)
    snr_in = 10 * np.log10(np.sum(S ** 2) / np.sum((D - S) ** 2))
    snr_out = 10 * np.log10(np.sum(S ** 2) / np.sum((Y - S) ** 2))
    ok(abs(snr_in) < 0.01, "f-x test section: signal-to-noise 1 (0 dB) as built", f"{snr_in:.3f} dB")
    ok(snr_out - snr_in >= 6.0, "f-x prediction raises signal-to-noise by >= 6 dB (issue 23)",
       f"{snr_in:.2f} -> {snr_out:.2f} dB")
    print(f"# f-x: signal-to-noise {snr_in:.2f} dB -> {snr_out:.2f} dB")
    for name, e in (("flat", flat), ("20-degree", dip)):
        m = np.abs(e) > 0.05
        g = float(np.sum(Y[m] * e[m]) / np.sum(e[m] ** 2))
        ok(g >= 0.9, f"f-x prediction keeps >= 90 % of the {name} event's amplitude (issue 23)",
           f"gain {g:.3f}")
        print(f"# f-x: {name} event gain {g:.3f}")
    # noise-free input: the events pass (linear events are predictable, Canales 1984)
    clean = os.path.join(WORK, "fx_clean.sgy")
    write_section(clean, S, dt)
    condition(clean, steps, out)
    Yc, _, _ = read_section(out)
    err = np.sqrt(np.sum((Yc - S) ** 2) / np.sum(S ** 2))
    ok(err < 0.05, "f-x prediction of a noise-free section changes it by < 5 % RMS", f"{err:.4f}")
    print(f"# f-x: noise-free section changed by {err:.4f} RMS")
    # bins outside [min_hz, max_hz] pass: a 10 Hz sinusoid through a 40-45 Hz
    # prediction comes back but for what leaks into those bins from the 200 ms
    # windows (a sidelobe of a few per cent: common practice)
    sn = np.sin(2 * np.pi * 10 * t)[None, :] * rng.standard_normal((ntr, 1))
    src2 = os.path.join(WORK, "fx_band.sgy")
    write_section(src2, sn, dt)
    condition(src2, [{"step": "fx_prediction", "min_hz": 40, "max_hz": 45}], out)
    Yb, _, _ = read_section(out)
    e = np.sqrt(np.sum((Yb - sn) ** 2) / np.sum(sn ** 2))
    ok(e < 0.03, "f-x prediction leaves frequencies outside [min_hz, max_hz] as they were "
       "(docs/poststack.md)", f"RMS change {e:.4f}")
    print(f"# f-x: out-of-band sinusoid changed by {e:.4f} RMS")


# ---------------------------------------------------------------- time-variant band-pass
def blend_weights(win, t):
    """Documented blend: window k rises linearly over its overlap with k-1 and falls
    over its overlap with k+1; touching windows switch at the shared time."""
    n = len(win)
    W = np.ones((n, t.size))
    for k in range(n):
        if k > 0:
            a, b = win[k][0], win[k - 1][1]
            W[k] *= np.clip((t - a) / (b - a), 0, 1) if b > a else (t >= a)
        if k + 1 < n:
            a, b = win[k + 1][0], win[k][1]
            W[k] *= 1 - np.clip((t - a) / (b - a), 0, 1) if b > a else (t < a)
    return W


def bandpass_check():
    rng = np.random.default_rng(7)
    ntr, ns, dt = 6, 1000, 0.002
    t = np.arange(ns) * dt
    D = rng.standard_normal((ntr, ns))
    windows = [(0.0, 0.8, [8, 12, 60, 80]), (0.6, 1.4, [6, 10, 40, 55]),
               (1.4, 2.0, [4, 8, 25, 35])]
    steps = [{"step": "bandpass", "windows": [{"from_ms": a * 1e3, "to_ms": b * 1e3,
                                               "corners_hz": c} for a, b, c in windows]}]
    src = os.path.join(WORK, "bp_in.sgy")
    out = os.path.join(WORK, "bp_out.sgy")
    write_section(src, D, dt)
    if not ok(condition(src, steps, out).returncode == 0, "time-variant band-pass runs"):
        return
    Y, _, text = read_section(out)
    n = tz.fast_size(2 * ns)
    f = scipy.fft.rfftfreq(n, dt)
    F = scipy.fft.rfft(D, n, axis=1)
    W = blend_weights([(a, b) for a, b, _ in windows], t)
    ok(np.allclose(W.sum(axis=0), 1.0), "documented blend weights sum to 1 at every sample")
    R = np.zeros_like(D)
    for k, (_, _, c) in enumerate(windows):
        Yk = scipy.fft.irfft(F * trapezoid(f, c), n, axis=1)[:, :ns]
        R += W[k] * Yk
    e = np.max(np.abs(Y - R)) / np.max(np.abs(R))
    ok(e < 2e-5, "time-variant band-pass equals SciPy's per-window trapezoid filtering blended "
       "as documented", f"max error {e:.2e} of the peak")
    # outside the overlaps a single window's SciPy filter (before 600 ms: window 0)
    Y0 = scipy.fft.irfft(F * trapezoid(f, windows[0][2]), n, axis=1)[:, :ns]
    m = t < 0.6
    ok(np.max(np.abs(Y[:, m] - Y0[:, m])) < 2e-5 * np.max(np.abs(Y0)),
       "before the first overlap the output is window 0's filter alone (SciPy)")
    ok("poststack 1: bandpass 0-800 ms 8/12/60/80 Hz" in text,
       "the textual header lists the band-pass step", text[:200])


# ---------------------------------------------------------------- balance, AGC, headers
def balance_agc_check():
    rng = np.random.default_rng(3)
    ntr, ns, dt = 8, 600, 0.004
    D = rng.standard_normal((ntr, ns)) * (1 + np.arange(ntr))[:, None]
    kinds = [1] * ntr
    kinds[3] = 2
    D[3] = 0
    src = os.path.join(WORK, "bal_in.sgy")
    out = os.path.join(WORK, "bal_out.sgy")
    write_section(src, D, dt, kinds)
    steps = [{"step": "balance", "from_ms": 400, "to_ms": 1200, "target_rms": 2.5}]
    if not ok(condition(src, steps, out).returncode == 0, "balance runs"):
        return
    Y, heads, _ = read_section(out)
    i0, i1 = 100, 301   # samples with 400 <= t <= 1200 ms at 4 ms
    rms = np.sqrt(np.mean(Y[:, i0:i1] ** 2, axis=1))
    live = [i for i in range(ntr) if i != 3]
    ok(np.allclose(rms[live], 2.5, rtol=1e-5), "balance: RMS in the window equals target_rms",
       str(rms))
    ok(np.all(Y[3] == 0), "a dead trace (kind 2) stays zero")
    _, hin, _ = read_section(src)
    ok(heads == hin, "CMP numbers, fold, CMP X/Y and trace kinds read back as written (segyio)")
    steps = [{"step": "agc", "window_ms": 200}]
    condition(src, steps, out)
    Y, _, _ = read_section(out)
    h = int(np.floor(0.2 / (2 * dt) + 0.5))
    ref = np.zeros_like(D)
    for i in live:
        x = D[i]
        p = np.concatenate([[0], np.cumsum(x * x)])
        lo = np.clip(np.arange(ns) - h, 0, ns)
        hi = np.clip(np.arange(ns) + h + 1, 0, ns)
        lev = np.sqrt((p[hi] - p[lo]) / (hi - lo))
        eps = 1e-6 * np.sqrt(p[-1] / ns)
        ref[i] = x / (lev + eps)
    ok(np.max(np.abs(Y - ref)) < 1e-4 * np.max(np.abs(ref)), "agc matches the documented "
       "sliding-window RMS gain (NumPy)", f"{np.max(np.abs(Y - ref)):.2e}")


bandpass_check()
balance_agc_check()
fx_check()
done()
