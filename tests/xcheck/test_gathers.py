"""test_gathers -- `tzero gathers` and test panels against NumPy and segyio.

The survey is the one test_stack_segyio.py writes with segyio and NumPy (flat
reflectors, exact hyperbolas, a Ricker wavelet), processed with elevation
statics to a datum below the surface, a top mute with a taper and a band-pass.

Checks (each names its source):
  - the gathers through `all`, read with segyio and summed per CMP in NumPy,
    divided by the summed live weights (--weights), equal the section of
    `tzero stack` to 1e-6 of its largest amplitude: the stack is the
    live-weighted mean of the NMO-corrected, muted traces of each CMP (Yilmaz
    2001, CMP stacking), and the per-CMP trace counts equal the fold in bytes
    33-34 of the section (SEG-Y rev 1 (2002), number of horizontally stacked
    traces);
  - the gathers through `mute` for CMP gathers equal `tzero nmo` sample for
    sample and header for header (same chain); through `nmo` they equal
    `tzero nmo` of the job without its top mute;
  - through `statics`, the statics in bytes 99-104 with the time scalar of
    bytes 215-216 (SEG-Y rev 1 (2002)) are the elevation statics
    (D - E) / v_r per station (Sheriff & Geldart 1995, datum statics), and the
    traces are the recorded ones shifted by them (common practice: a static
    is a time shift), checked at the first event's peak;
  - sorting: shot gathers come by field record then channel, receiver gathers
    share one receiver position each, CMP gathers run by |offset| (common
    practice); a near-offset section holds one trace per CMP, the nearest;
  - a key inside the mutes along the line (`mute.top.controls[0].polyline[1][1]`)
    moves the far trace's top mute later panel by panel (common practice: a top
    mute zeroes the samples before its time);
  - test panels: `--vary moveout.stretch_limit_pct=20,50,80` gives three
    panels whose headers carry panel numbers 1-3 (bytes 233-236) and the
    values as IEEE floats (bytes 237-240, IEEE 754 single), each equal to a
    separate run with `--stretch-limit V`; `tzero stack --vary` with
    `--cmp-range` likewise equals separate stacks, and applies the job's
    post-stack steps: varying a balance's RMS target from 1 to 2 doubles the
    panel (the balance scales a trace to the target RMS: linear in it).
"""
import json
import os
import shutil
import struct
import subprocess
import sys

import numpy as np
import segyio

sys.path.insert(0, os.path.dirname(__file__))
import tzcheck as tz  # noqa: E402

HERE = os.path.dirname(__file__)
D = os.path.join(tz.WORK, "sv")
subprocess.run([sys.executable, os.path.join(HERE, "test_stack_segyio.py"), "--make-survey", D],
               check=True, capture_output=True)
job = json.load(open(os.path.join(D, "line.json")))
DATUM, VR = -10.0, 2000.0
job["statics"] = {"datum_m": DATUM, "replacement_velocity_mps": VR, "elevation": True}
job["mute"] = {"top": [[0, 20], [400, 250]], "taper_ms": 8}
job["conditioning"] = [{"step": "bandpass", "corners_hz": [4, 8, 60, 90]}]
J = os.path.join(D, "full.json")
json.dump(job, open(J, "w"))
nomute = dict(job)
del nomute["mute"]
JN = os.path.join(D, "nomute.json")
json.dump(nomute, open(JN, "w"))


def read(path):
    with segyio.open(path, ignore_geometry=True) as f:
        data = np.array([np.asarray(t, dtype=np.float64) for t in f.trace])
        h = {b: np.array(f.attributes(b)[:]) for b in (9, 13, 21, 25, 33, 37, 81, 99, 101,
                                                       103, 215, 233, 237)}
        text = f.text[0].decode("ascii", "replace")
    return data, h, text


def out(name):
    return os.path.join(D, "out", name)


# ---- through all: the section is the live-weighted mean per CMP
tz.run("stack", "--job", J, "--out", out("stack.sgy"), "--report", out("qc.json"), "--quiet")
tz.run("gathers", "--job", J, "--through", "all", "--sort", "cmp", "--out", out("all.sgy"),
       "--weights", out("all_w.sgy"), "--quiet")
sec, sh, _ = read(out("stack.sgy"))
g, gh, gtext = read(out("all.sgy"))
w, wh, _ = read(out("all_w.sgy"))
tz.ok(np.array_equal(gh[21], wh[21]) and g.shape == w.shape, "weights file matches the gathers")
cmps = sh[21]
mine = np.zeros_like(sec)
counts = np.zeros(len(cmps), dtype=int)
for i, c in enumerate(cmps):
    sel = gh[21] == c
    counts[i] = sel.sum()
    if counts[i]:
        s, ww = g[sel].sum(axis=0), w[sel].sum(axis=0)
        mine[i] = np.where(ww > 0, s / np.where(ww > 0, ww, 1), 0)
