"""test_interp -- sinc8 and linear interpolation error inside NMO, against analytic values.

A band-limited signal (a sum of unit cosines with random phases at frequencies up to
half the Nyquist frequency) is sampled exactly, corrected by the library through the
driver build/tests/nmo_driver (constant velocity, one trace), and compared with the
same analytic signal evaluated at the exact moveout time t = sqrt(t0^2 + x^2/v^2)
(Yilmaz 2001, hyperbolic moveout) in float64 NumPy. No tzero output is used as a reference.
Stated bound (docs/nmo.md): sinc8 error <= 0.006 per unit cosine amplitude for
content up to 0.5 Nyquist; linear interpolation is far worse there (its error for
a cosine of angular frequency w per sample is up to 1 - cos(w/2), 0.29 at 0.5 Nyquist).
"""
import os
import subprocess

import numpy as np

from tzcheck import WORK, TZERO, ok, done

DRIVER = os.path.join(os.path.dirname(TZERO), "tests", "nmo_driver")
DT, NS, V, X = 0.004, 1000, 2000.0, 1000.0
fny = 0.5 / DT
rng = np.random.default_rng(7)

table = os.path.join(WORK, "vc.csv")
with open(table, "w") as f:
    f.write("cmp,time_ms,velocity_mps\n1,0,%g\n" % V)

cases = {
    "0.5 Nyquist tone": [(0.5 * fny, 0.4)],
    "tones <= 0.5 Nyquist": [(f, p) for f, p in zip(rng.uniform(0.05, 0.5, 6) * fny,
                                                     rng.uniform(0, 2 * np.pi, 6))],
}
t_in = DT * np.arange(NS)
t0 = DT * np.arange(NS)
t_map = np.sqrt(t0 ** 2 + X ** 2 / V ** 2)
usable = t_map / DT <= NS - 6          # keep the 8-point window inside the trace
for name, tones in cases.items():
    sig = lambda t: sum(np.cos(2 * np.pi * f * t + p) for f, p in tones)
    amp = len(tones)
    fin, foff = os.path.join(WORK, "s.f32"), os.path.join(WORK, "o.f32")
    sig(t_in).astype(np.float32).tofile(fin)
    np.array([X], dtype=np.float32).tofile(foff)
    err = {}
    for interp in ("linear", "sinc8"):
        fout, fw = os.path.join(WORK, "so.f32"), os.path.join(WORK, "sw.f32")
        p = subprocess.run([DRIVER, table, *map(str, [1, 0, DT, NS, interp, 0, 0, fin, foff, fout, fw])],
                           capture_output=True, text=True)
        if not ok(p.returncode == 0, f"driver runs ({name}, {interp})", p.stderr.strip()):
            continue
        got = np.fromfile(fout, dtype=np.float32)
        err[interp] = np.abs(got - sig(t_map))[usable].max() / amp
    if len(err) == 2:
        ok(err["sinc8"] < 0.006, f"{name}: sinc8 error {err['sinc8']:.5f} per unit amplitude "
           "is below the stated bound 0.006")
        ok(err["linear"] > 4 * err["sinc8"], f"{name}: linear error {err['linear']:.5f} is "
           f"more than 4x sinc8's {err['sinc8']:.5f}")
done()
