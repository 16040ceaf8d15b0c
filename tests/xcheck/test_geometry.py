"""test_geometry -- `tzero geometry --json` on `tzero synth` output against an
independent count of midpoints made here from the layout alone.

References: the layout rules of docs/layout.md, re-implemented here in Python;
midpoint and offset formulas of Sheriff & Geldart 1995; common practice; CMP numbering of tzero-geometry(1)
"Processing line and bins" (s = (m - o).u, CMP = first + round(s / size));
nominal fold N dg / (2 ds) (Sheriff & Geldart 1995; common practice). The geometry
table is written here from the same Python positions (segyio-free path).
"""
import collections
import json
import math
import os

from tzcheck import WORK, done, ok, run


def positions(L):
    """(field_record, channel, src_along, rec_along) for every trace of a layout."""
    dg, ds, n = L["receiver_interval_m"], L["source_interval_m"], L["channels"]
    gap = L.get("near_offset_m", dg)
    nb = L.get("channels_behind", n // 2)
    skipped = set(L.get("skipped_shot_points", []))
    fsp = L.get("first_shot_point", 1)
    ffid = L.get("first_field_record", 1)
    out = []
    for i in range(L["shot_count"]):
        if fsp + i in skipped:
            continue
        sa = L.get("first_source_m", 0) + i * ds
        for c in range(n):
            if L.get("spread") == "behind":
                ra = sa - gap - (n - 1 - c) * dg
            elif L.get("spread") == "split":
                ra = sa - gap - (nb - 1 - c) * dg if c < nb else sa + gap + (c - nb) * dg
            else:
                ra = sa + gap + c * dg
            out.append((ffid, c + 1, sa, ra))
        ffid += 1
    return out


def expected(L, bin_m):
    """Independent CMP count: fold and offset range per CMP."""
    pos = positions(L)
    mids = [(sa + ra) / 2 for _, _, sa, ra in pos]
    smin = min(mids)
    fold = collections.Counter()
    omin, omax = {}, {}
    for (_, _, sa, ra), m in zip(pos, mids):
        k = 1 + int(math.floor((m - smin) / bin_m + 0.5))
        fold[k] += 1
        o = abs(ra - sa)
        omin[k] = min(omin.get(k, o), o)
        omax[k] = max(omax.get(k, o), o)
    return fold, omin, omax, smin


def compare(name, got, L, bin_m):
    fold, omin, omax, smin = expected(L, bin_m)
    cm = {c["cmp"]: c for c in got["cmps"]}
    bad = [(k, cm.get(k, {}).get("fold"), v) for k, v in fold.items()
           if cm.get(k, {}).get("fold") != v]
    bad += [(k, c["fold"], 0) for k, c in cm.items() if c["fold"] and k not in fold]
    ok(not bad, f"{name}: fold of every CMP equals the independent count", str(bad[:5]))
    # Headers store coordinates in centimetres (scalar -100), so an offset from
    # header coordinates may be off by up to sqrt(2) cm.
    offs = [k for k in fold if abs(cm[k]["offset_min_m"] - omin[k]) > 0.015 or
            abs(cm[k]["offset_max_m"] - omax[k]) > 0.015] if not bad else ["skipped"]
    ok(not offs, f"{name}: offset range of every CMP", str([(k, cm[k]["offset_min_m"], omin[k], cm[k]["offset_max_m"], omax[k]) for k in offs[:3] if k in cm]))
    az = math.radians(L["azimuth_deg"])
    x0, y0 = L["first_station_x_m"], L["first_station_y_m"]
    worst = 0
    for k in fold:
        s = smin + (k - 1) * bin_m
        worst = max(worst, math.hypot(cm[k]["x_m"] - (x0 + s * math.sin(az)),
                                      cm[k]["y_m"] - (y0 + s * math.cos(az))))
    ok(worst < 0.02, f"{name}: CMP centres on the line at multiples of the bin size",
       f"worst {worst:.4f} m")
    f = got["fold"]
    nominal = L["channels"] * L["receiver_interval_m"] / (2 * L["source_interval_m"])
    ok(abs(f["nominal"] - nominal) < 1e-9 and f["max"] == max(fold.values()) and
       f["min"] == min(fold.get(k, 0) for k in range(1, max(fold) + 1)),
       f"{name}: fold nominal/min/max", str(f))


def geometry(*args):
    p = run("geometry", "--json", *args)
    ok(p.returncode == 0, "tzero geometry --json " + " ".join(map(str, args[:2])), p.stderr)
    return json.loads(p.stdout) if p.returncode == 0 else {"cmps": [], "fold": {}}


model = {"layers": [{"thickness_m": 80, "velocity_mps": 1800}, {"velocity_mps": 2500}]}
mp = os.path.join(WORK, "model.json")
json.dump(model, open(mp, "w"))

cases = {
    # a roll-along split spread with a skipped shot, large projected coordinates
    "split": {"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 30, "channels": 48,
              "spread": "split", "channels_behind": 20, "near_offset_m": 5, "azimuth_deg": 117.5,
              "first_station_x_m": 641233.41, "first_station_y_m": 5912877.16,
              "first_source_m": 250, "skipped_shot_points": [12], "first_field_record": 3001},
    # an off-end spread trailing the source, due north
    "behind": {"receiver_interval_m": 2.5, "source_interval_m": 7.5, "shot_count": 20,
               "channels": 36, "spread": "behind", "near_offset_m": 10, "azimuth_deg": 0,
               "first_station_x_m": 402100.0, "first_station_y_m": 7100450.0,
               "first_source_m": 120},
}
for name, L in cases.items():
    lp = os.path.join(WORK, f"{name}.json")
    json.dump(L, open(lp, "w"))
    d = os.path.join(WORK, f"sv_{name}")
    p = run("synth", "--model", mp, "--layout", lp, "--out", d, "--samples", 51, "--quiet")
    ok(p.returncode == 0, f"{name}: synth", p.stderr)
    shots = sorted(os.path.join(d, f) for f in os.listdir(d) if f.endswith(".sgy"))
    bin_m = L["receiver_interval_m"] / 2
    g = geometry(*shots)                                  # from headers, fitted line
    compare(f"{name} (headers, fitted line)", g, L, bin_m)
    ok(g.get("line", {}).get("fitted") is True and
       abs(((g["line"]["azimuth_deg"] - L["azimuth_deg"] + 180) % 360) - 180) < 0.01,
       f"{name}: fitted azimuth is the layout azimuth", str(g.get("line")))
    ok(g.get("receiver_interval_m") == L["receiver_interval_m"] and
       g.get("source_interval_m") == L["source_interval_m"],
       f"{name}: intervals found from the headers")
    g = geometry("--layout", lp, *shots)                  # from the layout
    compare(f"{name} (layout)", g, L, bin_m)
    ok(all(c["predicted_fold"] == c["fold"] for c in g["cmps"]),
       f"{name}: predicted fold equals actual fold")
    # A geometry table written here, applied to bare-header shots.
    bare = os.path.join(WORK, f"bare_{name}")
    run("synth", "--model", mp, "--layout", lp, "--out", bare, "--samples", 51, "--bare-headers",
        "--quiet")
    tp = os.path.join(WORK, f"{name}.csv")
    az = math.radians(L["azimuth_deg"])
    x0, y0 = L["first_station_x_m"], L["first_station_y_m"]
    with open(tp, "w") as f:
        f.write("field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n")
        for ffid, ch, sa, ra in positions(L):
            f.write(f"{ffid},{ch},{x0 + sa * math.sin(az):.3f},{y0 + sa * math.cos(az):.3f},"
                    f"{x0 + ra * math.sin(az):.3f},{y0 + ra * math.cos(az):.3f}\n")
    bshots = sorted(os.path.join(bare, f) for f in os.listdir(bare) if f.endswith(".sgy"))
    g = geometry("--table", tp, *bshots)
    compare(f"{name} (table, bare headers)", g, L, bin_m)
    # Signed offsets follow the SEG-Y rule: negative behind the shooting direction.
    neg = sum(1 for _, _, sa, ra in positions(L) if ra < sa)
    ok(all((s["offset_min_m"] >= 0) for s in g["shots"]), f"{name}: per-shot summary present")
    w = os.path.join(WORK, f"w_{name}")
    p = run("geometry", "--table", tp, "--write", w, "--quiet", *bshots)
    ok(p.returncode == 0, f"{name}: --write", p.stderr)
    try:
        import segyio
        got_neg = 0
        for f in sorted(os.listdir(w)):
            with segyio.open(os.path.join(w, f), ignore_geometry=True) as s:
                got_neg += sum(1 for i in range(s.tracecount) if s.header[i][37] < 0)
        ok(got_neg == neg, f"{name}: written offsets negative behind the source (segyio)",
           f"{got_neg} vs {neg}")
    except ImportError:
        ok(False, "segyio available")
done()
