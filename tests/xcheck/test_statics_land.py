"""test_statics_land -- first breaks and statics of a rough-terrain line made by
an independent NumPy generator (landline.py: topography of 25 m, weathering of
3 to 17 m at 700 m/s over 2000 m/s, head waves by Fermat's principle, zero-phase
Ricker wavelets of Ricker 1953, a reversed, a noisy and a dead trace).

Checks (the criteria of the land-statics work, sources as named):
- first-break picks within one sample of the true first arrival (the centre of
  the first-arrival wavelet) on at least 98 % of the live traces;
- picks bitwise identical for 1 and 2 threads (DEVELOPERS.md, threads);
- delay-time refraction statics (weathering velocity estimated from the direct
  wave) within 1.5 ms RMS of the model's true station statics after removing
  their mean, and weathering thickness within 0.5 m RMS;
- bad picks files (an unknown station, a NaN time, no picks in the refractor's
  offset range): exit 65 naming the file and line, nothing written.
"""
import os
import subprocess
import sys

import numpy as np

import landline
from tzcheck import WORK, done, ok, run

d = os.path.join(WORK, "line")
truth = landline.make_line(d)
job = os.path.join(d, "line.json")

# --- first breaks
p1 = os.path.join(d, "picks1.csv")
r = run("firstbreaks", "--job", job, "--out", p1, "--threads", "1", "--quiet")
ok(r.returncode == 0, "tzero firstbreaks runs on the NumPy line", r.stderr.strip())
picks = np.genfromtxt(p1, delimiter=",", skip_header=1, names=True)
live = [k for k in truth if k != landline.DEAD]
got = {(int(a), int(b)): t for a, b, t in zip(picks["record"], picks["channel"], picks["time_ms"])}
dt_ms = landline.DT_US / 1000.0
good = sum(1 for k in live if k in got and abs(got[k] - 1000.0 * truth[k][0]) <= dt_ms)
ok(good >= 0.98 * len(live), f"picks within one sample of the true first arrival on >= 98 % of "
   f"live traces ({good} of {len(live)})")
ok(landline.DEAD not in got, "the dead trace has no pick")
p2 = os.path.join(d, "picks2.csv")
run("firstbreaks", "--job", job, "--out", p2, "--threads", "2", "--quiet")
ok(open(p1, "rb").read() == open(p2, "rb").read(), "picks bitwise identical for 1 and 2 threads")
st = {(int(a), int(b)): (int(s), int(q)) for a, b, s, q in
      zip(picks["record"], picks["channel"], picks["source_station"], picks["receiver_station"])}
shots = landline.shots()
want = {(k + 1, c + 1): (s, r_) for k, s in enumerate(shots)
        for c, r_ in enumerate(landline.receivers_of(s))}
ok(all(st[k] == want[k] for k in st), "stations numbered along the line by the receiver interval "
   "(station = position / 10 m)")

# --- refraction statics
table = os.path.join(d, "refraction.csv")
r = run("statics", "refraction", "--job", job, "--picks", p1, "--out", table, "--datum-m",
        landline.DATUM, "--replacement-velocity", landline.V1, "--json")
ok(r.returncode == 0, "tzero statics refraction runs", r.stderr.strip())
rows = np.genfromtxt(table, delimiter=",", skip_header=1, names=True, dtype=None, encoding=None)
for kind in ("source", "receiver"):
    m = rows["kind"] == kind
    x = rows["station"][m] * landline.DG
    diff = rows["static_ms"][m] - landline.true_static_ms(x)
    rms = float(np.sqrt(np.mean((diff - diff.mean()) ** 2)))
    ok(rms <= 1.5, f"{kind} refraction statics within 1.5 ms RMS of the true statics after "
       f"mean removal ({rms:.3f} ms)")
    hrms = float(np.sqrt(np.mean((rows["weathering_m"][m] - landline.thickness(x)) ** 2)))
    ok(hrms <= 0.5, f"{kind} weathering thickness within 0.5 m RMS of the model ({hrms:.3f} m)")
ok(set(rows["station"][rows["kind"] == "receiver"]) == set(range(landline.NREC)),
   "a table row for every receiver station of the line")


def bad_picks(name, mutate):
    lines = open(p1).read().splitlines()
    k = mutate(lines)
    path = os.path.join(d, name)
    open(path, "w").write("\n".join(lines) + "\n")
    outp = os.path.join(d, name + ".out.csv")
    r = run("statics", "refraction", "--job", job, "--picks", path, "--out", outp,
            "--datum-m", 100, *(["--offset-min-m", 5000] if k is None else []), check=False)
    where = f"{name}: line {k}" if k else name
    ok(r.returncode == 65 and where in r.stderr and not os.path.exists(outp),
       f"bad picks ({name}): exit 65 naming {'file and line' if k else 'the file'}, nothing "
       "written", f"{r.returncode} {r.stderr.strip()}")


def unknown_station(lines):
    f = lines[40].split(",")
    f[3] = "9999"
    lines[40] = ",".join(f)
    return 41


def nan_time(lines):
    f = lines[70].split(",")
    f[5] = "nan"
    lines[70] = ",".join(f)
    return 71


bad_picks("unknown_station.csv", unknown_station)
bad_picks("nan_time.csv", nan_time)
bad_picks("out_of_range.csv", lambda lines: None)
done()
