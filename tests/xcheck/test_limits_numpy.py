"""test_limits_numpy -- the QC gate (`report --check`, `stack --check`) on lines made with segyio and NumPy.

The lines are written here, independently of tzero, with the Debian `segyio`
package and NumPy: a 96-channel split spread at 10 m receivers rolled along
at 20 m shots, flat reflectors on exact hyperbolas t = sqrt(t0^2 + x^2/v^2).
Every expected figure is counted here by brute force over (shot, channel)
pairs with NumPy.

Checks (each names its source):
  - nominal fold = channels x receiver interval / (2 x shot interval) = 24
    (Sheriff & Geldart 1995, CMP stacking-chart result; common practice), and
    it stays 24 when four adjacent channels are dead on every shot: the
    nominal fold and the full-fold part come from the acquisition, so the dead
    channels show as low fold (common practice: a dead cable section lowers
    the fold of the CMPs it feeds, not the nominal);
  - `min_fold_pct: 99` breaks exactly at the CMPs of the full-fold part whose
    live fold (NumPy count) is below 99 % of 24, and the printed CMP ranges are
    those CMPs; from the live traces alone the nominal would be 23 and the same
    limit would hold everywhere (the estimate this replaces hid the dead channels);
  - missing shots: `min_fold` and `max_low_fold_run_cmps` break at the CMP runs
    the NumPy count puts below the limit;
  - several reports with one failing: exit 1 naming it; all holding: exit 0;
  - muting: with the stretch mute off and a hard top mute T(|x|) in recorded
    time, an output sample t0 is muted when its moveout time sqrt(t0^2 + x^2/v^2)
    (exact hyperbolic NMO, Taner & Koehler 1969) comes before T; the muted
    percentage counted here, overall and for offsets below 240 m, is the one
    max_muted_pct and max_muted_pct_by_offset measure: each holds 0.5 % above
    it and breaks 0.5 % below;
  - edits and statics: channels 11-15 killed on every record are 5/96 of the
    traces read (max_killed_traces_pct), keep the nominal fold 24 and break
    min_fold_pct 99 at the CMPs those channels feed (NumPy count); elevation
    statics of stations at 0 m to a datum at -10 m with 2000 m/s are
    -(E - D)/v = -5 ms per station, -10 ms per trace (Sheriff & Geldart 1995,
    elevation correction), which max_static_ms 10 holds and 9.99 breaks;
  - `stack --check` writes a complete section (read back with segyio) and
    report before it exits 1.
"""
import json
import os
import re
import shutil
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

NS, DT_US = 200, 4000              # 0.8 s at 4 ms
CHANNELS, DG, DS = 96, 10.0, 20.0
SHOTS = 64
X0 = 1000.0
EVENTS = [(0.250, 1800.0), (0.500, 2200.0)]
DEAD = range(40, 44)               # channel indices 40-43 (channels 41-44), every shot
BIN = 5.0                          # half the receiver interval (common practice)
ORIGIN = 2.5                       # bin centres on the midpoints (x = 2.5 + 5 k)


def ricker(t, f=25.0):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def offset(c):
    return (c - 47.5) * DG        # split spread, no zero offset


