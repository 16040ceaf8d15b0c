"""test_synth_scatterers.py -- `tzero synth` diffractors and faults, and a job that migrates.

Traveltimes are checked against straight-ray geometry written here (Pythagoras: a point
scatterer at depth z under along-line position x_d is reached from a source at a and
left to a receiver at b in t = (sqrt((a - x_d)^2 + z^2) + sqrt((b - x_d)^2 + z^2)) / v in a
homogeneous medium; a flat reflector at depth z gives t = sqrt(h^2 + 4 z^2) / v at offset h,
and a fault of throw d moves the reflector to z + d past it), by reading the synthetic
traces with segyio (Debian python3-segyio) and finding each event's peak. The migration
job's output is compared with `tzero migrate` on the same section (a consistency check of
tzero with itself: the job and the command share one code path).
"""
import json
import os

import numpy as np
import segyio

from tzcheck import WORK, done, ok, run

V = 2000.0
layout = {
    "receiver_interval_m": 5, "source_interval_m": 20, "shot_count": 40,
    "channels": 48, "spread": "split", "channels_behind": 24, "near_offset_m": 5,
    "azimuth_deg": 90, "first_station_x_m": 400000.0, "first_station_y_m": 6000000.0,
    "first_source_m": 150, "source_depth_m": 0, "first_field_record": 1,
    "first_shot_point": 101,
}
model = {"layers": [{"thickness_m": 600, "velocity_mps": V, "density_kgm3": 2000},
                    {"velocity_mps": 2600, "density_kgm3": 2200}],
         "diffractors": [{"x_m": 250, "depth_m": 300, "amplitude": 0.5}],
         "faults": [{"x_m": 540, "throw_m": 40, "interface": 1}]}
d = os.path.join(WORK, "scat")
os.makedirs(d, exist_ok=True)
lp, mp = os.path.join(d, "layout.json"), os.path.join(d, "model.json")
json.dump(layout, open(lp, "w"))
json.dump(model, open(mp, "w"))
out = os.path.join(d, "shots")
DT = 0.001
p = run("synth", "--model", mp, "--layout", lp, "--out", out, "--samples", 1001, "--interval-ms", 1,
        "--peak-hz", 40, "--no-direct", "--no-head-wave")
ok(p.returncode == 0, "synth writes a line with a diffractor and a fault", p.stderr.strip())


def peak_near(tr, t, half=0.012):
    lo, hi = int((t - half) / DT), int((t + half) / DT) + 1
    lo, hi = max(lo, 0), min(hi, len(tr))
    if hi <= lo:
        return None
    return (lo + int(np.argmax(np.abs(tr[lo:hi])))) * DT


bad_d, bad_f, n_d, n_f = [], [], 0, 0
files = sorted(f for f in os.listdir(out) if f.endswith(".sgy")) if os.path.isdir(out) else []
for k, fname in enumerate(files):
    sa = 150 + 20 * k
    with segyio.open(os.path.join(out, fname), ignore_geometry=True) as f:
        for c in range(48):
            ra = sa - 5 - (23 - c) * 5 if c < 24 else sa + 5 + (c - 24) * 5
            tr = f.trace[c]
            td = (np.hypot(sa - 250, 300) + np.hypot(ra - 250, 300)) / V
            mid = 0.5 * (sa + ra)
            z = 600 + (40 if mid >= 540 else 0)
            tf = np.hypot(ra - sa, 2 * z) / V
            edges = [(np.hypot(sa - 540, ze) + np.hypot(ra - 540, ze)) / V for ze in (600, 640)]
            # an event is checked where no other event lies within 30 ms of it
            if min(abs(td - te) for te in [tf] + edges) >= 0.03:
                got = peak_near(tr, td)
                n_d += 1
                if got is None or abs(got - td) > DT:
                    bad_d.append((k, c, got, round(td, 4)))
            if abs(mid - 540) < 40:
                continue          # the fault's edge diffractions cross the reflection there
            if min(abs(tf - te) for te in [td] + edges) < 0.03:
                continue          # a diffraction (the scatterer, a fault edge) crosses it
            got = peak_near(tr, tf)
            n_f += 1
            if got is None or abs(got - tf) > DT:
                bad_f.append((k, c, got, round(tf, 4)))
