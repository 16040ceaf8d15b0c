"""fieldline -- an independent segyio + NumPy generator of a field-style 2D line.

Shares no code with tzero. What a real line brings (issue 17):
- split spread 24-gap-24: 24 channels behind the source and 24 ahead, a
  10 m gap (near offset) on each side, receiver interval 5 m, a shot at every
  second station (source interval 10 m), channel 1 the rearmost receiver;
- the line runs at 35 degrees azimuth (clockwise from north) in projected
  coordinates of several hundred kilometres; every surveyed position carries GPS
  scatter, fixed per station: 0.03 m RMS along the line, 0.4 m RMS across it;
- a misfire: shot position MISFIRE_POSITION was not recorded (the field record
  numbers run on), and field record number SKIPPED_RECORD was never used
  (the shot positions run on);
- a dead trace (trace identification code 2, zeros), a live-coded all-zero
  trace and a noisy trace (RMS 30 times its record's);
- 0.5 ms sampling, IEEE floats, hyperbolic reflections (t^2 = t0^2 + x^2/v^2,
  Ricker 1953 wavelets at 50 Hz);
- the measurement system in binary header bytes 3255-3256 (SEG-Y rev 1: 1 metres,
  2 feet); with feet=True every length and velocity is written in feet
  (1 ft = 0.3048 m exactly, the international foot).

The coordinates are written with coordinate scalar -100 (hundredths of the unit), and
positions() gives every trace's positions as stored (rounded the same way), so
a test compares tzero with NumPy on the very numbers in the files.

write_sps() writes the same geometry as SPS revision 2.1 source (S), receiver (R)
and relation (X) files (SEG Technical Standards Committee, "SPS format,
revision 2.1", 2006), column layout given there:
  point records: identifier col 1, line name 2-11, point number 12-21,
  point index 24, point code 25-26, static 27-30, point depth 31-34,
  seismic datum 35-38, uphole time 39-40, water depth 41-46,
  easting 47-55, northing 56-65, surface elevation 66-71, day and time 72-80;
  relation records: field tape 2-7, field record 8-15, record increment 16,
  instrument code 17, source line 18-27, source point 28-37, source index 38,
  from channel 39-43, to channel 44-48, channel increment 49, receiver line 50-59,
  from receiver 60-69, to receiver 70-79, receiver index 80.
"""
import math
import os

import numpy as np
import segyio

FT = 0.3048                 # the international foot, metres (exact)
DG = 5.0                    # receiver interval, m
STATION_STEP = 2            # a shot at every second station
HALF = 24                   # channels on each side of the source
GAP_STATIONS = 2            # near offset = 2 stations (10 m)
AZ_DEG = 35.0
X0, Y0 = 512000.0, 6712000.0   # station FIRST_STATION, projected metres
FIRST_STATION = 1001
NPOS = 30                   # shot positions
FIRST_SHOT_STATION = FIRST_STATION + HALF + GAP_STATIONS
MISFIRE_POSITION = 11       # 0-based shot position with no record
SKIPPED_RECORD = 22         # field record number never used
SCATTER_ALONG_M = 0.03
SCATTER_CROSS_M = 0.4
DT_US = 500
NS = 801
EVENTS = [(0.120, 1800.0, 1.0), (0.220, 2000.0, -0.7), (0.330, 2300.0, 0.5)]
FREQ = 50.0
DEAD = (5, 10)              # (field record, channel)
ZERO = (8, 30)
NOISY = (12, 40)
LINE_NAME = "4711"


def ricker(t, f=FREQ):
    a = (np.pi * f * t) ** 2
    return (1 - 2 * a) * np.exp(-a)


def unit_vectors():
    a = math.radians(AZ_DEG)
    return (math.sin(a), math.cos(a)), (math.cos(a), -math.sin(a))   # along, right


BEND_FROM_M, BEND_TO_M = 150.0, 400.0   # a bent line turns between these along-line distances


def bend_azimuth(s, bend):
    """Line azimuth (degrees) at arc length s: AZ_DEG, turning by `bend` degrees
    between BEND_FROM_M and BEND_TO_M (a smoothstep)."""
    t = np.clip((np.asarray(s) - BEND_FROM_M) / (BEND_TO_M - BEND_FROM_M), 0.0, 1.0)
    return AZ_DEG + bend * t * t * (3 - 2 * t)


def true_line(bend=0.0, step=0.01, x0=X0, y0=Y0):
    """The line itself (no scatter): arc length, x, y on a fine grid, integrated
    from its azimuth (NumPy cumulative sum)."""
    last = FIRST_SHOT_STATION + STATION_STEP * (NPOS - 1) + GAP_STATIONS + HALF
    s = np.arange(-50.0, (last - FIRST_STATION) * DG + 50.0, step)
    a = np.radians(bend_azimuth(s, bend))
    x = x0 + np.concatenate([[0.0], np.cumsum(np.sin(a[:-1]) * step)])
    y = y0 + np.concatenate([[0.0], np.cumsum(np.cos(a[:-1]) * step)])
    k = np.searchsorted(s, 0.0)
    return s, x - (x[k] - x0), y - (y[k] - y0)