def make_line(d, dead=(), missing=()):
    os.makedirs(os.path.join(d, "shots"), exist_ok=True)
    os.makedirs(os.path.join(d, "out"), exist_ok=True)
    t = np.arange(NS) * DT_US * 1e-6
    F = segyio.TraceField
    for s in range(SHOTS):
        if s in missing:
            continue               # a misfire: no record at all
        sx = X0 + s * DS
        spec = segyio.spec()
        spec.samples = list(range(NS))
        spec.format = 5
        spec.tracecount = CHANNELS
        with segyio.create(os.path.join(d, "shots", f"r{s + 1:03d}.sgy"), spec) as f:
            f.bin.update(hdt=DT_US, hns=NS, format=5, mfeet=1)
            for c in range(CHANNELS):
                x = offset(c)
                tr = np.zeros(NS, dtype=np.float32)
                kind = 2 if c in dead else 1
                if kind == 1:
                    for t0, v in EVENTS:
                        tr += ricker(t - np.sqrt(t0 * t0 + x * x / (v * v))).astype(np.float32)
                f.header[c] = {
                    F.TRACE_SEQUENCE_LINE: s * CHANNELS + c + 1, F.TRACE_SEQUENCE_FILE: c + 1,
                    F.FieldRecord: s + 1, F.TraceNumber: c + 1, F.TraceIdentificationCode: kind,
                    F.offset: int(round(x)), F.SourceGroupScalar: -10, F.ElevationScalar: 1,
                    F.SourceX: int(round(sx * 10)), F.SourceY: 50000,
                    F.GroupX: int(round((sx + x) * 10)), F.GroupY: 50000,
                    F.CoordinateUnits: 1, F.TRACE_SAMPLE_COUNT: NS, F.TRACE_SAMPLE_INTERVAL: DT_US,
                }
                f.trace[c] = tr
    with open(os.path.join(d, "velocity.csv"), "w") as f:
        f.write("cmp,time_ms,velocity_mps\n1,0,1800\n1,250,1800\n1,500,2200\n")


def job(d, limits=None, name="Tarrowvane gate line"):
    j = {"name": name, "shots": ["shots/*.sgy"], "geometry": "headers",
         "bins": {"size_m": BIN, "origin_x_m": ORIGIN, "origin_y_m": 5000, "azimuth_deg": 90,
                  "first_cmp": 0},
         "velocity": "velocity.csv",
         "output": {"section": "out/stack.sgy", "report": "out/qc.json"}}
    if limits is not None:
        j["limits"] = limits
    p = os.path.join(d, "line.json")
    with open(p, "w") as f:
        json.dump(j, f)
    return p


def folds(dead=(), missing=()):
    """Brute-force count over (shot, channel): acquisition fold and live fold per CMP."""
    acq, live = {}, {}
    for s in range(SHOTS):
        sx = X0 + s * DS
        for c in range(CHANNELS):
            mx = sx + offset(c) / 2
            k = int(np.floor((mx - ORIGIN) / BIN + 0.5))
            if s not in missing:
                acq[k] = acq.get(k, 0) + 1
                if c not in dead:
                    live[k] = live.get(k, 0) + 1
    return acq, live


def ranges(cmps):
    out = []
    for c in sorted(cmps):
        if out and out[-1][1] + 1 == c:
            out[-1][1] = c
        else:
            out.append([c, c])
    return out


def ranges_text(rs):
    return ", ".join(f"{a}" if a == b else f"{a}-{b}" for a, b in rs)


def stack(d, *extra):
    return tz.run("stack", "--job", os.path.join(d, "line.json"), "--quiet", *extra, check=False)


root = tz.WORK
nominal = CHANNELS * DG / (2 * DS)     # Sheriff & Geldart 1995: 96 x 10 / (2 x 20) = 24

# ---- four dead adjacent channels on every shot
A = os.path.join(root, "dead")
make_line(A, dead=DEAD)
job(A)
p = stack(A)
tz.ok(p.returncode == 0, "stack the line with four dead channels", p.stderr)
rep = json.load(open(os.path.join(A, "out", "qc.json")))
tz.ok(rep["fold"]["nominal"] == nominal == 24,
      "nominal fold 24 from the acquisition (dead channels do not lower it)",
      f"{rep['fold']['nominal']}")
acq, live = folds(dead=DEAD)
full = [k for k, n in acq.items() if n >= nominal]
ff = (min(full), max(full))
tz.ok((rep["fold"]["full_fold_cmp_first"], rep["fold"]["full_fold_cmp_last"]) == ff,
      f"full-fold part CMPs {ff[0]}-{ff[1]} as the brute-force count of the acquisition",
      f"{rep['fold'].get('full_fold_cmp_first')}-{rep['fold'].get('full_fold_cmp_last')}")
got_live = {c["cmp"]: c["fold"] for c in rep["cmps"]}
got_acq = {c["cmp"]: c["acquired_fold"] for c in rep["cmps"]}
tz.ok(all(got_live[k] == live.get(k, 0) for k in got_live) and
      all(got_acq[k] == acq.get(k, 0) for k in got_acq),
      "live and acquisition fold per CMP equal the NumPy count")
