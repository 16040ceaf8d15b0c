"""test_migrate.py -- `tzero migrate` against published laws of time migration and an
independent NumPy phase shift.

Sections are written with segyio (Debian python3-segyio) from events modelled here in
NumPy, never by tzero:
- the zero-offset time of a plane reflector of true dip theta under constant velocity v is
  t(x) = 2 z(x) cos(theta) / v (normal-incidence ray), so the unmigrated time slope is
  2 sin(theta) / v and the migrated one 2 tan(theta) / v (the migrator's equation,
  Chun & Jacewitz 1981, Geophysics 46, 717-733; 0.57735 ms/m for 30 deg at 2000 m/s);
- a point diffractor at vertical time tau0 under x0 gives the straight-ray diffraction
  curve t^2 = tau0^2 + 4 (x - x0)^2 / v_rms^2 (Yilmaz 2001, Seismic Data Analysis, ch. 4,
  from memory), carrying the wavelet half-differentiated as the 2D exploding-reflector
  model gives it (Loewenthal et al. 1976; spectrum times sqrt(i w) in NumPy's FFT
  convention, amplitude falling as 1 / sqrt(t));
- a flat reflector keeps its time, wavelet and amplitude (common practice: the identity a
  time migration must preserve for zero dip);
- the impulse response of constant-velocity time migration is the same curve read the
  other way, tau^2 + 4 (x - x0)^2 / v^2 = t0^2 (Yilmaz 2001, ch. 4, from memory);
- operator aliasing of the Kirchhoff sum above f = 1 / (2 dx |dt/dx|) and its cure by
  triangle filtering at the local slope (Lumley, Claerbout & Bevc 1994, from memory).
The phase-shift cross-check is a NumPy implementation of Gazdag (1978), Geophysics 43,
1342-1351, written here with numpy.fft.
"""
import os
import subprocess

import numpy as np
import segyio

from tzcheck import TZERO, WORK, done, ok, run

DT = 0.004
NS = 376            # 0-1.5 s
DX = 12.5


