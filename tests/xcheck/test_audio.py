"""test_audio -- `tzero audio` against Python's wave module, segyio and SciPy.

Multichannel WAV shot records are written here with the standard library
(`wave` for 16-bit PCM; a 32-bit IEEE float WAV by hand with `struct`, as the
RIFF/WAVE format defines it: format tag 3 in the fmt chunk), each channel a
known sinusoid. `tzero audio` converts them; segyio (an independent SEG-Y
reader) reads the result. Samples are checked two ways:

  * against SciPy's polyphase resampler `scipy.signal.resample_poly` with the
    same rational rate ratio, run on the same input window;
  * against the sinusoid itself evaluated at the output times.

Why the bounds hold: every test tone is below 0.15 of the new Nyquist frequency,
where both band-limited resamplers pass it with a gain error far below 1e-5 (we
give resample_poly a Kaiser window with beta 10 instead of its default 5, whose
passband ripple alone is ~3e-4: SciPy documents the window argument), and the
16-bit input carries at most half a count of rounding, 1.5e-5 of full scale,
which a low-pass of unit gain does not enlarge much. So tzero and the analytic
tone agree within 5e-5 (measured: 1.3e-5). tzero and SciPy see the same rounded
input, so only the two filters' passband errors remain between them: within 2e-5
(measured: 4e-6). 24-bit input rounds to 6e-8, leaving the filters alone: 2e-6
against the tones (measured 2e-7), 1e-5 against SciPy (its Kaiser-10 filter,
measured 1e-6). The ends are left out:
within the filter's reach (about 143 input samples / ratio, that is about 143
output samples: 36 ms at 44.1 kHz -> 4 kHz) both see the zeros beyond the file.
The float file (amplitude 2.5, no 16-bit rounding) is written as IBM floats,
whose hexadecimal mantissa keeps at least 21 bits (IBM System/360 Principles of Operation, hexadecimal floating point):
2.5 x 2^-21 ~ 1.2e-6, so 2e-5 is the bound there.

FLAC is not tested: nothing in Python's standard library writes it, and the
test must not need extra packages (libsndfile reads FLAC through the same call).
"""
import math
import os
import struct
import wave

import numpy as np
import segyio
from scipy.signal import resample_poly

from tzcheck import WORK, done, ok, run

TF = segyio.TraceField
BF = segyio.BinField


def tones(rate, frames, freqs, amp=0.5):
    t = np.arange(frames) / rate
    return np.stack([amp * np.sin(2 * np.pi * f * t + 0.4 * k) for k, f in enumerate(freqs)], 1)


def write_pcm16(path, rate, x):
    """16-bit PCM WAV with Python's wave module; returns the samples as stored / 32768."""
    q = np.clip(np.round(x * 32768), -32768, 32767).astype("<i2")
    with wave.open(path, "wb") as w:
        w.setnchannels(x.shape[1])
        w.setsampwidth(2)
        w.setframerate(rate)
        w.writeframes(q.tobytes())
    return q / 32768.0


def write_pcm24(path, rate, x):
    """24-bit PCM WAV with the wave module (little-endian 3-byte samples)."""
    q = np.clip(np.round(x * 8388608), -8388608, 8388607).astype("<i4")
    b = q.reshape(-1).view(np.uint8).reshape(-1, 4)[:, :3].tobytes()
    with wave.open(path, "wb") as w:
        w.setnchannels(x.shape[1])
        w.setsampwidth(3)
        w.setframerate(rate)
        w.writeframes(b)
    return q / 8388608.0


def write_float32(path, rate, x):
    """IEEE float WAV: RIFF header, 'fmt ' chunk with format tag 3, 'data' chunk."""
    data = x.astype("<f4").tobytes()
    nch = x.shape[1]
    fmt = struct.pack("<HHIIHH", 3, nch, rate, rate * nch * 4, nch * 4, 32)
    with open(path, "wb") as f:
        f.write(b"RIFF" + struct.pack("<I", 4 + 8 + len(fmt) + 8 + len(data)) + b"WAVE")
        f.write(b"fmt " + struct.pack("<I", len(fmt)) + fmt)
        f.write(b"data" + struct.pack("<I", len(data)) + data)
    return x.astype(np.float32).astype(np.float64)


def read_segy(path):
    with segyio.open(path, ignore_geometry=True) as f:
        hdr = [dict(f.header[i]) for i in range(f.tracecount)]
        return f.trace.raw[:], hdr, dict(f.bin)