err = np.abs(mine - sec).max() / np.abs(sec).max()
tz.ok(err < 1e-6, "gathers through all, summed per CMP / live weight = tzero stack (1e-6)",
      f"relative error {err:.2e}")
tz.ok(np.array_equal(counts, sh[33]), "gather traces per CMP = fold in bytes 33-34 of the section")
tz.ok("step reached: all" in gtext, "textual header names the step reached")

# ---- through mute = tzero nmo; through nmo = tzero nmo without the top mute
lo, hi = int(cmps[0]), int(cmps[-1])
tz.run("nmo", "--job", J, "--cmps", f"{lo}-{hi}", "--out", out("nmo.sgy"), "--quiet")
tz.run("nmo", "--job", JN, "--cmps", f"{lo}-{hi}", "--out", out("nmo_nomute.sgy"), "--quiet")
tz.run("gathers", "--job", J, "--through", "mute", "--out", out("mute.sgy"), "--quiet")
tz.run("gathers", "--job", J, "--through", "nmo", "--out", out("nmo_g.sgy"), "--quiet")
a, ah, _ = read(out("nmo.sgy"))
b, bh, _ = read(out("mute.sgy"))
tz.ok(a.shape == b.shape and np.array_equal(a, b) and
      all(np.array_equal(ah[k], bh[k]) for k in (9, 13, 21, 25, 37, 99, 103)),
      "gathers through mute = tzero nmo, samples and headers")
tz.ok(np.array_equal(b, g), "through all = through mute (the mutes are the last step)")
a2, _, _ = read(out("nmo_nomute.sgy"))
b2, _, _ = read(out("nmo_g.sgy"))
tz.ok(a2.shape == b2.shape and np.array_equal(a2, b2),
      "gathers through nmo = tzero nmo of the job without a top mute")
tz.ok(not np.array_equal(b2, b), "the top mute changes the gathers (the check can fail)")

# ---- through statics: headers and shifts
tz.run("gathers", "--job", J, "--through", "statics", "--sort", "shot", "--select", "3-4",
       "--out", out("st.sgy"), "--quiet")
tz.run("gathers", "--job", J, "--through", "edits", "--sort", "shot", "--select", "3-4",
       "--out", out("ed.sgy"), "--quiet")
s, stt, _ = read(out("st.sgy"))
e, eh, _ = read(out("ed.sgy"))
scal = stt[215].astype(float)
fac = np.where(scal < 0, -1 / np.where(scal < 0, scal, -1), np.where(scal > 0, scal, 1))
total = stt[103] * fac
want = 2 * (DATUM - 0.0) / VR * 1000            # source + receiver, surface at 0 m
tz.ok(np.allclose(total, want, atol=0.011) and np.allclose(stt[99] * fac, want / 2, atol=0.011),
      "statics in bytes 99-104 with the scalar of 215-216 = (D - E) / v_r per station",
      f"{total[:3]} vs {want}")
dt = 2.0
shift = np.argmax(np.abs(s), axis=1) - np.argmax(np.abs(e), axis=1)
tz.ok(np.all(np.abs(shift * dt - want) <= dt), "traces shifted by the static (peak moves)",
      f"{set((shift * dt).tolist())} ms vs {want}")
tz.ok(np.all(np.diff(stt[9]) >= 0) and
      all(np.all(np.diff(stt[13][stt[9] == r]) > 0) for r in set(stt[9])),
      "shot gathers by field record, then channel")

# ---- receiver gathers and the near-offset section
tz.run("gathers", "--job", J, "--through", "edits", "--sort", "receiver", "--out",
       out("rcv.sgy"), "--quiet")
_, rh, _ = read(out("rcv.sgy"))
rx = rh[81]
starts = np.flatnonzero(rh[25] == 1)
ok_r = len(starts) > 1
for k, a0 in enumerate(starts):
    b0 = starts[k + 1] if k + 1 < len(starts) else len(rx)
    ok_r = ok_r and len(set(rx[a0:b0].tolist())) == 1
tz.ok(ok_r and len(set(rx[starts].tolist())) == len(starts),
      "receiver gathers: one receiver position each (bytes 81-84)")
tz.ok(all(np.all(np.diff(np.abs(gh[37][gh[21] == c])) >= 0) for c in cmps[:20]),
      "CMP gathers run by |offset|")
tz.run("gathers", "--job", J, "--through", "mute", "--sort", "offset", "--select", "150-170",
       "--one-per-cmp", "--out", out("near.sgy"), "--quiet")
n, nh, _ = read(out("near.sgy"))
near_ok = len(set(nh[21].tolist())) == len(nh[21]) and np.all(np.diff(nh[21]) > 0)
for i, c in enumerate(nh[21][:30]):
    offs = np.abs(gh[37][(gh[21] == c)])
    offs = offs[(offs >= 150) & (offs <= 170)]
    near_ok = near_ok and abs(nh[37][i]) == offs.min()
tz.ok(near_ok and len(n) > 10, "near-offset section: one trace per CMP, its nearest offset")