lim = os.path.join(A, "limits.json")
with open(lim, "w") as f:
    json.dump({"min_fold_pct": 99, "min_nominal_fold": 24}, f)
p = tz.run("report", "--check", lim, os.path.join(A, "out", "qc.json"), check=False)
tz.ok(p.returncode == 1, "min_fold_pct 99 breaks (exit 1)", f"exit {p.returncode} {p.stderr}")
below = [k for k in range(ff[0], ff[1] + 1) if live.get(k, 0) * 100 < 99 * nominal]
want = ranges(below)
line = [x for x in p.stdout.splitlines() if x.startswith("min_fold_pct")]
m = re.search(r"CMP (.*)$", line[0]) if line else None
tz.ok(bool(below) and m is not None and m.group(1) == ranges_text(want),
      f"printed CMP ranges are the CMPs below 99 % of 24 ({ranges_text(want)})",
      p.stdout.strip())
tz.ok(re.search(r"^min_nominal_fold +limit 24 +value 24 +held", p.stdout, re.M) is not None,
      "min_nominal_fold 24 holds", p.stdout)
pj = tz.run("report", "--check", "--json", lim, os.path.join(A, "out", "qc.json"), check=False)
js = json.loads(pj.stdout) if pj.returncode == 1 else []
mp = [o for o in js if o["name"] == "min_fold_pct"]
tz.ok(len(mp) == 1 and mp[0]["cmp_ranges"] == want and mp[0]["held"] is False and
      abs(mp[0]["value"] - 100 * 23 / 24) < 1e-9,
      "--json: name, limit, value 95.83, held false, cmp_ranges", pj.stdout[:300])
# the estimate from the live traces: 92 live channels give 23, and 99 % of 23 holds everywhere
tz.ok(all(live.get(k, 0) * 100 >= 99 * 92 * DG / (2 * DS) for k in range(ff[0], ff[1] + 1)),
      "a nominal from the live traces (23) would have hidden the dead channels")

# ---- a clean line holds; several reports with one failing
B = os.path.join(root, "clean")
make_line(B)
job(B, name="Tarrowvane clean line")
p = stack(B)
tz.ok(p.returncode == 0, "stack the clean line", p.stderr)
qa, qb = os.path.join(A, "out", "qc.json"), os.path.join(B, "out", "qc.json")
p = tz.run("report", "--check", lim, qb, check=False)
tz.ok(p.returncode == 0 and "broken" not in p.stdout, "clean line: min_fold_pct 99 holds (exit 0)",
      p.stdout)
p = tz.run("report", "--check", lim, qb, qa, qb, check=False)
out = p.stdout.splitlines()
tz.ok(p.returncode == 1 and len(out) == 4 and out[1].startswith(qa) and "broken: min_fold_pct" in out[1]
      and out[0].endswith("held") and out[3] == "3 reports: 2 held, 1 broken",
      "three reports, one failing: exit 1, the failing one named, then the count", p.stdout)
p = tz.run("report", "--check", lim, qb, qb, check=False)
tz.ok(p.returncode == 0 and p.stdout.splitlines()[-1] == "2 reports: 2 held, 0 broken",
      "all holding: exit 0", p.stdout)

# ---- mutes: a hard top mute, no stretch mute, constant velocity
VM = 2000.0
MUTE = [(0.0, 101.0), (475.0, 301.0)]      # (|offset| m, recorded time ms)
with open(os.path.join(B, "v2000.csv"), "w") as f:
    f.write("cmp,time_ms,velocity_mps\n1,0,2000\n")
jm = json.load(open(os.path.join(B, "line.json")))
jm.update({"velocity": "v2000.csv", "moveout": {"stretch_limit_pct": 0},
           "mute": {"top": [list(p) for p in MUTE], "taper_ms": 0},
           "output": {"section": "out/mute.sgy", "report": "out/mute.json"}})
