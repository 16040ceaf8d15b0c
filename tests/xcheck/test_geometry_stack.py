"""test_geometry_stack -- `tzero geometry` and `tzero stack` agree on every figure.

Both commands make the same survey inference (intervals, channels per record,
nominal fold, shooting direction, processing line); this test runs both on the
same job for four lines written here with segyio and NumPy, independently of
tzero, and compares every figure they both report (a consistency check between
the two commands), then checks the figures against the acquisition the lines
were designed with (outside checks):

  straight   off-end spread, line fitted through the midpoints, a dead channel
             and a time-break trace in some records;
  split      split spread with a gap at the source, shots moving against the
             azimuth the job gives (the shooting direction turns round);
  crooked    the line bends by 12 degrees half-way; a straight line is fitted
             and midpoints farther than 20 m from it are off the line;
  scatter    GPS scatter of +-0.4 m on every position (NumPy seeded), line at
             azimuth 30 degrees.

Sources of the outside checks: nominal fold N dg / (2 ds) with N every channel
recorded, dead ones included (Sheriff & Geldart 1995; Yilmaz 2001, page from
memory; common practice); bin size half the receiver interval (common
practice); offset sign negative when the receiver lies opposite to the
shooting direction (SEG-Y rev 1 (2002), trace header bytes 37-40).
"""
import json
import math
import os
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

NS, DT_US = 64, 4000


def design(name):
    """(records, dg, ds, N) for a line: records = [(ffid, [(kind, sx, sy, rx, ry)])]."""
    rng = np.random.default_rng(20261202)
    recs = []
    if name == "straight":
        dg, ds, n = 10.0, 20.0, 24
        for s in range(16):
            sx = 1000.0 + s * ds
            tr = [(1, sx, 2000.0, sx + 50 + c * dg, 2000.0) for c in range(n)]
            if s == 3:
                tr[5] = (2,) + tr[5][1:]                    # dead channel
            if s in (2, 9):
                tr.insert(0, (4, 0.0, 0.0, 0.0, 0.0))      # time break, no position
            recs.append((101 + s, tr))
    elif name == "split":
        dg, ds, n = 5.0, 10.0, 48
        for s in range(20):
            sx = 3000.0 - s * ds                           # shots move west
            tr = []
            for c in range(n):
                rx = sx - 7.5 - (23 - c) * dg if c < 24 else sx + 7.5 + (c - 24) * dg
                tr.append((1, sx, 500.0, rx, 500.0))
            recs.append((1 + s, tr))
    elif name == "crooked":
        dg, ds, n = 10.0, 30.0, 30
        bend = math.radians(12)

        def at(u):   # along-line distance -> position on the bent line
            if u <= 600:
                return 5000.0 + u, 7000.0
            return 5600.0 + (u - 600) * math.cos(bend), 7000.0 + (u - 600) * math.sin(bend)
        for s in range(30):
            su = s * ds
            tr = [(1, *at(su), *at(su + 20 + c * dg)) for c in range(n)]
            recs.append((1 + s, tr))
    else:   # scatter
        dg, ds, n = 12.5, 25.0, 32
        az = math.radians(30)
        ux, uy = math.sin(az), math.cos(az)
        for s in range(18):
            su = s * ds
            j = rng.uniform(-0.4, 0.4, size=(n + 1, 2))
            sx, sy = 400000.0 + su * ux + j[0, 0], 6000000.0 + su * uy + j[0, 1]
            tr = []
            for c in range(n):
                ru = su + 25 + c * dg
                tr.append((1, sx, sy, 400000.0 + ru * ux + j[c + 1, 0],
                           6000000.0 + ru * uy + j[c + 1, 1]))
            recs.append((1 + s, tr))
    return recs, dg, ds, n