def ricker(t, fp):
    a = (np.pi * fp * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def shifted(wavelet_fn, t_event, nt=NS, dt=DT, half_derivative=False):
    """A trace holding the wavelet centred at t_event, built in the frequency domain
    (exact sub-sample delay), optionally half-differentiated (sqrt(i w))."""
    n = 4 * nt
    t = np.arange(n) * dt
    w = wavelet_fn(np.where(t < n * dt / 2, t, t - n * dt))   # zero-phase, centred at 0
    W = np.fft.rfft(w)
    om = 2 * np.pi * np.fft.rfftfreq(n, dt)
    if half_derivative:
        W = W * np.sqrt(1j * om)
    return np.fft.irfft(W * np.exp(-1j * om * t_event), n)[:nt]


def write_section(path, data, cmp0=1, dx=DX, coords=True, cmps=None):
    ntr, ns = data.shape
    spec = segyio.spec()
    spec.format = 5
    spec.samples = np.arange(ns) * DT * 1000
    spec.tracecount = ntr
    with segyio.create(path, spec) as f:
        f.bin.update(hdt=int(DT * 1e6), hns=ns, format=5)
        for i in range(ntr):
            c = cmps[i] if cmps is not None else cmp0 + i
            h = {segyio.TraceField.CDP: c, segyio.TraceField.TRACE_SAMPLE_INTERVAL: int(DT * 1e6),
                 segyio.TraceField.TRACE_SAMPLE_COUNT: ns}
            if coords:
                h.update({segyio.TraceField.SourceGroupScalar: -100,
                          segyio.TraceField.CDP_X: int(round((500000 + (c - cmp0) * dx) * 100)),
                          segyio.TraceField.CDP_Y: 6000000 * 100})
            f.header[i] = h
            f.trace[i] = data[i].astype(np.float32)


def read_section(path):
    with segyio.open(path, ignore_geometry=True) as f:
        return np.array([f.trace[i] for i in range(f.tracecount)]), f


def write_velocity(path, rows):
    with open(path, "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n")
        for r in rows:
            fp.write("%d,%g,%g\n" % r)


def migrate(sec, vel, out, *extra, check=True):
    return run("migrate", sec, "--velocity", vel, "--out", out, "--quiet", *extra, check=check)


def corr(a, b):
    a = a - a.mean()
    b = b - b.mean()
    return float(np.dot(a, b) / np.sqrt(np.dot(a, a) * np.dot(b, b)))


def envelope(d):
    n = d.shape[-1]
    D = np.fft.fft(d, axis=-1)
    h = np.zeros(n)
    h[0] = 1
    h[1:(n + 1) // 2] = 2
    if n % 2 == 0:
        h[n // 2] = 1
    return np.abs(np.fft.ifft(D * h, axis=-1))


def numpy_phase_shift(data, dx, dt, vrms):
    """Gazdag (1978) phase shift in NumPy: v(tau) interval velocities by Dix from the RMS
    function vrms (one value per sample); padding in CMPs and time as any implementation
    needs; the image at tau is the sum over frequencies. The first and last traces are
    tapered as tzero documents (docs/migration.md: a cosine over min(20, traces / 10)
    traces at each end), so both migrate the same section."""
    ntr, ns = data.shape
    nt_ = min(20, ntr // 10)
    data = data.copy()
    for e in range(nt_):
        w = 0.5 - 0.5 * np.cos(np.pi * (e + 0.5) / nt_)
        data[e] *= w
        data[ntr - 1 - e] *= w
    nxp = 2 * ntr
    ntp = 2 * ns
    P = np.fft.fft(np.fft.rfft(np.pad(data, ((0, nxp - ntr), (0, ntp - ns))), axis=1), axis=0)
    om = 2 * np.pi * np.fft.rfftfreq(ntp, dt)
    kx = 2 * np.pi * np.fft.fftfreq(nxp, dx)
    t = np.arange(ns) * dt
    vint = np.empty(ns)
    vint[0] = vrms[0]
    for j in range(1, ns):
        v2 = (vrms[j] ** 2 * t[j] - vrms[j - 1] ** 2 * t[j - 1]) / dt
        vint[j] = np.sqrt(v2) if v2 > 0 else vint[j - 1]
    c = np.full(om.size, 2.0)
    c[0] = 1
    if ntp % 2 == 0:
        c[-1] = 1
    W, K = np.meshgrid(om, kx)
    phi = np.zeros(W.shape)
    alive = np.ones(W.shape, bool)
    img = np.zeros((nxp, ns), complex)
    for j in range(ns):
        if j > 0:
            arg = W ** 2 - (vint[j] * K / 2) ** 2
            alive &= arg > 0
            phi = phi + dt * np.sqrt(np.where(alive, arg, 0))
        img[:, j] = (P * np.exp(1j * phi) * alive * c).sum(axis=1)
    return np.real(np.fft.ifft(img, axis=0))[:ntr] / ntp


def main():
    d = os.path.join(WORK, "mig")
    os.makedirs(d, exist_ok=True)
    v2000 = os.path.join(d, "v2000.csv")
    write_velocity(v2000, [(1, 0, 2000), (1, 1500, 2000)])

    # --- independent NumPy phase shift on a section with a diffractor and a dip, v(t)
    ntr = 161
    vlin = os.path.join(d, "vlin.csv")
    write_velocity(vlin, [(1, 0, 1800), (1, 1500, 2600)])
    t = np.arange(NS) * DT
    vr = 1800 + (2600 - 1800) * t / 1.5
    sec = np.zeros((ntr, NS))
    x = np.arange(ntr) * DX
    x0, tau0 = x[80], 0.6
    vr0 = np.interp(tau0, t, vr)
    for i in range(ntr):
        td = np.sqrt(tau0 ** 2 + 4 * (x[i] - x0) ** 2 / vr0 ** 2)
        sec[i] += shifted(lambda s: ricker(s, 25), td, half_derivative=True) / np.sqrt(td)
        sec[i] += 0.5 * shifted(lambda s: ricker(s, 25), 0.3 + 0.0004 * x[i])
    p = os.path.join(d, "mixed.sgy")
    write_section(p, sec)
    out = os.path.join(d, "mixed_ps.sgy")
    r = migrate(p, vlin, out, "--threads", "2")
    ref = numpy_phase_shift(sec, DX, DT, vr)
    got, _ = read_section(out)
    c = corr(got[10:-10].ravel(), ref[10:-10].ravel())
    ok(r.returncode == 0 and c >= 0.999,
       "phase shift agrees with an independent NumPy phase shift (Gazdag 1978) at "
       "correlation >= 0.999 (%.6f)" % c, "correlation %.5f" % c)

    # --- bitwise identity for any thread count, both methods
    for method in ("phase-shift", "kirchhoff"):
        outs = []
        for n in (1, 2, 3):
            o = os.path.join(d, "thr_%s_%d.sgy" % (method, n))
            migrate(p, vlin, o, "--method", method, "--threads", str(n), "--aperture-m", "800")
            outs.append(open(o, "rb").read() if os.path.exists(o) else b"")
        ok(outs[0] and outs[0] == outs[1] == outs[2],
           "%s: the same bits with 1, 2 and 3 threads (common practice: determinism)" % method)

    # --- a flat reflector keeps its time, wavelet and amplitude
    ntr = 121
    flat = np.array([shifted(lambda s: ricker(s, 25), 0.7) for _ in range(ntr)])
    pf = os.path.join(d, "flat.sgy")
    write_section(pf, flat)
    for method in ("phase-shift", "kirchhoff"):
        of = os.path.join(d, "flat_%s.sgy" % method)
        migrate(pf, v2000, of, "--method", method)
        g, _ = read_section(of)
        mid = g[40:81]
        jpk = np.argmax(np.abs(mid), axis=1)
        win = slice(int(0.7 / DT) - 15, int(0.7 / DT) + 16)
        cc = min(corr(mid[i, win], flat[0, win]) for i in range(mid.shape[0]))
        amp = np.max(np.abs(mid), axis=1) / np.max(np.abs(flat[0]))
        ok(np.all(np.abs(jpk - 0.7 / DT) <= 1) and cc >= 0.99 and np.all(np.abs(amp - 1) <= 0.05),
           "%s: a flat reflector keeps its time (1 sample), wavelet (corr >= 0.99) and "
           "amplitude (5 %%)" % method,
           "peak samples %s, min corr %.4f, amplitude %.3f-%.3f" %
           (sorted(set(jpk.tolist())), cc, amp.min(), amp.max()))

    # --- the dip law: 30 deg true dip at 2000 m/s
    ntr = 241
    theta = np.radians(30)
    x = np.arange(ntr) * DX
    z = 300 + x * np.tan(theta) * 0.5          # gentle start, then 30 deg (see below)
    z = 200 + x * np.tan(theta)
    t_zo = 2 * z * np.cos(theta) / 2000
    dip = np.array([shifted(lambda s: ricker(s, 30), tz) if tz < 1.45 else np.zeros(NS)
                    for tz in t_zo])
    pd = os.path.join(d, "dip.sgy")
    write_section(pd, dip)
    unmig_slope = np.polyfit(x[20:100], t_zo[20:100], 1)[0]
    ok(abs(unmig_slope * 1e3 - 0.5) < 1e-9, "modelled unmigrated slope is 2 sin(30)/v = 0.5 ms/m")
    for method in ("phase-shift", "kirchhoff"):
        od = os.path.join(d, "dip_%s.sgy" % method)
        migrate(pd, v2000, od, "--method", method, "--max-dip-deg", "45")
        g, _ = read_section(od)
        xs, ts = [], []
        for i in range(60, 140):
            tr = g[i]
            j = int(np.argmax(tr))
            if 1 <= j < NS - 1:
                a, b, cq = tr[j - 1], tr[j], tr[j + 1]
                frac = 0.5 * (a - cq) / (a - 2 * b + cq) if a - 2 * b + cq != 0 else 0
                xs.append(x[i])
                ts.append((j + frac) * DT)
        slope = np.polyfit(xs, ts, 1)[0] * 1e3
        want = 2 * np.tan(theta) / 2000 * 1e3
        pred = 2 * z[100] / 2000                   # migrated time under x[100]
        got_t = ts[xs.index(x[100])]
        ok(abs(slope - want) / want <= 0.01 and abs(got_t - pred) <= DT,
           "%s: 30 deg dip migrates to slope 2 tan(theta)/v = 0.57735 ms/m within 1 %% "
           "(Chun & Jacewitz 1981) at the right place within one sample" % method,
           "slope %.5f ms/m, time under CMP 101 %.4f s (want %.4f)" % (slope, got_t, pred))

    # --- point diffractors collapse: constant v and v(t)
    ntr = 201
    x = np.arange(ntr) * DX
    for label, vel, vfun in (("constant velocity", v2000, lambda tt: 2000 + 0 * tt),
                             ("v(t)", vlin, lambda tt: 1800 + 800 * tt / 1.5)):
        sec = np.zeros((ntr, NS))
        x0, tau0 = x[100], 0.8
        vv = vfun(tau0)
        for i in range(ntr):
            td = np.sqrt(tau0 ** 2 + 4 * (x[i] - x0) ** 2 / vv ** 2)
            if td < 1.48:
                sec[i] = shifted(lambda s: ricker(s, 25), td, half_derivative=True) / np.sqrt(td)
        ps = os.path.join(d, "diff.sgy")
        write_section(ps, sec)
        for method in ("phase-shift", "kirchhoff"):
            o = os.path.join(d, "diff_%s.sgy" % method)
            migrate(ps, vel, o, "--method", method)
            g, _ = read_section(o)
            env = envelope(g)
            ip, jp = np.unravel_index(np.argmax(env), env.shape)
            e = g ** 2
            near = e[100 - 3:100 + 4, int(tau0 / DT) - 6:int(tau0 / DT) + 7].sum()
            frac = near / e.sum()
            ok(abs(ip - 100) <= 1 and abs(jp - tau0 / DT) <= 1 and frac >= 0.85,
               "%s, %s: a point diffractor collapses (envelope peak within 1 CMP and 1 sample "
               "of the apex, >= 85 %% of the energy within +-3 CMPs and +-24 ms)" % (method, label),
               "peak at trace %d sample %d, %.1f %% of the energy near the apex" %
               (ip, jp, 100 * frac))

    # --- Kirchhoff honours a table that varies along the line
    vlat = os.path.join(d, "vlat.csv")
    write_velocity(vlat, [(1, 0, 1700), (1, 1500, 1700), (201, 0, 2500), (201, 1500, 2500)])
    sec = np.zeros((ntr, NS))
    apexes = (50, 150)
    for ia in apexes:
        vv = 1700 + 800 * ia / 200
        for i in range(ntr):
            td = np.sqrt(0.7 ** 2 + 4 * (x[i] - x[ia]) ** 2 / vv ** 2)
            if td < 1.48:
                sec[i] += shifted(lambda s: ricker(s, 25), td, half_derivative=True) / np.sqrt(td)
    pl = os.path.join(d, "lat.sgy")
    write_section(pl, sec)
    o = os.path.join(d, "lat_k.sgy")
    migrate(pl, vlat, o, "--method", "kirchhoff", "--aperture-m", "900")
    g, _ = read_section(o)
    e = g ** 2
    fr = [e[ia - 3:ia + 4, int(0.7 / DT) - 6:int(0.7 / DT) + 7].sum() / e[ia - 45:ia + 46].sum()
          for ia in apexes]
    ok(min(fr) >= 0.85, "kirchhoff: diffractors under 1800 and 2300 m/s both collapse with a "
       "table varying along the line (>= 85 %% of their energy near the apex)",
       "%s" % ["%.2f" % f for f in fr])
    r = run("migrate", pl, "--velocity", vlat, "--out", os.path.join(d, "lat_ps.sgy"))
    ok(r.returncode == 0 and "one function" in r.stderr and "kirchhoff" in r.stderr,
       "phase shift says it used one function when the table varies along the line",
       r.stderr.strip()[:200])

    # --- impulse response on the curve tau^2 + 4 (x - x0)^2 / v^2 = t0^2, to the dip limit
    sec = np.zeros((ntr, NS))
    sec[100] = shifted(lambda s: ricker(s, 20), 1.0)
    pi_ = os.path.join(d, "imp.sgy")
    write_section(pi_, sec)
    o = os.path.join(d, "imp_k.sgy")
    migrate(pi_, v2000, o, "--method", "kirchhoff", "--max-dip-deg", "60", "--no-antialias")
    g, _ = read_section(o)
    env = envelope(g)
    bad = []
    for i in range(100 - 30, 100 + 31, 5):
        h = abs(x[i] - x[100])
        tau = np.sqrt(max(1.0 - 4 * h * h / 2000 ** 2, 0))
        if h > 0.5 * 2000 * tau * np.tan(np.radians(60)) * 0.9:
            continue
        jp = int(np.argmax(env[i]))
        if abs(jp - tau / DT) > 1:
            bad.append((i, jp, round(tau / DT, 1)))
    ok(not bad, "kirchhoff: a single spike migrates onto tau^2 + 4 (x - x0)^2 / v^2 = t0^2 "
       "within one sample, up to the dip limit", str(bad))

    # --- operator anti-aliasing: a steep event at a coarse CMP spacing
    coarse = 25.0
    ntr = 121
    xc = np.arange(ntr) * coarse
    sec = np.array([shifted(lambda s: ricker(s, 40), 0.2 + 0.0008 * xi) if 0.2 + 0.0008 * xi < 1.45
                    else np.zeros(NS) for xi in xc])
    pa = os.path.join(d, "steep.sgy")
    write_section(pa, sec, dx=coarse)
    energies = {}
    for flag in ("on", "off"):
        o = os.path.join(d, "steep_%s.sgy" % flag)
        migrate(pa, v2000, o, "--method", "kirchhoff", "--max-dip-deg", "60",
                *(["--no-antialias"] if flag == "off" else []))
        g, _ = read_section(o)
        # energy well ahead of (above) the migrated event: tau < migrated time - 60 ms
        tmig = (0.2 + 0.0008 * xc) * np.cos(np.arctan(0.0008 * 2000 / 2))
        mask = np.arange(NS)[None, :] * DT < (tmig[:, None] - 0.06)
        energies[flag] = float((g[20:100] ** 2 * mask[20:100]).sum() / (g[20:100] ** 2).sum())
    ok(energies["on"] * 3 <= energies["off"],
       "kirchhoff: anti-aliasing cuts the aliased noise ahead of a steep event at 25 m CMPs "
       "by at least a factor 3 (Lumley, Claerbout & Bevc 1994)",
       "fraction of energy ahead: %.4f with, %.4f without" % (energies["on"], energies["off"]))

    # --- headers kept, textual header names method, velocity and percentage
    with segyio.open(pf, ignore_geometry=True) as fi, \
            segyio.open(os.path.join(d, "flat_kirchhoff.sgy"), ignore_geometry=True) as fo:
        same = all(fi.header[i][segyio.TraceField.CDP] == fo.header[i][segyio.TraceField.CDP] and
                   fi.header[i][segyio.TraceField.CDP_X] == fo.header[i][segyio.TraceField.CDP_X]
                   for i in range(fi.tracecount))
        text = segyio.tools.wrap(fo.text[0]) if hasattr(segyio.tools, "wrap") else str(fo.text[0])
    ok(same, "output traces keep the input's CMP numbers and coordinates (segyio)")
    ok("kirchhoff" in text and "v2000.csv" in text and "100 %" in text,
       "textual header names method, velocity table and percentage", text[:200])

    # --- velocity scan panels carry their percentage
    o = os.path.join(d, "scan.sgy")
    r = migrate(pd, v2000, o, "--scan", "90,100,110", "--cmps", "50-150")
    with segyio.open(o, ignore_geometry=True) as f:
        n = f.tracecount
        pcts = sorted(set(int.from_bytes(f.header[i].buf[232:236], "big", signed=True)
                          for i in range(n))) if hasattr(f.header[0], "buf") else []
    ok(r.returncode == 0 and n == 3 * 101, "--scan 90,100,110 --cmps 50-150 writes three panels of "
       "101 CMPs", "%d traces" % n)
    if pcts:
        ok(pcts == [9000, 10000, 11000], "scan panels carry 100 x the percentage in bytes 233-236",
           str(pcts))

    # --- bad input: 65 (66 for a missing file), nothing written
    bad_out = os.path.join(d, "bad.sgy")
    pre = os.path.join(d, "prestack.sgy")
    write_section(pre, flat[:10], cmps=[1, 1, 2, 2, 3, 3, 4, 4, 5, 5])
    dec = os.path.join(d, "decreasing.sgy")
    write_section(dec, flat[:10], cmps=[10, 9, 8, 7, 6, 5, 4, 3, 2, 1])
    other = os.path.join(d, "other_line.csv")
    write_velocity(other, [(5000, 0, 2000), (5000, 1000, 2200), (6000, 0, 2000)])
    nocoord = os.path.join(d, "nocoord.sgy")
    write_section(nocoord, flat[:10], coords=False)
    cases = [
        ("a prestack file (several traces per CMP)", [pre, "--velocity", v2000], 65),
        ("CMP numbers that do not increase", [dec, "--velocity", v2000], 65),
        ("a velocity table that does not cover the line", [pf, "--velocity", other], 65),
        ("a velocity percentage of 0", [pf, "--velocity", v2000, "--velocity-pct", "0"], 65),
        ("a velocity percentage of 500", [pf, "--velocity", v2000, "--velocity-pct", "500"], 65),
        ("an aperture smaller than the CMP spacing",
         [pf, "--velocity", v2000, "--method", "kirchhoff", "--aperture-m", "5"], 65),
        ("a section without coordinates and no --cmp-interval-m", [nocoord, "--velocity", v2000], 65),
        ("a missing section", [os.path.join(d, "none.sgy"), "--velocity", v2000], 66),
        ("a missing velocity table", [pf, "--velocity", os.path.join(d, "none.csv")], 66),
    ]
    for desc, args, want in cases:
        r = run("migrate", *args, "--out", bad_out, check=False)
        ok(r.returncode == want and not os.path.exists(bad_out) and r.stderr.strip(),
           "bad input: %s is exit %d with a message, nothing written" % (desc, want),
           "exit %d: %s" % (r.returncode, r.stderr.strip()[:160]))
    r = run("migrate", nocoord, "--velocity", v2000, "--cmp-interval-m", "12.5", "--out",
            os.path.join(d, "nc.sgy"))
    ok(r.returncode == 0, "--cmp-interval-m gives the spacing when the headers have none")
    done()


if __name__ == "__main__":
    main()
