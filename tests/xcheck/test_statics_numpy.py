"""Elevation statics and trace edits, checked with segyio and NumPy.

1. A line with 25 m of topography (synth near-surface model, no weathering)
   stacked with elevation statics must equal the same line synthesised on a flat
   surface at the datum: correlation >= 0.99 at every CMP of half the nominal
   fold or more, events within 0.25 sample (cross-correlation peak refined by a
   parabola, NumPy); without statics it must fail that test. Correlation and lag
   are computed here with NumPy from the sections read with segyio.
2. The station statics table of `tzero statics elevation` against
   -(E - D) / v_r computed here (the definition; common practice) from the
   elevations segyio reads from the headers (bytes 41-48, scalar 69-70).
3. Bytes 99-104 of NMO-corrected gathers hold the source, receiver and total
   static with the time scalar of bytes 215-216 (SEG-Y rev 1, 2002), read with
   segyio and compared with the NumPy statics of each trace.
4. Edits: a trace zeroed and one made 20 times noisier (NumPy, written with
   segyio) are killed automatically with their reasons; a kill by each selector
   is counted in the QC report; a channel written with reversed polarity lowers
   the stack's correlation with the clean stack, and reversing it restores it.
"""
import json
import os
import shutil

import numpy as np
import segyio

import tzcheck as tz

W = tz.WORK
DATUM, VR = 120.0, 2000.0


def write_line(name, elevations):
    layout = dict(receiver_interval_m=10, first_station_x_m=500000, first_station_y_m=6200000,
                  azimuth_deg=90, source_interval_m=20, first_source_m=240, shot_count=30,
                  spread="split", channels=48, channels_behind=24, near_offset_m=10,
                  source_depth_m=0, first_field_record=101, station_elevations_m=elevations)
    with open(os.path.join(W, f"layout_{name}.json"), "w") as f:
        json.dump(layout, f)
    model = dict(layers=[dict(thickness_m=200, velocity_mps=2000),
                         dict(thickness_m=300, velocity_mps=2400), dict(velocity_mps=3000)],
                 near_surface=dict(datum_m=DATUM, replacement_velocity_mps=VR))
    with open(os.path.join(W, "model.json"), "w") as f:
        json.dump(model, f)
    tz.run("synth", "--model", os.path.join(W, "model.json"), "--layout",
           os.path.join(W, f"layout_{name}.json"), "--out", os.path.join(W, name),
           "--record-ms", 700, "--interval-ms", 2, "--peak-hz", 25, "--format", "ieee",
           "--no-direct", "--no-head-wave", "--quiet")


def write_job(name, shots, statics=None, edits=None, extra=None):
    job = {"shots": [f"{shots}/shot_*.sgy"], "geometry": "headers", "bins": {"size_m": 5},
           "velocity": f"{shots}/rms_velocity.csv",
           "moveout": {"stretch_limit_pct": 50, "interpolation": "sinc8"},
           "output": {"section": f"{name}.sgy", "report": f"{name}_qc.json"}, "threads": 2}
    if statics:
        job["statics"] = statics
    if edits:
        job["edits"] = edits
    if extra:
        job.update(extra)
    path = os.path.join(W, f"{name}.job.json")
    with open(path, "w") as f:
        json.dump(job, f)
    return path


def read_section(path):
    with segyio.open(path, ignore_geometry=True) as s:
        data = np.stack([s.trace[i] for i in range(s.tracecount)]).astype(np.float64)
        cmp = np.array(s.attributes(segyio.TraceField.CDP)[:])
        fold = np.array(s.attributes(segyio.TraceField.NStackedTraces)[:])
    return data, cmp, fold


def lag_samples(a, b):
    """Lag of b against a (samples), parabola through the cross-correlation peak."""
    c = np.correlate(b, a, mode="full")
    k = int(np.argmax(c))
    if 0 < k < len(c) - 1:
        y0, y1, y2 = c[k - 1], c[k], c[k + 1]
        d = 0.5 * (y0 - y2) / (y0 - 2 * y1 + y2) if (y0 - 2 * y1 + y2) != 0 else 0.0
    else:
        d = 0.0
    return k + d - (len(a) - 1)


def compare(ref, test, nominal):
    R, rc, rf = ref
    X, xc, _ = test
    worst_c, worst_lag, n = 1.0, 0.0, 0
    for k, c in enumerate(xc):
        i = np.where(rc == c)[0]
        if not len(i) or rf[i[0]] < nominal / 2:
            continue
        a, b = R[i[0]], X[k]
        cc = float((a * b).sum() / np.sqrt((a * a).sum() * (b * b).sum() + 1e-30))
        worst_c = min(worst_c, cc)
        worst_lag = max(worst_lag, abs(lag_samples(a, b)))
        n += 1
    return n, worst_c, worst_lag


# ---- 1. topography only: statics make the stack of the flat line
n_st = 150
elev = [round(132 + 10 * np.sin(i / 9.0) + 3 * np.sin(i / 2.3 + 1), 2) for i in range(n_st)]
write_line("topo", elev)
write_line("flat", [DATUM] * n_st)
st = {"datum_m": DATUM, "replacement_velocity_mps": VR, "elevation": True}
jobs = {"flat": write_job("flat", "flat"), "topo": write_job("topo", "topo"),
        "topo_st": write_job("topo_st", "topo", statics=st)}