def station_positions(bend=0.0, x0=X0, y0=Y0):
    """Surveyed (x, y, z) of every station in metres, GPS scatter included. With
    bend != 0 the line turns by that many degrees (true_line)."""
    rng = np.random.default_rng(1717)
    last = FIRST_SHOT_STATION + STATION_STEP * (NPOS - 1) + GAP_STATIONS + HALF
    ls, lx, ly = true_line(bend, x0=x0, y0=y0)
    pos = {}
    for st in range(FIRST_STATION, last + 1):
        s = (st - FIRST_STATION) * DG + SCATTER_ALONG_M * rng.standard_normal()
        r = SCATTER_CROSS_M * rng.standard_normal()
        a = math.radians(float(bend_azimuth(s, bend)))
        ur, vr = math.cos(a), -math.sin(a)
        pos[st] = (float(np.interp(s, ls, lx)) + r * ur, float(np.interp(s, ls, ly)) + r * vr,
                   120.0 + 4.0 * math.sin(st / 17.0))
    return pos


def records():
    """(field record, source station) of every recorded shot, in order."""
    out, ffid = [], 1
    for i in range(NPOS):
        if i == MISFIRE_POSITION:
            continue
        if ffid == SKIPPED_RECORD:
            ffid += 1
        out.append((ffid, FIRST_SHOT_STATION + STATION_STEP * i))
        ffid += 1
    return out


def receivers(src):
    """Receiver stations of channels 1..48 of a shot at station src."""
    return [src - GAP_STATIONS - HALF + 1 + c for c in range(HALF)] + \
           [src + GAP_STATIONS + c for c in range(HALF)]


def scale(feet):
    return 1.0 / FT if feet else 1.0


def cm(v):
    return int(round(v * 100))


def coord_scale(feet):
    """Stored coordinate units per file unit: hundredths (scalar -100), in feet too (a
    feet line should use a local grid: 22 million feet of UTM northing would overflow
    a 32-bit field in hundredths)."""
    return 100


def positions(feet=False, bend=0.0, x0=X0, y0=Y0):
    """Every trace as stored: dict (ffid, channel) -> (sx, sy, rx, ry) in the
    file's unit (centimetre rounding of the stored coordinates)."""
    k = scale(feet)
    pos = station_positions(bend, x0, y0)
    out = {}
    for ffid, s in records():
        sx, sy, _ = pos[s]
        for c, r in enumerate(receivers(s)):
            rx, ry, _ = pos[r]
            q = coord_scale(feet)
            out[(ffid, c + 1)] = tuple(int(round(v * k * q)) / q for v in (sx, sy, rx, ry))
    return out


def write_shots(d, feet=False, coords=True, seed=5, bend=0.0, x0=X0, y0=Y0):
    """One SEG-Y file per record under d/shots; returns the file paths."""
    os.makedirs(os.path.join(d, "shots"), exist_ok=True)
    rng = np.random.default_rng(seed)
    k = scale(feet)
    pos = station_positions(bend, x0, y0)
    t = np.arange(NS) * DT_US * 1e-6
    F = segyio.TraceField
    paths = []
    for ffid, s in records():
        sx, sy, sz = pos[s]
        recs = receivers(s)
        spec = segyio.spec()
        spec.samples = list(range(NS))
        spec.format = 5
        spec.tracecount = len(recs)
        path = os.path.join(d, "shots", f"rec_{ffid:03d}.sgy")
        paths.append(path)
        with segyio.create(path, spec) as f:
            f.bin.update(hdt=DT_US, hns=NS, format=5, mfeet=2 if feet else 1)
            for c, r in enumerate(recs):
                (ua, va) = (math.sin(math.radians(float(bend_azimuth((s - FIRST_STATION) * DG, bend)))),
                            math.cos(math.radians(float(bend_azimuth((s - FIRST_STATION) * DG, bend)))))
                rx, ry, rz = pos[r]
                dx, dy = rx - sx, ry - sy
                x = math.hypot(dx, dy)
                sign = -1.0 if dx * ua + dy * va < 0 else 1.0
                tr = np.zeros(NS)
                for t0, v, a in EVENTS:
                    tr += a * ricker(t - np.sqrt(t0 * t0 + x * x / (v * v)))   # metres, m/s
                tr += 0.02 * rng.standard_normal(NS)
                kind = 1
                if (ffid, c + 1) == NOISY:
                    tr = tr + 30 * np.sqrt(np.mean(tr ** 2)) * rng.standard_normal(NS)
                if (ffid, c + 1) in (DEAD, ZERO):
                    tr[:] = 0.0
                    kind = 2 if (ffid, c + 1) == DEAD else 1
                h = {
                    F.TRACE_SEQUENCE_LINE: c + 1,
                    F.TRACE_SEQUENCE_FILE: c + 1,
                    F.FieldRecord: ffid,
                    F.TraceNumber: c + 1,
                    F.EnergySourcePoint: s,
                    F.TraceIdentificationCode: kind,
                    F.offset: int(round(sign * x * k)),
                    F.ElevationScalar: -100,
                    F.SourceGroupScalar: -coord_scale(feet),
                    F.ReceiverGroupElevation: cm(rz * k),
                    F.SourceSurfaceElevation: cm(sz * k),
                    F.TRACE_SAMPLE_COUNT: NS,
                    F.TRACE_SAMPLE_INTERVAL: DT_US,
                    F.CoordinateUnits: 1,
                }
                if coords:
                    q = coord_scale(feet)
                    h.update({F.SourceX: int(round(sx * k * q)), F.SourceY: int(round(sy * k * q)),
                              F.GroupX: int(round(rx * k * q)), F.GroupY: int(round(ry * k * q))})
                f.header[c] = h
                f.trace[c] = tr.astype(np.float32)
    return paths