def write_line(d, name):
    recs, dg, ds, n = design(name)
    os.makedirs(os.path.join(d, "shots"), exist_ok=True)
    F = segyio.TraceField
    for k, (ffid, tr) in enumerate(recs):
        spec = segyio.spec()
        spec.samples = list(range(NS))
        spec.format = 5
        spec.tracecount = len(tr)
        with segyio.create(os.path.join(d, "shots", f"r{k:03d}.sgy"), spec) as f:
            f.bin.update(hdt=DT_US, hns=NS, format=5, mfeet=1)
            for c, (kind, sx, sy, rx, ry) in enumerate(tr):
                off = math.hypot(rx - sx, ry - sy)
                f.header[c] = {
                    F.FieldRecord: ffid, F.TraceNumber: c + 1,
                    F.TraceIdentificationCode: kind, F.offset: int(round(off)),
                    F.SourceGroupScalar: -100, F.CoordinateUnits: 1,
                    F.SourceX: int(round(sx * 100)), F.SourceY: int(round(sy * 100)),
                    F.GroupX: int(round(rx * 100)), F.GroupY: int(round(ry * 100)),
                    F.TRACE_SAMPLE_COUNT: NS, F.TRACE_SAMPLE_INTERVAL: DT_US,
                }
                t = np.zeros(NS, dtype=np.float32)
                t[20] = 1.0
                f.trace[c] = t
    with open(os.path.join(d, "v.csv"), "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n1,0,2000\n")
    bins = {}
    if name == "split":
        bins = {"origin_x_m": 2000.0, "origin_y_m": 500.0, "azimuth_deg": 90.0, "first_cmp": 1}
    if name == "crooked":
        bins = {"max_distance_m": 20.0}
    job = {"name": name, "shots": ["shots/r*.sgy"], "geometry": "headers", "bins": bins,
           "velocity": "v.csv", "output": {"section": "out.sgy", "report": "qc.json"}}
    with open(os.path.join(d, "job.json"), "w") as fp:
        json.dump(job, fp)
    return recs, dg, ds, n


def near(a, b, tol=1e-6):
    return a is not None and b is not None and abs(a - b) <= tol