# ---- test panels
vals = ["20", "50", "80"]
tz.run("gathers", "--job", J, "--through", "mute", "--select", "250-252", "--vary",
       "moveout.stretch_limit_pct=" + ",".join(vals), "--out", out("panels.sgy"), "--quiet")
p, ph, ptext = read(out("panels.sgy"))
fl = [struct.unpack(">f", struct.pack(">i", int(v)))[0] for v in ph[237]]
tz.ok(sorted(set(ph[233].tolist())) == [1, 2, 3] and np.all(np.diff(ph[233]) >= 0),
      "three panels, numbered 1-3 in bytes 233-236")
tz.ok(all(abs(fl[i] - float(vals[ph[233][i] - 1])) < 1e-6 for i in range(len(fl))),
      "each trace carries its panel's value as an IEEE float in bytes 237-240")
tz.ok(all(f"panel {k + 1}: {v}" in ptext for k, v in enumerate(vals)) and
      "moveout.stretch_limit_pct" in ptext, "textual header lists the key and the panel values")
same = True
for k, v in enumerate(vals):
    tz.run("gathers", "--job", J, "--through", "mute", "--select", "250-252", "--stretch-limit",
           v, "--out", out(f"single{v}.sgy"), "--quiet")
    one, _, _ = read(out(f"single{v}.sgy"))
    same = same and np.array_equal(one, p[ph[233] == k + 1])
tz.ok(same, "each panel equals a separate run with --stretch-limit V")
tz.ok(not np.array_equal(p[ph[233] == 1], p[ph[233] == 3]), "the panels differ")

# a key inside the mutes along the line: the first control's far mute time
ctl = dict(job)
ctl["mute"] = {"top": {"controls": [{"cmp": 220, "polyline": [[0, 20], [400, 250]]},
                                    {"cmp": 350, "polyline": [[0, 20], [400, 250]]}]}}
JC = os.path.join(D, "controls.json")
json.dump(ctl, open(JC, "w"))
mv = ["150", "300", "450"]
tz.run("gathers", "--job", JC, "--through", "mute", "--select", "222", "--vary",
       "mute.top.controls[0].polyline[1][1]=" + ",".join(mv), "--out", out("ctl.sgy"), "--quiet")
c, ch, ctext = read(out("ctl.sgy"))
lead = []
for k in range(1, 4):
    far = c[ch[233] == k][-1]                   # the farthest trace of the CMP
    lead.append(int(np.argmax(far != 0)))       # first live sample after the top mute
tz.ok(sorted(set(ch[233].tolist())) == [1, 2, 3] and lead[0] < lead[1] < lead[2] and
      "panel 3: 450" in ctext,
      "--vary mute.top.controls[0].polyline[1][1]: the mute of the far trace moves later panel by "
      "panel (top mute: samples before the mute time are zeroed)", f"first live samples {lead}")

tz.run("stack", "--job", J, "--cmp-range", "240-260", "--vary",
       "moveout.stretch_limit_pct=" + ",".join(vals), "--out", out("stack_panels.sgy"), "--quiet")
sp, sph, _ = read(out("stack_panels.sgy"))
same = len(sp) == 63
for k, v in enumerate(vals):
    tz.run("stack", "--job", J, "--cmp-range", "240-260", "--stretch-limit", v, "--out",
           out(f"st{v}.sgy"), "--report", out(f"st{v}.json"), "--quiet")
    one, oh, _ = read(out(f"st{v}.sgy"))
    same = same and np.array_equal(one, sp[sph[233] == k + 1]) and \
        np.array_equal(oh[21], sph[21][sph[233] == k + 1])
tz.ok(same, "tzero stack --vary: three panels of CMPs 240-260, each = a separate stack")

# stack panels get the job's post-stack steps, and their keys can be varied
ps = dict(job)
ps["poststack"] = [{"step": "balance", "from_ms": 200, "to_ms": 900, "target_rms": 1}]
JP = os.path.join(D, "poststack.json")
json.dump(ps, open(JP, "w"))
tz.run("stack", "--job", JP, "--cmp-range", "240-260", "--vary", "poststack[0].target_rms=1,2",
       "--out", out("ps_panels.sgy"), "--quiet")
tz.run("stack", "--job", JP, "--cmp-range", "240-260", "--out", out("ps.sgy"), "--report",
       out("ps.json"), "--quiet")
pp, pph, _ = read(out("ps_panels.sgy"))
one, _, _ = read(out("ps.sgy"))
p1, p2 = pp[pph[233] == 1], pp[pph[233] == 2]
tz.ok(np.array_equal(p1, one) and np.allclose(p2, 2 * p1, rtol=1e-5, atol=1e-6 * np.abs(p2).max()),
      "stack --vary poststack[0].target_rms=1,2: panel 1 = the section with its post-stack "
      "steps, panel 2 = twice it (a balance to an RMS target is linear in the target)")

shutil.rmtree(D, ignore_errors=True)
tz.done()