with open(os.path.join(B, "mute.json"), "w") as f:
    json.dump(jm, f)
p = tz.run("stack", "--job", os.path.join(B, "mute.json"), "--quiet", check=False)
tz.ok(p.returncode == 0, "stack the clean line with a top mute", p.stderr)
t0 = np.arange(NS) * DT_US * 1e-6
muted = {}
for c in range(CHANNELS):
    x = abs(offset(c))
    tmute = np.interp(x, [m[0] for m in MUTE], [m[1] for m in MUTE]) * 1e-3
    muted[x] = int(np.count_nonzero(np.sqrt(t0 ** 2 + x * x / VM ** 2) < tmute))
per_trace = [muted[abs(offset(c))] for s in range(SHOTS) for c in range(CHANNELS)]
want_all = 100.0 * sum(per_trace) / (len(per_trace) * NS)
near = [muted[abs(offset(c))] for s in range(SHOTS) for c in range(CHANNELS) if abs(offset(c)) < 240]
want_near = 100.0 * sum(near) / (len(near) * NS)
rm = json.load(open(os.path.join(B, "out", "mute.json")))
tz.ok(abs(100 * rm["mute"]["muted_fraction"] - want_all) < 1e-3,
      f"muted percentage {want_all:.3f} % as counted with NumPy",
      f"{100 * rm['mute']['muted_fraction']}")
for delta, code, what in ((0.5, 0, "holds"), (-0.5, 1, "breaks")):
    lm = os.path.join(B, "mute_limits.json")
    with open(lm, "w") as f:
        json.dump({"max_muted_pct": round(want_all + delta, 3),
                   "max_muted_pct_by_offset": [[0, 240, round(want_near + delta, 3)]]}, f)
    p = tz.run("report", "--check", "--json", lm, os.path.join(B, "out", "mute.json"), check=False)
    res = json.loads(p.stdout) if p.stdout.strip().startswith("[") else []
    vals = {o["name"]: o for o in res}
    bo = vals.get("max_muted_pct_by_offset", {})
    tz.ok(p.returncode == code and len(res) == 2 and
          all(o["held"] == (code == 0) for o in res) and
          abs(vals["max_muted_pct"]["value"] - want_all) < 1e-3 and
          abs(bo.get("value", 0) - want_near) < 1e-3,
          f"max_muted_pct and max_muted_pct_by_offset [0, 240) {what} {abs(delta)} % "
          f"{'above' if delta > 0 else 'below'} the NumPy count ({want_near:.3f} % near)",
          p.stdout[:400])

# ---- edits and elevation statics
KILL = range(10, 15)                        # channel indices of channels 11-15
je = json.load(open(os.path.join(B, "line.json")))
je.update({"edits": {"kill": [{"channels": "11-15"}]},
           "statics": {"datum_m": -10, "replacement_velocity_mps": 2000},
           "output": {"section": "out/edits.sgy", "report": "out/edits.json"}})
with open(os.path.join(B, "edits.json"), "w") as f:
    json.dump(je, f)
p = tz.run("stack", "--job", os.path.join(B, "edits.json"), "--quiet", check=False)
tz.ok(p.returncode == 0, "stack the clean line with kills and elevation statics", p.stderr)
acq_e, live_e = folds(dead=KILL)
want_kill = 100.0 * len(KILL) / CHANNELS
low_e = ranges([k for k in range(ff[0], ff[1] + 1) if live_e.get(k, 0) * 100 < 99 * nominal])
for lim_k, lim_s, code, what in ((5.21, 10, 0, "hold"), (5.2, 9.99, 1, "break")):
    lm = os.path.join(B, "edit_limits.json")
    with open(lm, "w") as f:
        json.dump({"max_killed_traces_pct": lim_k, "max_static_ms": lim_s}, f)
    p = tz.run("report", "--check", "--json", lm, os.path.join(B, "out", "edits.json"), check=False)
    res = {o["name"]: o for o in json.loads(p.stdout)} if p.stdout.strip().startswith("[") else {}
    k, st = res.get("max_killed_traces_pct", {}), res.get("max_static_ms", {})
    tz.ok(p.returncode == code and k.get("applies") and st.get("applies") and
          abs(k.get("value", 0) - want_kill) < 1e-9 and abs(st.get("value", 0) - 10) < 1e-6 and
          k.get("held") == (code == 0) and st.get("held") == (code == 0),
          f"killed {want_kill:.4f} % and statics 10 ms: max_killed_traces_pct {lim_k} and "
          f"max_static_ms {lim_s} {what}", p.stdout[:500])