for k, j in jobs.items():
    p = tz.run("stack", "--job", j, "--quiet")
    tz.ok(p.returncode == 0, f"stack {k}", p.stderr)
ref = read_section(os.path.join(W, "flat.sgy"))
nominal = 48 * 10 / (2 * 20)        # N dg / (2 ds), Yilmaz 2001 (CMP fold; common practice)
n, c_st, lag_st = compare(ref, read_section(os.path.join(W, "topo_st.sgy")), nominal)
tz.ok(n > 50 and c_st >= 0.99 and lag_st <= 0.25,
      f"topography + elevation statics = flat line: {n} CMPs, worst correlation {c_st:.4f} "
      f"(>= 0.99), worst lag {lag_st:.3f} samples (<= 0.25)")
n, c_no, lag_no = compare(ref, read_section(os.path.join(W, "topo.sgy")), nominal)
tz.ok(c_no < 0.99 or lag_no > 0.25,
      f"without statics the test fails: worst correlation {c_no:.4f}, worst lag {lag_no:.2f}")

# ---- 2. statics elevation table against -(E - D) / v_r from the headers
table = os.path.join(W, "elev.csv")
p = tz.run("statics", "elevation", "--job", jobs["topo_st"], "--out", table, "--quiet")
tz.ok(p.returncode == 0, "statics elevation writes a table", p.stderr)
rows = [l.strip().split(",") for l in open(table) if not l.startswith("#")]
head, rows = rows[0], rows[1:]
tz.ok(head[:6] == ["kind", "station", "x_m", "y_m", "elevation_m", "static_ms"],
      "table columns kind,station,x_m,y_m,elevation_m,static_ms")
want = {}
for f in sorted(os.listdir(os.path.join(W, "topo"))):
    if not f.endswith(".sgy"):
        continue
    with segyio.open(os.path.join(W, "topo", f), ignore_geometry=True) as s:
        sc = s.attributes(segyio.TraceField.ElevationScalar)[:]
        cs = s.attributes(segyio.TraceField.SourceGroupScalar)[:]
        scale = np.where(sc < 0, 1.0 / np.abs(sc), np.where(sc > 0, sc, 1.0))
        cscale = np.where(cs < 0, 1.0 / np.abs(cs), np.where(cs > 0, cs, 1.0))
        gx = s.attributes(segyio.TraceField.GroupX)[:] * cscale
        ge = s.attributes(segyio.TraceField.ReceiverGroupElevation)[:] * scale
        sx = s.attributes(segyio.TraceField.SourceX)[:] * cscale
        se = s.attributes(segyio.TraceField.SourceSurfaceElevation)[:] * scale
        for x, e in zip(gx, ge):
            want[("receiver", round(float(x), 2))] = -(e - DATUM) / VR * 1e3
        for x, e in zip(sx, se):
            want[("source", round(float(x), 2))] = -(e - DATUM) / VR * 1e3
err = max(abs(float(r[5]) - want[(r[0], round(float(r[2]), 2))]) for r in rows)
tz.ok(len(rows) == len(want) and err < 1e-3,
      f"{len(rows)} stations, static_ms = -(E - D)/v_r within {err:.2e} ms (common practice)")

# ---- 3. statics in bytes 99-104 of NMO gathers
gathers = os.path.join(W, "nmo.sgy")
p = tz.run("nmo", "--job", jobs["topo_st"], "--cmps", "60-70", "--out", gathers, "--quiet")
tz.ok(p.returncode == 0, "nmo with statics", p.stderr)
with segyio.open(gathers, ignore_geometry=True) as s:
    ts = s.attributes(segyio.TraceField.ScalarTraceHeader)[:]
    scale = np.where(ts < 0, 1.0 / np.abs(ts), np.where(ts > 0, ts, 1.0))
    src = s.attributes(segyio.TraceField.SourceStaticCorrection)[:] * scale
    rcv = s.attributes(segyio.TraceField.GroupStaticCorrection)[:] * scale
    tot = s.attributes(segyio.TraceField.TotalStaticApplied)[:] * scale
    cs = s.attributes(segyio.TraceField.SourceGroupScalar)[:]
    cscale = np.where(cs < 0, 1.0 / np.abs(cs), np.where(cs > 0, cs, 1.0))
    sx = s.attributes(segyio.TraceField.SourceX)[:] * cscale
    gx = s.attributes(segyio.TraceField.GroupX)[:] * cscale
ws = np.array([want[("source", round(float(x), 2))] for x in sx])
wr = np.array([want[("receiver", round(float(x), 2))] for x in gx])
tz.ok(np.all(ts == -100), "time scalar -100 in bytes 215-216 (hundredths of ms)")
tz.ok(np.max(np.abs(src - ws)) <= 0.006 and np.max(np.abs(rcv - wr)) <= 0.006 and
      np.max(np.abs(tot - (ws + wr))) <= 0.011,
      "bytes 99-104: source, receiver and total static to 0.01 ms")