ok(n_d > 500 and not bad_d, "diffraction times are the straight-ray times through the scatterer "
   "within one sample on %d traces" % n_d, str(bad_d[:5]))
ok(n_f > 300 and not bad_f, "reflection times follow the fault's throw on either side "
   "within one sample on %d traces" % n_f, str(bad_f[:5]))

# --- a job that migrates after the stack
vel = os.path.join(out, "rms_velocity.csv")
job = {"name": "scatterers", "shots": [os.path.join(out, "shot_*.sgy")],
       "geometry": {"layout": lp}, "velocity": vel,
       "moveout": {"stretch_limit_pct": 60},
       "migration": {"method": "kirchhoff", "velocity_pct": 100, "aperture_m": 400,
                     "max_dip_deg": 70},
       "output": {"section": os.path.join(d, "stack.sgy"), "report": os.path.join(d, "qc.json"),
                  "migrated": os.path.join(d, "mig.sgy")}}
jp = os.path.join(d, "job.json")
json.dump(job, open(jp, "w"))
p = run("stack", "--job", jp, "--quiet")
ok(p.returncode == 0 and os.path.exists(os.path.join(d, "mig.sgy")),
   "stack writes the migrated section of the job's migration", p.stderr.strip())
p2 = run("migrate", os.path.join(d, "stack.sgy"), "--velocity", vel, "--method", "kirchhoff",
         "--aperture-m", 400, "--max-dip-deg", 70, "--out", os.path.join(d, "mig2.sgy"), "--quiet")
same = False
if p2.returncode == 0 and os.path.exists(os.path.join(d, "mig.sgy")):
    with segyio.open(os.path.join(d, "mig.sgy"), ignore_geometry=True) as a, \
            segyio.open(os.path.join(d, "mig2.sgy"), ignore_geometry=True) as b:
        same = a.tracecount == b.tracecount and all(
            np.array_equal(a.trace[i], b.trace[i]) for i in range(a.tracecount))
ok(same, "the job's migrated section equals tzero migrate with the same parameters "
   "(consistency check)")
rep = json.load(open(os.path.join(d, "qc.json"))) if os.path.exists(os.path.join(d, "qc.json")) else {}
m = rep.get("migration", {})
ok(m.get("method") == "kirchhoff" and m.get("velocity_pct") == 100 and m.get("aperture_m") == 400
   and m.get("max_dip_deg") == 70 and m.get("seconds", -1) >= 0,
   "the QC report's migration block names method, percentage, aperture, dip limit, seconds",
   json.dumps(m)[:200])
# --velocity on the command line revises the migration too (no migration.velocity)
v2 = os.path.join(d, "v2.csv")
with open(vel) as fi, open(v2, "w") as fo:
    for line in fi:
        parts = line.strip().split(",")
        if parts and parts[0].isdigit():
            parts[2] = "%g" % (float(parts[2]) * 1.05)
        fo.write(",".join(parts) + "\n")
p = run("stack", "--job", jp, "--velocity", v2, "--quiet")
rep = json.load(open(os.path.join(d, "qc.json")))
ok(p.returncode == 0 and rep.get("migration", {}).get("velocity") == v2,
   "--velocity revises the migration velocity as well", json.dumps(rep.get("migration"))[:160])
# bad jobs
for desc, change, want in (
        ("output.migrated without a migration object", lambda j: j.pop("migration"), "migration"),
        ("a misspelt migration key", lambda j: j["migration"].update({"aperture": 3}), "aperture_m"),
        ("a migration percentage of 500", lambda j: j["migration"].update({"velocity_pct": 500}),
         "velocity_pct"),
        ("an unknown method", lambda j: j["migration"].update({"method": "stolt"}), "method")):
    jj = json.loads(json.dumps(job))
    change(jj)
    jj["output"]["migrated"] = os.path.join(d, "bad_mig.sgy")
    bp = os.path.join(d, "bad.json")
    json.dump(jj, open(bp, "w"))
    p = run("stack", "--job", bp, "--quiet", check=False)
    ok(p.returncode == 65 and want in p.stderr and not os.path.exists(os.path.join(d, "bad_mig.sgy")),
       "bad job: %s is exit 65 naming %s" % (desc, want), "exit %d: %s" % (p.returncode, p.stderr.strip()[:160]))
done()