def check(label, sgy, stored, rate, interval_us, start_frame, chans, freqs, first_rec,
          amp=0.5, factor=1.0, tol_ana=5e-5, tol_scipy=2e-5):
    tr, hdr, bh = read_segy(sgy)
    # trace count = channels asked for; headers (SEG-Y rev 1: 9-12 field record,
    # 13-16 channel, 115-116 samples, 117-118 interval, 29-30 kind 1 = seismic)
    ok(tr.shape[0] == len(chans), f"{label}: one trace per channel ({tr.shape[0]})")
    ok(all(h[TF.FieldRecord] == first_rec for h in hdr), f"{label}: field record {first_rec}")
    ok([h[TF.TraceNumber] for h in hdr] == list(range(1, len(chans) + 1)),
       f"{label}: channels numbered 1..{len(chans)} in trace order")
    ok(all(h[TF.TraceIdentificationCode] == 1 for h in hdr), f"{label}: trace kind seismic")
    ns = tr.shape[1]
    ok(all(h[TF.TRACE_SAMPLE_COUNT] == ns for h in hdr) and bh[BF.Samples] == ns,
       f"{label}: sample count {ns} in trace and binary headers")
    ok(all(h[TF.TRACE_SAMPLE_INTERVAL] == interval_us for h in hdr)
       and bh[BF.Interval] == interval_us, f"{label}: interval {interval_us} us")
    g = math.gcd(1000000, interval_us * rate)
    up, down = 1000000 // g, interval_us * rate // g
    # The sinc filter reaches about 143 input samples / ratio each side when the
    # rate goes down: that is a fixed ~143 output samples; leave 170 at each end.
    edge = 170
    t = start_frame / rate + np.arange(ns) * interval_us * 1e-6
    worst_a = worst_s = 0.0
    for j, c in enumerate(chans):                            # c: 1-based file channel
        k = c - 1
        ana = factor * amp * np.sin(2 * np.pi * freqs[k] * t + 0.4 * k)
        ref = factor * resample_poly(stored[start_frame:, k], up, down, window=("kaiser", 10.0))
        m = min(ns, len(ref))
        worst_a = max(worst_a, np.abs(tr[j, edge:ns - edge] - ana[edge:ns - edge]).max())
        worst_s = max(worst_s, np.abs(tr[j, edge:m - edge] - ref[edge:m - edge]).max())
    print(f"# {label}: worst {worst_a:.2g} against the tones, {worst_s:.2g} against SciPy")
    ok(worst_a < tol_ana * abs(factor), f"{label}: samples match the tones within "
       f"{tol_ana * abs(factor):g}", f"worst {worst_a:.3g}")
    ok(worst_s < tol_scipy * abs(factor), f"{label}: samples match scipy resample_poly "
       f"{up}/{down} within {tol_scipy * abs(factor):g}", f"worst {worst_s:.3g}")
    return tr, hdr


# --- 1: a folder of two 6-channel 44.1 kHz 16-bit files, 250 us, numbered in name order
field = os.path.join(WORK, "field")
os.makedirs(field)
f44 = [60, 95, 130, 170, 210, 250]                 # Hz, below 0.15 x 2000 Hz
s2 = write_pcm16(os.path.join(field, "shot_2.wav"), 44100, tones(44100, 44100, f44))
s10 = write_pcm16(os.path.join(field, "shot_10.wav"), 44100, tones(44100, 30000, f44, 0.25))
with open(os.path.join(field, "readme.txt"), "w") as fh:
    fh.write("not audio\n")
out = os.path.join(WORK, "sgy")
p = run("audio", field, "--out", out, "--first-record", 101)
ok(p.returncode == 0, "tzero audio converts a folder", p.stderr.strip())
ok(sorted(os.listdir(out)) == ["shot_10.sgy", "shot_2.sgy"], "one SEG-Y file per audio file")
ok("shot_2.wav" in p.stdout and "field record 101" in p.stdout, "per-file summary printed")
check("44.1 kHz shot_2", os.path.join(out, "shot_2.sgy"), s2, 44100, 250, 0, range(1, 7),
      f44, 101)
# shot_10 sorts after shot_2 (numbers by value), so it is field record 102
check("44.1 kHz shot_10", os.path.join(out, "shot_10.sgy"), s10, 44100, 250, 0, range(1, 7),
      f44, 102, amp=0.25)

# --- 2: 48 kHz, 500 us, a trigger window, channels reordered, polarity and scale
f48 = [40, 75, 110, 140]
s48 = write_pcm16(os.path.join(WORK, "rec48.wav"), 48000, tones(48000, 72000, f48))
out2 = os.path.join(WORK, "sgy48")
p = run("audio", os.path.join(WORK, "rec48.wav"), "--out", out2, "--interval-us", 500,
        "--start-ms", 212.5, "--length-ms", 1000, "--channels", "4,2-1",
        "--reverse-polarity", "--scale", 3, "--first-record", 7, "--json")