# ---- 4. edits
shutil.copytree(os.path.join(W, "flat"), os.path.join(W, "edit"))
shot = os.path.join(W, "edit", "shot_000110.sgy")
with segyio.open(shot, "r+", ignore_geometry=True) as s:
    rng = np.random.default_rng(7)
    tr5 = s.trace[5]
    s.trace[5] = np.zeros_like(tr5)                       # dead
    rms = np.sqrt(np.mean(np.array([s.trace[i] for i in range(48)]) ** 2, axis=1))
    med = float(np.median(rms))
    s.trace[20] = (rng.standard_normal(len(tr5)) * 20 * med).astype(np.float32)   # 20x noisy
flat_ref = read_section(os.path.join(W, "flat.sgy"))
auto = {"auto": {"dead": True, "rms_ratio_max": 8}}
j = write_job("edit_auto", "edit", edits=auto)
p = tz.run("stack", "--job", j, "--quiet")
qc = json.load(open(os.path.join(W, "edit_auto_qc.json")))
k = qc["traces"]["killed"]
tz.ok(p.returncode == 0 and k["dead"] == 1 and k["noisy"] == 1 and k["listed"] == 0,
      f"automatic kills: dead {k['dead']} and noisy {k['noisy']} (one each)", p.stderr)
ak = [(a["file"].split("/")[-1], a["trace"], a["channel"], a["reason"])
      for a in qc["edits"]["auto_killed"]]
tz.ok(ak == [("shot_000110.sgy", 6, 6, "dead"), ("shot_000110.sgy", 21, 21, "noisy")],
      f"each automatic kill listed with its file, trace, channel and reason: {ak}")
p = tz.run("report", os.path.join(W, "edit_auto_qc.json"))
tz.ok("trace 21 (record 110, channel 21): noisy" in p.stdout,
      "the summary names the killed traces", p.stdout[-400:])

sel = [{"record": 110}, {"record": "110-111", "channels": "1-4"}, {"channels": [3, "7-8"]},
       {"source_station": 12}, {"receiver_station": "40"}, {"file": "shot_000112.sgy"},
       {"record": 999}]
for i, e in enumerate(sel):
    jj = write_job(f"edit_k{i}", "flat", edits={"kill": [e]})
    p = tz.run("stack", "--job", jj, "--quiet")
    q = json.load(open(os.path.join(W, f"edit_k{i}_qc.json")))
    n_kill = q["traces"]["killed"]["listed"]
    expect = {0: 48, 1: 8, 2: 90, 3: 48, 4: None, 5: 48, 6: 0}[i]
    if expect is None:
        good = n_kill > 0 and q["traces"]["stacked"] == q["traces"]["read"] - n_kill
    else:
        good = n_kill == expect
    if i == 6:
        good = good and "$.edits.kill[0] selects no trace" in q["edits"]["warnings"]
    tz.ok(p.returncode == 0 and good, f"kill by {json.dumps(e)}: {n_kill} traces killed",
          p.stderr)

# a reversed-polarity channel: lowers the correlation with the clean stack; reversing it restores
shutil.copytree(os.path.join(W, "flat"), os.path.join(W, "rev"))
for f in sorted(os.listdir(os.path.join(W, "rev"))):
    if f.endswith(".sgy"):
        with segyio.open(os.path.join(W, "rev", f), "r+", ignore_geometry=True) as s:
            for i in range(s.tracecount):
                if s.header[i][segyio.TraceField.TraceNumber] == 17:
                    s.trace[i] = -s.trace[i]
jr = write_job("rev_left", "rev")
jf = write_job("rev_fixed", "rev", edits={"reverse": [{"channels": "17"}]})
for jj in (jr, jf):
    tz.run("stack", "--job", jj, "--quiet")


def worst_gain(ref, test):
    """Smallest amplitude ratio (a.b)/(a.a) of a stack trace to the clean one (NumPy)."""
    R, rc, rf = ref
    X, xc, _ = test
    g = []
    for k, c in enumerate(xc):
        i = np.where(rc == c)[0]
        if len(i) and rf[i[0]] >= nominal / 2:
            a = R[i[0]]
            g.append(float((a * X[k]).sum() / (a * a).sum()))
    return min(g)


g_left = worst_gain(flat_ref, read_section(os.path.join(W, "rev_left.sgy")))
g_fix = worst_gain(flat_ref, read_section(os.path.join(W, "rev_fixed.sgy")))
q = json.load(open(os.path.join(W, "rev_fixed_qc.json")))
# one of N traces reversed sums to (N - 2) / N of the amplitude (common practice)
tz.ok(g_left < 0.9 and abs(g_fix - 1) < 1e-5 and q["traces"]["reversed"] == 30,
      f"reversed channel 17 left in: stack amplitude down to {g_left:.3f} of the clean stack; "
      f"reversed by the edit: {g_fix:.6f}, {q['traces']['reversed']} traces reversed")
tz.done()
