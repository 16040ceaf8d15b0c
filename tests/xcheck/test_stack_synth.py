"""test_stack_synth -- `tzero stack` end to end on `tzero synth` output.

A small off-end roll-along line over flat layers is synthesised with tzero synth
(which also writes the model's exact RMS velocity table) and stacked with a job
that takes its geometry from the layout. Synth and stack are both tzero, so the
checks of the stack against the model are consistency checks of the two; what
makes them more is that every expected figure is computed here from the layout
and the model, not taken from tzero. Checks, each with its source:
  - fold per CMP equals an independent count done here from the layout
    (receivers ahead of the source at near + c dg; midpoints binned at dg/2),
    and interior CMPs reach the nominal fold N dg / (2 ds) (Sheriff & Geldart 1995; common practice,
    common practice);
  - stacked reflection peaks sit at the model's zero-offset times
    t0 = 2 sum h_k / v_k within one sample (exact NMO with the RMS velocities
    of Taner and Koehler 1969 flattens the reflections; Yilmaz 2001);
  - the section read with segyio carries CMP numbers, fold and the binary
    header fields documented for stacked data (SEG-Y rev 1 (2002), binary and trace headers; common practice for stacked
    data).
"""
import json
import os
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

CH, DG, DS, NEAR, SHOTS = 24, 5.0, 10.0, 10.0, 40
LAYERS = [(60.0, 1500.0), (90.0, 2200.0)]        # thickness m, velocity m/s; then a half-space
DT_MS = 1.0


def main():
    d = os.path.join(tz.WORK, "line")
    os.makedirs(d, exist_ok=True)
    layout = {
        "description": "Line KT-3, Kestrel Tarn test line (invented)",
        "receiver_interval_m": DG, "first_station_x_m": 1000.0, "first_station_y_m": 2000.0,
        "azimuth_deg": 90, "source_interval_m": DS, "first_source_m": 0, "shot_count": SHOTS,
        "spread": "ahead", "channels": CH, "near_offset_m": NEAR, "first_field_record": 1,
    }
    model = {"description": "two layers over a half-space (invented)",
             "layers": [{"thickness_m": h, "velocity_mps": v, "density_kgm3": 1800 + 200 * i}
                        for i, (h, v) in enumerate(LAYERS)]
             + [{"velocity_mps": 3000.0, "density_kgm3": 2500}]}
    json.dump(layout, open(os.path.join(d, "layout.json"), "w"))
    json.dump(model, open(os.path.join(d, "model.json"), "w"))
    p = tz.run("synth", "--model", os.path.join(d, "model.json"), "--layout",
               os.path.join(d, "layout.json"), "--out", os.path.join(d, "shots"),
               "--record-ms", 400, "--interval-ms", DT_MS, "--no-direct", "--no-head-wave",
               "--no-dipping", "--quiet")
    if not tz.ok(p.returncode == 0, "tzero synth writes the line", p.stderr.strip()):
        tz.done()
    job = {"name": "KT-3", "shots": ["shots/shot_*.sgy"], "geometry": {"layout": "layout.json"},
           "velocity": "shots/rms_velocity.csv", "moveout": {"stretch_limit_pct": 60},
           "output": {"section": "stack.sgy", "report": "qc.json"}}
    json.dump(job, open(os.path.join(d, "job.json"), "w"))
    p = tz.run("stack", "--job", os.path.join(d, "job.json"), "--quiet")
    if not tz.ok(p.returncode == 0, "tzero stack stacks the synthetic line", p.stderr.strip()):
        tz.done()
    rep = json.load(open(os.path.join(d, "qc.json")))

    # Independent fold count from the layout (Sheriff & Geldart 1995; common practice)
    mids = []
    for s in range(SHOTS):
        sx = s * DS
        for c in range(CH):
            mids.append(sx + (NEAR + c * DG) / 2)
    m0 = min(mids)
    fold = {}
    for m in mids:
        k = 1 + int(round((m - m0) / (DG / 2)))
        fold[k] = fold.get(k, 0) + 1
    got = {c["cmp"]: c["fold"] for c in rep["cmps"]}
    diff = [k for k in set(fold) | set(got) if fold.get(k, 0) != got.get(k, 0)]
    tz.ok(not diff, "fold per CMP equals the count from the layout", f"differs at {sorted(diff)[:6]}")
    nominal = CH * DG / (2 * DS)
    tz.ok(max(fold.values()) == nominal and rep["fold"]["nominal"] == nominal
          and rep["fold"]["max"] == nominal, f"nominal fold N dg/(2 ds) = {nominal:g} reached")

    # Event times at full-fold CMPs: t0 = 2 sum h/v
    t0s = np.cumsum([2 * h / v for h, v in LAYERS])
    dt = DT_MS / 1000
    with segyio.open(os.path.join(d, "stack.sgy"), ignore_geometry=True) as f:
        hdr_ok = f.bin[3229] == 4 and f.bin[3227] == int(nominal) and f.bin[3501] == 0x0100
        tz.ok(hdr_ok, "binary header: sorting 4, ensemble fold = nominal, revision 1")
        cmps = [h[21] for h in f.header]
        folds = [h[33] for h in f.header]
        tz.ok(cmps == sorted(got) and folds == [got[c] for c in cmps],
              "CMP numbers (21-24) and fold (33-34) of every trace match the report")
        full = [i for i, c in enumerate(cmps) if fold.get(c, 0) == nominal]
        worst = 0.0
        for i in full:
            tr = np.abs(f.trace[i])
            for t0 in t0s:
                k0 = int(round(t0 / dt))
                k = k0 - 8 + int(np.argmax(tr[k0 - 8:k0 + 9]))
                worst = max(worst, abs(k - t0 / dt) * dt)
    tz.ok(len(full) > 10 and worst <= dt,
          f"stacked reflections at the model t0 = {', '.join(f'{t * 1e3:.2f}' for t in t0s)} ms "
          f"within one sample at {len(full)} full-fold CMPs", f"worst {worst * 1e3:.2f} ms")
    tz.done()


if __name__ == "__main__":
    main()