with open(lim, "w") as f:
    json.dump({"min_fold_pct": 99, "min_nominal_fold": 24}, f)
p = tz.run("report", "--check", lim, os.path.join(B, "out", "edits.json"), check=False)
m = re.search(r"^min_fold_pct .* broken  CMP (.*)$", p.stdout, re.M)
tz.ok(p.returncode == 1 and m is not None and m.group(1) == ranges_text(low_e) and
      re.search(r"^min_nominal_fold +limit 24 +value 24 +held", p.stdout, re.M) is not None,
      f"killed channels keep the nominal 24 and break min_fold_pct 99 at CMP {ranges_text(low_e)}",
      p.stdout)

# ---- missing shots: low-fold runs inside the full-fold part
C = os.path.join(root, "gap")
MISSING = (17, 18, 19)
make_line(C, missing=MISSING)
job(C, limits={"min_fold": 22, "max_low_fold_run_cmps": 3}, name="Tarrowvane gap line")
p = stack(C)
tz.ok(p.returncode == 0, "stack the line with three missing shots", p.stderr)
acq_c, live_c = folds(missing=MISSING)
rc = json.load(open(os.path.join(C, "out", "qc.json")))
tz.ok(rc["fold"]["nominal"] == 24 and
      (rc["fold"]["full_fold_cmp_first"], rc["fold"]["full_fold_cmp_last"]) == ff,
      "missing shots keep the nominal fold and the full-fold part", json.dumps(rc["fold"]))
p = tz.run("report", "--check", os.path.join(C, "out", "qc.json"), check=False)
low = [k for k in range(ff[0], ff[1] + 1) if live_c.get(k, 0) < 22]
runs = ranges(low)
longest = max(b - a + 1 for a, b in runs)
mf = re.search(r"^min_fold .* broken  CMP (.*)$", p.stdout, re.M)
mr = re.search(r"^max_low_fold_run_cmps +limit 3 +value (\d+) +broken", p.stdout, re.M)
tz.ok(p.returncode == 1 and mf is not None and mf.group(1) == ranges_text(runs),
      f"limits recorded in the report: min_fold 22 breaks at CMP {ranges_text(runs)}", p.stdout)
tz.ok(mr is not None and int(mr.group(1)) == longest,
      f"longest run below min_fold is {longest} CMPs", p.stdout)

# ---- stack --check: complete outputs, then exit 1
D = os.path.join(root, "gate")
shutil.copytree(A, D)
shutil.rmtree(os.path.join(D, "out"))
os.makedirs(os.path.join(D, "out"))
job(D, limits="limits.json")
p = stack(D, "--check")
sec = os.path.join(D, "out", "stack.sgy")
qd = os.path.join(D, "out", "qc.json")
ncmp = None
if os.path.exists(sec):
    with segyio.open(sec, ignore_geometry=True) as f:
        ncmp = f.tracecount
rd = json.load(open(qd)) if os.path.exists(qd) else {}
tz.ok(p.returncode == 1, "stack --check exits 1 when a limit breaks", f"exit {p.returncode} {p.stderr}")
tz.ok(ncmp is not None and ncmp == rd.get("section", {}).get("cmps"),
      "the section is complete (segyio reads every CMP of the report)", f"{ncmp}")
tz.ok(rd.get("limits", {}).get("min_fold_pct") == 99, "the report records the job's limits",
      json.dumps(rd.get("limits")))
p = stack(B, "--check")
tz.ok(p.returncode == 65 and "limits" in p.stderr, "stack --check without limits in the job: 65",
      f"{p.returncode} {p.stderr}")

tz.done()
