"""test_sps_geometry -- geometry from SPS revision 2.1 files against NumPy.

The S, R and X files are written by fieldline.write_sps() from the column layout
published in SEG Technical Standards Committee, "SPS format, revision 2.1" (2006)
(point records: line name 2-11, point number 12-21, point index 24, easting 47-55,
northing 56-65, elevation 66-71; relation records: field record 8-15, source line
18-27, source point 28-37, channels 39-43 to 44-48, receiver line 50-59, receivers
60-69 to 70-79). The shot files (segyio) carry no coordinates, so every position
tzero writes back with --write comes from the SPS files. Checked here with segyio
and NumPy: positions, offsets (hypot), midpoints (half sums) and CMP numbers
(first + round(s / size) with s the projection on the reported line, the rule
of tzero-geometry(1)).
"""
import json
import os
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import fieldline as fl  # noqa: E402
from tzcheck import WORK, done, ok, run  # noqa: E402

d = os.path.join(WORK, "sps")
paths = fl.write_shots(d, coords=False)
s, r, x, want = fl.write_sps(d)
out = os.path.join(d, "with_geometry")
p = run("geometry", "--sps", f"{s},{r},{x}", "--json", "--write", out, *paths)
ok(p.returncode == 0, "geometry --sps --write", p.stderr)
g = json.loads(p.stdout) if p.returncode == 0 else {}
sp = g.get("sps", {})
ok(sp.get("relations") == 2 * len(fl.records()) and sp.get("relations_matched") == sp.get("relations"),
   f"every relation record matched ({sp.get('relations_matched')} of {sp.get('relations')})")
un = sp.get("unmatched", [])
ok(sorted(u["record"] for u in un) == ["receiver", "receiver", "receiver", "source"],
   "unmatched: the misfired source point, two unused end stations and the stray receiver",
   json.dumps(un))
mis = fl.FIRST_SHOT_STATION + fl.STATION_STEP * fl.MISFIRE_POSITION
ok(any(u["record"] == "source" and f"point {mis}.00" in u["what"] for u in un),
   "the misfired source point is listed")

line = g.get("line", {})
az = np.radians(line.get("azimuth_deg", 0.0))
u = np.array([np.sin(az), np.cos(az)])
o = np.array([line.get("origin_x_m", 0.0), line.get("origin_y_m", 0.0)])
size, first = line.get("bin_size_m", 1.0), line.get("first_cmp", 1)
worst_pos = worst_off = 0.0
cmp_bad = 0
F = segyio.TraceField
for path in paths:
    with segyio.open(os.path.join(out, os.path.basename(path)), ignore_geometry=True) as f:
        for h in f.header:
            key = (h[F.FieldRecord], h[F.TraceNumber])
            sx, sy, rx, ry = want[key]
            got = np.array([h[F.SourceX], h[F.SourceY], h[F.GroupX], h[F.GroupY]]) / 100.0
            worst_pos = max(worst_pos, float(np.max(np.abs(got - [sx, sy, rx, ry]))))
            off = np.hypot(rx - sx, ry - sy)
            worst_off = max(worst_off, abs(abs(h[F.offset]) - round(off)))
            m = np.array([(sx + rx) / 2, (sy + ry) / 2])
            c = first + int(np.floor((m - o) @ u / size + 0.5))
            if key != fl.DEAD and h[F.CDP] != c:
                cmp_bad += 1
ok(worst_pos < 0.006, f"source and receiver positions = the SPS files (worst {worst_pos:.3f} m)")
ok(worst_off == 0, "offsets = NumPy hypot of the SPS positions (rounded to metres)")
ok(cmp_bad == 0, f"CMP numbers = NumPy projection on the reported line ({cmp_bad} differ)")

# Offsets per record against NumPy at full precision (the JSON summary).
worst = 0.0
for q in g.get("shots", []):
    ffid = q["field_record"]
    offs = [np.hypot(want[(ffid, c)][2] - want[(ffid, c)][0], want[(ffid, c)][3] - want[(ffid, c)][1])
            for c in range(1, 2 * fl.HALF + 1) if (ffid, c) != fl.DEAD]
    worst = max(worst, abs(q["offset_min_m"] - min(offs)), abs(q["offset_max_m"] - max(offs)))
ok(worst < 1e-9, f"offset range of every record = NumPy (worst {worst:.1e} m)")
done()
