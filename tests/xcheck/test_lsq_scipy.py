"""test_lsq_scipy -- tzero's sparse least squares (LSQR) against SciPy and NumPy.

References: NumPy `numpy.linalg.lstsq` (dense SVD least squares) and SciPy
`scipy.sparse.linalg.lsqr` (Paige and Saunders 1982), Debian python3-numpy and
python3-scipy, on the same random sparse systems, solved by the library through
the tiny driver build/tests/lsq_driver (tests/unit/lsq_driver.c). The systems
include one shaped like a delay-time refraction problem (two delay unknowns and
path lengths through slowness cells per row, plus smoothing rows).
"""
import os
import subprocess

import numpy as np
import scipy.sparse
import scipy.sparse.linalg

from tzcheck import TZERO, WORK, done, ok

DRIVER = os.path.join(os.path.dirname(TZERO), "tests", "lsq_driver")


def solve(A, b, damp, scale):
    path = os.path.join(WORK, "system.txt")
    A = scipy.sparse.csr_matrix(A)
    with open(path, "w") as f:
        f.write(f"{A.shape[0]} {A.shape[1]}\n")
        for r in range(A.shape[0]):
            lo, hi = A.indptr[r], A.indptr[r + 1]
            items = " ".join(f"{A.indices[k]} {A.data[k]!r}" for k in range(lo, hi))
            f.write(f"{b[r]!r} {hi - lo} {items}\n")
    p = subprocess.run([DRIVER, path, repr(damp), str(scale)], capture_output=True, text=True)
    if p.returncode != 0:
        print("# " + p.stderr.strip())
        return None
    lines = p.stdout.split("\n")
    return np.array([float(v) for v in lines[:A.shape[1]]])


rng = np.random.default_rng(20261202)

# 1. Random sparse overdetermined full-rank systems: the unique least-squares
# solution from numpy.linalg.lstsq.
for trial, (m, n, dens) in enumerate([(300, 80, 0.05), (1000, 200, 0.02), (60, 60, 0.2)]):
    A = scipy.sparse.random(m, n, density=dens, random_state=trial + 1, format="csr")
    A = A + scipy.sparse.eye(m, n) * 0.5          # keep it full rank
    b = rng.normal(size=m)
    ref = np.linalg.lstsq(A.toarray(), b, rcond=None)[0]
    for scale in (0, 1):
        x = solve(A, b, 0.0, scale)
        err = np.max(np.abs(x - ref)) / np.max(np.abs(ref)) if x is not None else np.inf
        ok(err < 1e-8, f"random {m}x{n} system, column scaling {scale}: matches "
           f"numpy.linalg.lstsq", f"relative error {err:.3g}")

# 2. Damped problems: scipy.sparse.linalg.lsqr with the same damping, and the
# damped normal equations (A^T A + d^2 I) x = A^T b solved densely.
A = scipy.sparse.random(400, 120, density=0.03, random_state=7, format="csr")
b = rng.normal(size=400)
for damp in (0.1, 1.0):
    ref = scipy.sparse.linalg.lsqr(A, b, damp=damp, atol=1e-14, btol=1e-14, iter_lim=10000)[0]
    Ad = A.toarray()
    ref2 = np.linalg.solve(Ad.T @ Ad + damp**2 * np.eye(120), Ad.T @ b)
    x = solve(A, b, damp, 0)
    e1 = np.max(np.abs(x - ref)) if x is not None else np.inf
    e2 = np.max(np.abs(x - ref2)) if x is not None else np.inf
    ok(e1 < 1e-8 and e2 < 1e-8, f"damped ({damp}) system matches scipy.sparse.linalg.lsqr and "
       "the damped normal equations", f"{e1:.3g} {e2:.3g}")

# 3. A delay-time system: 40 stations, 30 slowness cells of 10 m, picks from every
# second station to receivers 40-250 m away, smoothing rows between cells.
rows, cols, vals, rhs = [], [], [], []
ns, nc, cell = 40, 42, 10.0
delay = 10 + 5 * np.sin(np.arange(ns) * 0.3)
slow = 0.5 + 0.05 * np.cos(np.arange(nc) * 0.2)     # ms/m
r = 0
for s in range(0, ns, 2):
    for q in range(ns):
        x0, x1 = sorted((10.0 * s, 10.0 * q))
        if not 40.0 <= x1 - x0 <= 250.0:
            continue
        coef = {s: 1.0}
        coef[q] = coef.get(q, 0.0) + 1.0
        for c in range(nc):
            lo = -5.0 + c * cell
            ln = min(lo + cell, x1) - max(lo, x0)
            if ln > 0:
                coef[ns + c] = ln
        for k, v in coef.items():
            rows.append(r), cols.append(k), vals.append(v)
        rhs.append(sum(v * (delay[k] if k < ns else slow[k - ns]) for k, v in coef.items())
                   + rng.normal(0, 0.3))
        r += 1
for c in range(nc - 1):
    rows += [r, r]; cols += [ns + c, ns + c + 1]; vals += [20.0, -20.0]; rhs.append(0.0)
    r += 1
A = scipy.sparse.csr_matrix((vals, (rows, cols)), shape=(r, ns + nc))
b = np.array(rhs)
ref = np.linalg.lstsq(A.toarray(), b, rcond=None)[0]
ref_sp = scipy.sparse.linalg.lsqr(A, b, atol=1e-15, btol=1e-15, iter_lim=100000)[0]
x = solve(A, b, 0.0, 1)
err = np.max(np.abs(x - ref)) if x is not None else np.inf
ok(err < 1e-6, "delay-time shaped system (scaled columns) matches numpy.linalg.lstsq",
   f"max error {err:.3g}")
ok(np.max(np.abs(ref_sp - ref)) < 1e-5, "scipy lsqr agrees with lstsq on it (reference sanity)")
done()
