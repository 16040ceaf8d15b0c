#!/usr/bin/python3
"""numpy_stack.py -- the CMP stack a user could write with segyio and NumPy, for `make bench`.

Usage: numpy_stack.py VELOCITY.csv OUT.npy SHOT.sgy...

Reads each shot with segyio (trace headers: CDP, bytes 21-24, and offset, bytes 37-40, of
SEG-Y rev 1, section 3), applies hyperbolic NMO t(x) = sqrt(t0^2 + x^2 / v(t0)^2) (Yilmaz
2001, CMP stacking) with linear interpolation (numpy.interp semantics, vectorised by hand),
mutes samples stretched by more than 50 % (stretch = dt/dt0 - 1, common practice), and
divides each CMP's sum by its live fold per sample. The velocity table (cmp,time_ms,
velocity_mps) is interpolated linearly in time at each CMP's nearest listed function.
Only the speed is compared; the result is saved for inspection, not checked.
"""
import sys

import numpy as np
import segyio


def velocity_functions(path):
    data = []
    with open(path) as f:
        for line in f:
            if line.startswith("#") or line.startswith("cmp"):
                continue
            c, t, v = line.strip().split(",")[:3]
            data.append((int(c), float(t), float(v)))
    funcs = {}
    for c, t, v in data:
        funcs.setdefault(c, []).append((t, v))
    return {c: np.array(sorted(p)) for c, p in funcs.items()}


def main():
    vel_path, out_path, shots = sys.argv[1], sys.argv[2], sys.argv[3:]
    funcs = velocity_functions(vel_path)
    keys = np.array(sorted(funcs))
    sums, folds = {}, {}
    t0 = dt = None
    vcache = {}
    for path in shots:
        with segyio.open(path, ignore_geometry=True) as f:
            data = f.trace.raw[:].astype(np.float64)
            cdp = f.attributes(segyio.TraceField.CDP)[:]
            off = np.abs(f.attributes(segyio.TraceField.offset)[:]).astype(np.float64)
            if t0 is None:
                dt = (f.samples[1] - f.samples[0]) / 1000.0
                t0 = np.arange(len(f.samples)) * dt
        ns = data.shape[1]
        v = np.empty_like(data)
        for i, c in enumerate(cdp):
            if c not in vcache:
                k = keys[np.argmin(np.abs(keys - c))]
                fn = funcs[k]
                vcache[c] = np.interp(t0 * 1000.0, fn[:, 0], fn[:, 1])
            v[i] = vcache[c]
        t = np.sqrt(t0[None, :] ** 2 + (off[:, None] / v) ** 2)
        pos = t / dt
        j = np.floor(pos).astype(np.int64)
        frac = pos - j
        inside = j < ns - 1
        jc = np.clip(j, 0, ns - 2)
        rows = np.arange(data.shape[0])[:, None]
        moved = data[rows, jc] * (1 - frac) + data[rows, jc + 1] * frac
        with np.errstate(divide="ignore", invalid="ignore"):
            stretch = np.gradient(t, axis=1) / dt - 1.0
        live = inside & (stretch <= 0.5) & (data.any(axis=1)[:, None])
        moved = np.where(live, moved, 0.0)
        for c in np.unique(cdp):
            sel = cdp == c
            if c not in sums:
                sums[c] = np.zeros(ns)
                folds[c] = np.zeros(ns)
            sums[c] += moved[sel].sum(axis=0)
            folds[c] += live[sel].sum(axis=0)
    cmps = sorted(sums)
    section = np.array([np.where(folds[c] > 0, sums[c] / np.maximum(folds[c], 1), 0.0)
                        for c in cmps], dtype=np.float32)
    np.save(out_path, section)


if __name__ == "__main__":
    main()
