"""test_units_feet -- a line in feet, end to end, against the same line in metres.

fieldline.py (segyio) writes the field-style line twice: in metres (binary header
bytes 3255-3256 = 1) and in feet (= 2, SEG-Y rev 1 (2002); every coordinate,
elevation and offset divided by 0.3048, the international foot). The moveout
t^2 = t0^2 + x^2/v^2 does not depend on the unit when x and v share it, so the
job in feet (velocities in ft/s, bin size in feet) must stack to the section of
the job in metres: compared trace by trace with segyio and NumPy. Also checked:
the section's binary header says feet, the QC report names the unit, and mixed
units are refused with exit status 65 naming both files.
"""
import json
import os
import shutil
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import fieldline as fl  # noqa: E402
from tzcheck import WORK, done, ok, run  # noqa: E402

FT = fl.FT
sections = {}
reports = {}
for unit in ("metres", "feet"):
    d = os.path.join(WORK, unit)
    # a local grid (a UTM northing of 6.7e6 m is 2.2e7 ft, past tzero's coordinate cap)
    fl.write_shots(d, feet=unit == "feet", x0=150000.0, y0=450000.0)
    k = 1 / FT if unit == "feet" else 1.0
    with open(os.path.join(d, "v.csv"), "w") as f:
        f.write("cmp,time_ms,velocity_mps\n")
        for t0, v, _ in fl.EVENTS:
            f.write(f"1,{t0 * 1000:g},{v * k!r}\n")
    job = {"shots": ["shots/*.sgy"], "velocity": "v.csv",
           "bins": {"size_m": 2.5 * k},
           "output": {"section": "out/stack.sgy", "report": "out/qc.json"}}
    if unit == "feet":
        job["units"] = "feet"
    with open(os.path.join(d, "job.json"), "w") as f:
        json.dump(job, f)
    p = run("stack", "--quiet", "--job", os.path.join(d, "job.json"))
    ok(p.returncode == 0, f"stack the line in {unit}", p.stderr)
    with segyio.open(os.path.join(d, "out", "stack.sgy"), ignore_geometry=True) as f:
        sections[unit] = (segyio.tools.collect(f.trace[:]), f.bin[segyio.BinField.MeasurementSystem],
                          np.array([h[segyio.TraceField.CDP_X] for h in f.header]),
                          np.array([h[segyio.TraceField.NStackedTraces] for h in f.header]))
    reports[unit] = json.load(open(os.path.join(d, "out", "qc.json")))

m, f_ = sections["metres"], sections["feet"]
ok(m[1] == 1 and f_[1] == 2, f"section binary header 3255-3256: metres 1, feet 2 (got {m[1]}, {f_[1]})")
ok(m[0].shape == f_[0].shape, f"the same CMPs in both units ({m[0].shape} and {f_[0].shape})")
if m[0].shape == f_[0].shape:
    same = m[3] == f_[3]
    err = float(np.max(np.abs(m[0][same] - f_[0][same])) / np.max(np.abs(m[0])))
    ok(np.count_nonzero(~same) <= 3, "the same fold at every CMP but a few at bin edges")
    rel = float(np.sqrt(np.mean((m[0] - f_[0]) ** 2) / np.mean(m[0] ** 2)))
    # a sample at a stretch-mute edge may fall either side of it when offsets differ in
    # the last digit (coordinates rounded to 0.01 ft instead of 0.01 m): the largest
    # difference is allowed 2 % of the peak, the RMS difference 0.1 %
    ok(rel < 1e-3 and err < 2e-2, f"the section in feet = the section in metres (RMS difference "
       f"{rel:.1e}, largest {err:.1e} of the peak)")
    cx = float(np.max(np.abs(f_[2] * FT - m[2])))
    ok(cx < 2, f"CMP X in feet x 0.3048 = CMP X in metres (worst {cx:.2f} stored units)")
u = reports["feet"].get("units", {})
ok(u.get("length") == "feet" and u.get("velocity") == "ft/s" and u.get("from") == "job",
   f"the QC report says feet, ft/s, from the job ({u})")
um = reports["metres"].get("units", {})
ok(um.get("length") == "metres" and um.get("from") == "binary header", f"metres from the files ({um})")
bin_ft = reports["feet"]["geometry"]["line"]["bin_size_m"]
ok(abs(bin_ft * FT - 2.5) < 1e-9, f"bin size {bin_ft:.4f} ft = 2.5 m")

# Velocity analysis in feet: the default scan is taken in ft/s, the picks come out in
# ft/s (the generator's velocities divided by 0.3048).
picks = os.path.join(WORK, "picks_ft.csv")
p = run("semblance", "--quiet", "--job", os.path.join(WORK, "feet", "job.json"), "--cmps", 80,
        "--out", picks)
rows = [l.split(",") for l in open(picks).read().split()[1:]] if p.returncode == 0 else []
worst = max((min(abs(float(v) * FT - ev) / ev for _, ev, _ in [(0, e[1], 0) for e in fl.EVENTS])
             for _, _, v in rows), default=1.0)
ok(len(rows) == len(fl.EVENTS) and worst < 0.015,
   f"semblance picks in ft/s within 1.5 % of the true velocities (worst {worst:.2%})")

# A job in metres on files in feet, and one file in feet among metres.
dm, dfe = os.path.join(WORK, "metres"), os.path.join(WORK, "feet")
j = json.load(open(os.path.join(dfe, "job.json")))
j["units"] = "metres"
json.dump(j, open(os.path.join(dfe, "job_m.json"), "w"))
p = run("stack", "--quiet", "--job", os.path.join(dfe, "job_m.json"), check=False)
ok(p.returncode == 65 and "3255-3256" in p.stderr and "feet" in p.stderr,
   "a job in metres on files in feet: exit 65 naming the bytes", p.stderr.strip())
shutil.copy(os.path.join(dfe, "shots", "rec_030.sgy"), os.path.join(dm, "shots", "rec_030.sgy"))
p = run("stack", "--quiet", "--job", os.path.join(dm, "job.json"), check=False)
ok(p.returncode == 65 and "rec_030.sgy" in p.stderr and "mix units" in p.stderr,
   "one file in feet among files in metres: exit 65 naming both", p.stderr.strip())
p = run("geometry", os.path.join(dfe, "shots", "rec_001.sgy"))
ok(p.returncode == 0 and "units: feet (from the binary header)" in p.stdout, "tzero geometry says feet")
done()
