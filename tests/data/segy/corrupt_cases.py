"""corrupt_cases -- writes the damaged SEG-Y files of the e2e corrupt-input matrix.

Usage: corrupt_cases.py DIR. Every file is built with segygen (an independent
writer, SEG-Y rev 1/rev 2 byte tables) and then damaged in one way. Each file
is a few KB at most. tests/e2e/test_inspect.sh lists the message and exit
status each case must give.
"""
import os
import random
import struct
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import segygen  # noqa: E402

d = sys.argv[1]
os.makedirs(d, exist_ok=True)
P = lambda name: os.path.join(d, name)  # noqa: E731
TR = [[float(k) for k in range(10)] for _ in range(3)]       # 3 traces x 10 IEEE samples
HDR = [{"field_record": 5, "channel": k + 1, "source_x": 1000 + k, "receiver_x": 2000 + k,
        "coord_scalar": 1, "offset": 1000, "kind": 1} for k in range(3)]

segygen.write(P("good.sgy"), traces=TR, headers=HDR)
with open(P("short.sgy"), "wb") as f:
    f.write(bytes(100))
segygen.write(P("format13.sgy"), traces=TR, headers=HDR, raw_format=13)
segygen.write(P("format4.sgy"), traces=TR, headers=HDR, raw_format=4)
segygen.write(P("nosamples.sgy"), traces=TR, headers=HDR, bin_samples=0, trace_samples=0)
segygen.write(P("nointerval.sgy"), traces=TR, headers=[dict(h, interval_us=0) for h in HDR],
              interval=0)
segygen.write(P("truncated.sgy"), traces=TR, headers=HDR, truncate=7)
segygen.write(P("midfile.sgy"), traces=TR,
              headers=[dict(h, samples=12 if k == 1 else 10) for k, h in enumerate(HDR)])
# rev 2 extended samples per trace (3269-3272) absurdly large
raw = bytearray(segygen.write(P("absurd.sgy"), rev=2, traces=TR, headers=HDR))
raw[3268:3272] = struct.pack(">i", 5000000)
open(P("absurd.sgy"), "wb").write(raw)
segygen.write(P("exttoo.sgy"), traces=TR, headers=HDR, ext_text=5)
segygen.write(P("extnoend.sgy"), traces=TR, headers=HDR, ext_text=-1,
              ext_records=[segygen.stanza_record(["((SEG: Processing ver 1.0))"])])
# variable-length file (10, 14, 10 samples) whose last trace claims 60000 samples:
# the walk runs off the end and the binary header cannot account for the size
segygen.write(P("varlong.sgy"), fixed=0, traces=[TR[0], TR[1] + [1.0] * 4, TR[2]],
              headers=[dict(h, samples=60000 if k == 2 else None) for k, h in enumerate(HDR)])
# a rev 1 file flagged variable-length whose one bad trace header the binary header
# overrides (the file size fits 10 samples per trace): read, with a warning
segygen.write(P("varfallback.sgy"), fixed=0, traces=TR,
              headers=[dict(h, samples=60000 if k == 1 else 10) for k, h in enumerate(HDR)])
# NaN and +Inf among IEEE samples: counted, replaced by 0, not fatal
nan = [float("nan"), float("inf")] + [1.0] * 8
segygen.write(P("nan.sgy"), traces=[nan] + TR[1:], headers=HDR)
# all coordinates zero, coordinate scalar zero, a dead trace
segygen.write(P("anomalies.sgy"), traces=TR,
              headers=[{"field_record": 9, "channel": k + 1, "kind": 2 if k == 0 else 1,
                        "coord_scalar": 0, "cmp_x": 5} for k in range(3)])
# random bytes after a plausible 3600-byte header
rnd = random.Random(4)
raw = bytearray(segygen.write(P("garbage.sgy"), traces=TR, headers=HDR))
raw[3600:] = bytes(rnd.randrange(256) for _ in range(len(raw) - 3600))
open(P("garbage.sgy"), "wb").write(raw)
with open(P("map_bad.json"), "w") as f:
    f.write('{"source_x": {"byte": 181, "width": 4},, }')
with open(P("map_field.json"), "w") as f:
    f.write('{"sourcex": {"byte": 181}}')
with open(P("map_good.json"), "w") as f:
    f.write('{"source_x": {"byte": 81, "width": 4}}')
os.makedirs(P("empty"), exist_ok=True)
os.makedirs(P("mixed"), exist_ok=True)
segygen.write(P("mixed/a.sgy"), traces=TR, headers=HDR)
segygen.write(P("mixed/b.segy"), traces=TR, headers=HDR, truncate=3)
segygen.write(P("mixed/c.sgy"), traces=TR[:2], headers=HDR)
# IEEE samples under an IBM format code ("wrong format code", a pitfall of field SEG-Y files, common practice)
vals = [((k * 7919) % 2001 - 1000) * 0.37 for k in range(200)]
segygen.write(P("ieee_as_ibm.sgy"), fmt=5, raw_format=1, traces=[vals] * 3, headers=HDR)
