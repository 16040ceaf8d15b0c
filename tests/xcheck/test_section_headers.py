"""test_section_headers -- the stacked section's trace headers read back with
segyio (Debian python3-segyio) on a rough-terrain line from the independent
NumPy generator (landline.py) whose field shot points run from 101 onward.

Checks (SEG-Y rev 1 (2002) trace header byte positions, as read by segyio):
- bytes 197-200 with scalar 201-202: at the CMP under the source of field shot
  point 103 the shot point reads 103 within 0.5;
- bytes 41-48 with scalar 69-70: the surface elevation at every CMP within 0.01 m
  of the station elevations interpolated linearly along the line by numpy.interp;
- bytes 53-60: the datum elevation of the job's statics;
- bytes 89-90: coordinate units 1 (length).
"""
import json
import os

import numpy as np
import segyio

import landline
from tzcheck import WORK, done, ok, run

F = segyio.TraceField
d = os.path.join(WORK, "sp")
landline.make_line(d, first_shot_point=101)
job = json.load(open(os.path.join(d, "line.json")))
job["statics"] = {"datum_m": landline.DATUM, "replacement_velocity_mps": landline.V1,
                  "elevation": True}
jp = os.path.join(d, "sp.json")
json.dump(job, open(jp, "w"))
r = run("stack", "--job", jp, "--quiet")
ok(r.returncode == 0, "tzero stack runs on the NumPy line", r.stderr.strip())


def scaled(v, s):
    v = np.asarray(v, dtype=float)
    return v / -s if s < 0 else v * (s if s > 0 else 1)


with segyio.open(os.path.join(d, "out", "stack.sgy"), ignore_geometry=True) as f:
    h = [f.header[i] for i in range(f.tracecount)]
cmp = np.array([x[F.CDP] for x in h])
sp = np.array([scaled(x[F.ShotPoint], x[F.ShotPointScalar]) for x in h])
elev_r = np.array([scaled(x[F.ReceiverGroupElevation], x[F.ElevationScalar]) for x in h])
elev_s = np.array([scaled(x[F.SourceSurfaceElevation], x[F.ElevationScalar]) for x in h])
datum = np.array([scaled(x[F.ReceiverDatumElevation], x[F.ElevationScalar]) for x in h])
units = {x[F.CoordinateUnits] for x in h}

# bins: origin x = 0, size DG / 2, first CMP 1 (landline.make_line)
bin_m = landline.DG / 2
xs = [s * landline.DG for s in landline.shots()]
x103 = xs[103 - 101]
c103 = int(round(x103 / bin_m)) + 1
ok(c103 in cmp, f"the section holds CMP {c103}, under the source of shot point 103")
got = sp[cmp == c103][0] if c103 in cmp else np.nan
ok(abs(got - 103) <= 0.5, f"shot point at CMP {c103} is 103 within 0.5 (reads {got:.2f})")

# station elevations as written into the shot headers (centimetres), numpy.interp
pos = np.arange(landline.NREC) * landline.DG
ev = np.round(landline.elevation(pos) * 100) / 100
want = np.interp((cmp - 1) * bin_m, pos, ev)
err = max(np.max(np.abs(elev_r - want)), np.max(np.abs(elev_s - want)))
ok(err <= 0.01, f"surface elevation within 0.01 m of numpy.interp of the stations "
   f"(largest difference {err:.4f} m)")
ok(np.all(np.abs(datum - landline.DATUM) < 0.005), "datum elevation in bytes 53-56 is the "
   f"statics datum {landline.DATUM} m")
ok(units == {1}, f"coordinate units (bytes 89-90) are 1, length (read {sorted(units)})")
done()