def _point(kind, line, point, x, y, z, code):
    """One SPS rev 2.1 point record (80 columns)."""
    rec = (f"{kind:1s}{line:>10s}{point:10.2f}  1{code:2s}"    # 1, 2-11, 12-21, 22-23, 24, 25-26
           f"{0:4d}{0.0:4.1f}{0:4d}{0:2d}{0.0:6.1f}"            # 27-30, 31-34, 35-38, 39-40, 41-46
           f"{x:9.1f}{y:10.1f}{z:6.1f}{'001120000':>9s}")       # 47-55, 56-65, 66-71, 72-80
    assert len(rec) == 80, rec
    return rec


def _relation(ffid, sline, spoint, ch0, ch1, rline, r0, r1):
    """One SPS rev 2.1 relation record (80 columns)."""
    rec = (f"X{'T0001':>6s}{ffid:8d}1A{sline:>10s}{spoint:10.2f}1"   # 1, 2-7, 8-15, 16, 17, 18-27, 28-37, 38
           f"{ch0:5d}{ch1:5d}1{rline:>10s}{r0:10.2f}{r1:10.2f}1")    # 39-43, 44-48, 49, 50-59, 60-69, 70-79, 80
    assert len(rec) == 80, rec
    return rec


def write_sps(d, unmatched=True):
    """S, R and X files of the line (positions in metres, rounded to 0.1 m as the
    F9.1/F10.1 fields hold them). unmatched=True adds a source point that was
    never shot and a receiver point no relation names. Returns (s, r, x) paths
    and the positions dict (ffid, channel) -> (sx, sy, rx, ry) as written."""
    pos = station_positions()
    hdr = ["H00 SPS format version num.     SPS V2.1                              ",
           "H26 synthetic line written by the tzero cross-checks                  "]
    spath, rpath, xpath = (os.path.join(d, n) for n in ("line.s", "line.r", "line.x"))
    shot = {s for _, s in records()}
    with open(spath, "w") as f:
        f.write("\n".join(h[:80] for h in hdr) + "\n")
        for i in range(NPOS):
            s = FIRST_SHOT_STATION + STATION_STEP * i
            if s not in shot and not unmatched:
                continue
            x, y, z = pos[s]
            f.write(_point("S", LINE_NAME, s, x, y, z, "E1") + "\n")
    with open(rpath, "w") as f:
        f.write("\n".join(h[:80] for h in hdr) + "\n")
        for st in sorted(pos):
            x, y, z = pos[st]
            f.write(_point("R", LINE_NAME, st, x, y, z, "G1") + "\n")
        if unmatched:
            f.write(_point("R", "9999", 1.0, X0, Y0, 0.0, "G1") + "\n")
    out = {}
    with open(xpath, "w") as f:
        f.write("\n".join(h[:80] for h in hdr) + "\n")
        for ffid, s in records():
            rs = receivers(s)
            f.write(_relation(ffid, LINE_NAME, s, 1, HALF, LINE_NAME, rs[0], rs[HALF - 1]) + "\n")
            f.write(_relation(ffid, LINE_NAME, s, HALF + 1, 2 * HALF, LINE_NAME, rs[HALF],
                              rs[-1]) + "\n")
            sx, sy, _ = pos[s]
            for c, r in enumerate(rs):
                rx, ry, _ = pos[r]
                out[(ffid, c + 1)] = tuple(round(v, 1) for v in (sx, sy, rx, ry))
    return spath, rpath, xpath, out