ok(p.returncode == 0, "48 kHz with a window and a channel list", p.stderr.strip())
tr, _ = check("48 kHz window", os.path.join(out2, "rec48.sgy"), s48, 48000, 500,
              round(0.2125 * 48000), [4, 2, 1], f48, 7, factor=-3.0)
ok(tr.shape[1] == 2001, "1000 ms at 500 us is 2001 samples (time of the last sample)")

# --- 3: 32-bit float WAV at 22.05 kHz (amplitude beyond 1: float has no full scale)
f22 = [30, 55, 80]
sf = write_float32(os.path.join(WORK, "float.wav"), 22050, tones(22050, 44100, f22, 2.5))
out3 = os.path.join(WORK, "sgyf")
p = run("audio", os.path.join(WORK, "float.wav"), "--out", out3, "--interval-us", 1000,
        "--format", "ibm", "--quiet")
ok(p.returncode == 0 and p.stdout == "", "32-bit float WAV, --quiet", p.stderr.strip())
# IBM float keeps 24 bits at worst (hexadecimal normalisation): ~1e-6 x 2.5
check("float WAV", os.path.join(out3, "float.sgy"), sf, 22050, 1000, 0, range(1, 4), f22, 1,
      amp=2.5, tol_ana=2e-5, tol_scipy=2e-5)

# --- 3b: 24-bit PCM at 96 kHz to 100 us (ratio 5/48); no 16-bit rounding, so the
# bound is the resamplers' own passband error
f96 = [120, 260, 410, 700]
s96 = write_pcm24(os.path.join(WORK, "rec96.wav"), 96000, tones(96000, 48000, f96))
out3b = os.path.join(WORK, "sgy96")
p = run("audio", os.path.join(WORK, "rec96.wav"), "--out", out3b, "--interval-us", 100,
        "--quiet")
ok(p.returncode == 0, "24-bit 96 kHz WAV", p.stderr.strip())
check("24-bit 96 kHz", os.path.join(out3b, "rec96.sgy"), s96, 96000, 100, 0, range(1, 5),
      f96, 1, tol_ana=2e-6, tol_scipy=1e-5)

# --- 4: a record table instead of numbering
tab = os.path.join(WORK, "records.csv")
with open(tab, "w") as fh:
    fh.write("file,field_record\nshot_2.wav,5002\nshot_10.wav,5001\n")
out4 = os.path.join(WORK, "sgyt")
p = run("audio", field, "--out", out4, "--record-table", tab, "--quiet", "--length-ms", 100)
ok(p.returncode == 0, "record table", p.stderr.strip())
_, h, _ = read_segy(os.path.join(out4, "shot_10.sgy"))
ok(h[0][TF.FieldRecord] == 5001, "field record from the table", str(h[0][TF.FieldRecord]))

# --- 5: geometry from a layout (docs/layout.md: off-end spread ahead, receiver c of
# shot i at first_source + i*ds + near + c*dg along the line; azimuth 90 = +x). SEG-Y
# rev 1: 71-72 coordinate scalar (negative divides), 73-88 source/receiver X/Y, 37-40
# offset.
lay = os.path.join(WORK, "layout.json")
with open(lay, "w") as fh:
    fh.write('{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 2, '
             '"channels": 6, "first_field_record": 101, "near_offset_m": 5, '
             '"first_station_x_m": 500000, "first_station_y_m": 6400000, "azimuth_deg": 90}')
out5 = os.path.join(WORK, "sgyg")
p = run("audio", field, "--out", out5, "--first-record", 101, "--layout", lay, "--quiet",
        "--length-ms", 50)
ok(p.returncode == 0, "--layout", p.stderr.strip())
good_geo = True
for i, name in enumerate(["shot_2.sgy", "shot_10.sgy"]):
    _, h, _ = read_segy(os.path.join(out5, name))
    for c, th in enumerate(h):
        sc = th[TF.SourceGroupScalar]
        f = 1.0 / -sc if sc < 0 else (sc or 1)
        sx, gx = th[TF.SourceX] * f, th[TF.GroupX] * f
        want_s = 500000 + 10 * i
        want_g = want_s + 5 + 5 * c
        if (abs(sx - want_s) > 0.01 or abs(gx - want_g) > 0.01 or
                abs(th[TF.GroupY] * f - 6400000) > 0.01 or th[TF.offset] != 5 + 5 * c):
            good_geo = False
            print(f"# {name} channel {c + 1}: source {sx} receiver {gx} offset {th[TF.offset]}")
ok(good_geo, "source and receiver X/Y and offsets follow the layout")
p = run("audio", field, "--out", os.path.join(WORK, "sgyg2"), "--first-record", 201,
        "--layout", lay, "--quiet", check=False)
ok(p.returncode == 65 and "201" in p.stderr and not os.path.exists(os.path.join(WORK, "sgyg2")),
   "field records the layout lacks are refused before writing", p.stderr.strip())

done()