def check_line(name):
    d = os.path.join(tz.WORK, name)
    recs, dg, ds, n = write_line(d, name)
    job = os.path.join(d, "job.json")
    pg = tz.run("geometry", "--job", job, "--json")
    ps = tz.run("stack", "--job", job, "--threads", "2", "--json")
    if not tz.ok(pg.returncode == 0 and ps.returncode == 0, f"{name}: both commands run",
                 pg.stderr + ps.stderr):
        return
    g, q = json.loads(pg.stdout), json.loads(ps.stdout)
    gl, ql, qg = g["line"], q["geometry"]["line"], q["geometry"]

    # --- consistency check: every figure both commands report, compared
    pairs = [
        ("bin size", gl["bin_size_m"], ql["bin_size_m"], 1e-9),
        ("line origin x", gl["origin_x_m"], ql["origin_x_m"], 1e-3),
        ("line origin y", gl["origin_y_m"], ql["origin_y_m"], 1e-3),
        ("line azimuth", gl["azimuth_deg"], ql["azimuth_deg"], 1e-5),
        ("first CMP number", gl["first_cmp"], ql["first_cmp"], 0),
        ("off-line limit", gl["max_off_line_m"], ql["max_off_line_m"], 0),
        ("nominal fold", g["fold"]["nominal"], q["fold"]["nominal"], 1e-3),
        ("receiver interval", g["receiver_interval_m"], qg["receiver_interval_m"], 0),
        ("source interval", g["source_interval_m"], qg["source_interval_m"], 0),
        ("channels per record", g["channels_per_record"], qg["channels_per_record"], 0),
        ("records", g["records"], qg["records"], 0),
        ("shooting azimuth", g["shooting_azimuth_deg"], qg["shooting_azimuth_deg"], 1e-5),
        ("first CMP with traces", g["cmp_range"]["first"], q["section"]["cmp_first"], 0),
        ("last CMP with traces", g["cmp_range"]["last"], q["section"]["cmp_last"], 0),
        ("traces read", g["traces"]["read"], q["traces"]["read"], 0),
        ("traces binned / stacked", g["traces"]["binned"], q["traces"]["stacked"], 0),
        ("dead traces", g["traces"]["skipped"]["dead"], q["traces"]["skipped"]["dead"], 0),
        ("auxiliary traces", g["traces"]["skipped"]["auxiliary"],
         q["traces"]["skipped"]["auxiliary"], 0),
        ("off-line traces", g["traces"]["skipped"]["off_line"],
         q["traces"]["skipped"]["off_line"], 0),
        ("fold min", g["fold"]["min"], q["fold"]["min"], 0),
        ("fold max", g["fold"]["max"], q["fold"]["max"], 0),
    ]
    for what, a, b, tol in pairs:
        tz.ok(near(a, b, tol), f"{name}: {what} the same in geometry and stack", f"{a} vs {b}")
    tz.ok(gl["fitted"] == (ql["origin"] == "fitted"), f"{name}: both fit the line or neither")
    gc = {c["cmp"]: c for c in g["cmps"]}
    qc = {c["cmp"]: c for c in q["cmps"]}
    bad = [k for k in set(gc) | set(qc)
           if k not in gc or k not in qc or gc[k]["fold"] != qc[k]["fold"]
           or not near(gc[k]["x_m"], qc[k]["x_m"], 1e-3) or not near(gc[k]["y_m"], qc[k]["y_m"], 1e-3)
           or (gc[k]["fold"] and (not near(gc[k]["offset_min_m"], qc[k]["offset_min_m"], 1e-3)
                                  or not near(gc[k]["offset_max_m"], qc[k]["offset_max_m"], 1e-3)))]
    tz.ok(not bad, f"{name}: fold, bin centre and offset range of all {len(gc)} CMPs the same",
          f"CMPs {sorted(bad)[:5]}")

    # --- outside checks against the design of the line
    tol = 0.2 if name == "scatter" else 1e-9
    tz.ok(near(g["receiver_interval_m"], dg, tol), f"{name}: receiver interval {dg} m (design)",
          str(g["receiver_interval_m"]))
    tz.ok(near(g["source_interval_m"], ds, tol), f"{name}: source interval {ds} m (design)",
          str(g["source_interval_m"]))
    tz.ok(g["channels_per_record"] == n,
          f"{name}: {n} channels per record, the dead one counted, time breaks not",
          str(g["channels_per_record"]))
    nominal = n * g["receiver_interval_m"] / (2 * g["source_interval_m"])
    tz.ok(near(g["fold"]["nominal"], nominal, 1e-9) and near(nominal, n * dg / (2 * ds), 0.02 * n),
          f"{name}: nominal fold N dg / (2 ds) = {n * dg / (2 * ds):g} (Sheriff & Geldart 1995)",
          str(g["fold"]["nominal"]))
    tz.ok(near(gl["bin_size_m"], g["receiver_interval_m"] / 2, 1e-9),
          f"{name}: bin size half the receiver interval (common practice)")
    if name == "split":
        tz.ok(near(g["shooting_azimuth_deg"], 270.0, 1e-9),
              "split: shots moving west against a line azimuth of 90 deg shoot at 270 deg")
    if name == "scatter":
        tz.ok(near(gl["azimuth_deg"], 30.0, 0.05),
              "scatter: fitted line azimuth within 0.05 deg of the design's 30 deg",
              str(gl["azimuth_deg"]))
    if name == "crooked":
        tz.ok(g["traces"]["skipped"]["off_line"] > 0,
              "crooked: some midpoints of the bent part lie beyond 20 m from the fitted line")


def main():
    for name in ("straight", "split", "crooked", "scatter"):
        check_line(name)
    tz.done()


if __name__ == "__main__":
    main()
