"""test_fit_numpy -- `tzero fit` against NumPy's least-squares polyfit.

Reference: NumPy `np.polyfit(x**2, t**2, 1)` (Debian python3-numpy), the
x^2-t^2 method of Green (1938) (Sheriff's Encyclopedic Dictionary, X2-T2 analysis); exact
picks computed from the hyperbola (check value 22 of docs/references.md).
"""
import json
import os

import numpy as np

from tzcheck import WORK, done, ok, run


def write_picks(name, x, t_s):
    path = os.path.join(WORK, name)
    with open(path, "w") as f:
        f.write("# invented picks, Harrow Flats line 7\noffset_m,time_ms\n")
        for xi, ti in zip(x, t_s):
            f.write(f"{xi:.6f},{ti * 1000.0:.9f}\n")
    return path


def fit(path):
    p = run("fit", "--json", path)
    if p.returncode != 0:
        return None
    return json.loads(p.stdout)


# computed from Green 1938 (check value 22 of docs/references.md): exact picks, t0 = 1 s, v = 2000 m/s.
x = np.array([0, 500, 1000, 1500, 2000], float)
t = np.sqrt(1.0 + x**2 / 2000.0**2)
r = fit(write_picks("exact.csv", x, t))
ok(r is not None and abs(r["velocity_mps"] - 2000.0) < 2000e-6 and abs(r["t0_ms"] - 1000.0) < 1e-3,
   "exact hyperbola picks give v = 2000 m/s, t0 = 1000 ms (computed from Green 1938; check value 22 of docs/references.md)",
   str(r and (r["velocity_mps"], r["t0_ms"])))
ok(r is not None and abs(r["slope_s2_per_m2"] - 2.5e-7) < 2.5e-13,
   "slope 2.5e-7 s^2/m^2 (computed from Green 1938; check value 22 of docs/references.md)")

# Noisy picks on a split spread: compare coefficients with NumPy polyfit.
rng = np.random.default_rng(20261201)
for trial, (t0, v, sigma) in enumerate([(0.6, 1800.0, 0.002), (1.2, 2600.0, 0.004),
                                        (0.35, 1550.0, 0.001)]):
    x = np.linspace(-1500.0, 1500.0, 41)
    t = np.sqrt(t0**2 + x**2 / v**2) + rng.normal(0.0, sigma, x.size)
    path = write_picks(f"noisy{trial}.csv", x, t)
    r = fit(path)
    # NumPy reads back the same rounded values tzero reads.
    data = np.loadtxt(path, delimiter=",", comments="#", skiprows=2)
    xs, ts = data[:, 0], data[:, 1] / 1000.0
    b, a = np.polyfit(xs**2, ts**2, 1)
    if not ok(r is not None, f"fit runs on noisy picks {trial}"):
        continue
    ok(abs(r["slope_s2_per_m2"] - b) <= 1e-9 * abs(b) and abs(r["intercept_s2"] - a) <= 1e-9 * abs(a),
       f"noisy picks {trial}: slope and intercept match numpy.polyfit to 1e-9 relative",
       f"tzero {r['slope_s2_per_m2']}, {r['intercept_s2']}; numpy {b}, {a}")
    resid = ts - np.sqrt(a + b * xs**2)
    ok(abs(r["rms_residual_ms"] - 1000.0 * np.sqrt(np.mean(resid**2))) < 1e-6,
       f"noisy picks {trial}: RMS residual matches NumPy's")
    yhat = a + b * xs**2
    r2 = 1.0 - np.sum((ts**2 - yhat)**2) / np.sum((ts**2 - np.mean(ts**2))**2)
    ok(abs(r["r_squared"] - r2) < 1e-9, f"noisy picks {trial}: R^2 matches NumPy's")
    # Stated tolerance: with 41 picks and Gaussian timing noise sigma, the
    # recovered velocity is within 2 % and t0 within 2 sigma (common practice
    # for a well-conditioned straight-line fit).
    ok(abs(r["velocity_mps"] - v) < 0.02 * v and abs(r["t0_ms"] / 1000.0 - t0) < 2 * sigma,
       f"noisy picks {trial}: v within 2 % and t0 within 2 sigma of the true values",
       f"v {r['velocity_mps']:.1f} vs {v}, t0 {r['t0_ms']:.2f} ms vs {t0 * 1000}")

done()
