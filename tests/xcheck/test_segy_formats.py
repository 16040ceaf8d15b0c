"""test_segy_formats -- every sample format code, every byte order and the rev 1/2
file-structure options, written by an independent generator and read by tzero.

The files come from tests/data/segy/segygen.py, written from the SEG-Y rev 1
(2002) and rev 2.0 (2017) byte tables with Python's struct
and codecs modules; expected sample values come from NumPy's float32 rounding
of the stored numbers and, for IBM floats, from the defining formula
(-1)^S * F/2^24 * 16^(E-64) (IBM System/360 Principles of Operation, hexadecimal floating point). segyio cannot write most of
these formats, hence the separate generator.
"""
import json
import os
import sys

import numpy as np

from tzcheck import WORK, done, ok, run

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "data", "segy"))
import segygen  # noqa: E402

rng = np.random.default_rng(7)


def ibm_value(w):
    """Defining formula of the IBM System/360 single (IBM System/360 Principles of Operation, hexadecimal floating point)."""
    s = -1.0 if w >> 31 else 1.0
    return s * (w & 0xFFFFFF) / 2.0 ** 24 * 16.0 ** (((w >> 24) & 0x7F) - 64)


# Stored values per format: extremes of each integer type plus random values.
VALUES = {
    1: list(rng.standard_normal(6) * 1000) + [0.0, -118.625, 1e-3],
    2: [-2 ** 31, 2 ** 31 - 1, 0, -1, 123456789, 7],
    3: [-32768, 32767, 0, -1, 1234],
    5: list(rng.standard_normal(6).astype(np.float32) * 1e4) + [0.0, -0.0],
    6: list(rng.standard_normal(5) * 1e6) + [1e-300, 0.1],
    7: [-2 ** 23, 2 ** 23 - 1, 0, -1, 4567],
    8: [-128, 127, 0, -1, 42],
    9: [-2 ** 63, 2 ** 63 - 1, 0, -1, 2 ** 40 + 3],
    10: [0, 2 ** 32 - 1, 1, 3000000000],
    11: [0, 65535, 1, 40000],
    12: [0, 2 ** 64 - 1, 1, 2 ** 53 + 1],
    15: [0, 2 ** 24 - 1, 1, 9000000],
    16: [0, 255, 1, 200],
}


def expected(fmt, vals):
    if fmt == 1:
        return np.array([ibm_value(segygen.ibm_word(v)) for v in vals], dtype=np.float32)
    if fmt in (9, 12):   # 64-bit integers: float32 rounding of the exact integer
        return np.array([np.float32(float(v)) if abs(v) < 2 ** 53 else np.float32(v) for v in vals],
                        dtype=np.float32)
    return np.array(vals, dtype=np.float64).astype(np.float32)


def inspect(path, *extra):
    p = run("inspect", "--json", "--samples", "all", "--headers", "100", *extra, path, check=False)
    if p.returncode != 0:
        print(f"# {p.stderr.strip()}")
        return None
    return json.loads(p.stdout)["files"][0]


def samples(j):
    return [np.array(t["values"], dtype=np.float32) for t in j["trace_samples"]]


HEADERS = [{"field_record": 77, "channel": k + 1, "coord_scalar": -100, "source_x": 123456,
            "receiver_x": -5000 * (k + 1), "elev_scalar": 10, "receiver_elev": 12,
            "offset": -250 + 100 * k} for k in range(3)]


def check_headers(j, name):
    good = len(j["headers"]) == 3
    for k, h in enumerate(j["headers"][:3]):
        # SEG-Y rev 1 (2002), coordinate scalar, bytes 71-72 (check value 9 of docs/references.md): 123456 with -100 -> 1234.56; -5000 with -100 -> -50;
        # +10 multiplies: 12 -> 120.
        good &= h["field_record"] == 77 and h["channel"] == k + 1
        good &= abs(h["source_x"] - 1234.56) < 1e-9 and abs(h["receiver_x"] + 50 * (k + 1)) < 1e-9
        good &= h["receiver_elev"] == 120 and h["offset"] == -250 + 100 * k
    ok(good, f"{name}: header values with scalars (SEG-Y rev 1 (2002), coordinate scalar, bytes 71-72 ; check value 9 of docs/references.md)",
       json.dumps(j["headers"][:1]))


# 1. every format, big- and little-endian (little flagged by the rev 2 constant,
#    and unflagged rev 1 found by the format-code plausibility test, common practice with field SEG-Y files)
for fmt, vals in VALUES.items():
    want = expected(fmt, vals)
    for order, rev in (("big", 1), ("little", 2), ("little", 1)):
        name = f"format {fmt} {order}-endian rev {rev}"
        path = os.path.join(WORK, f"f{fmt}_{order}_{rev}.sgy")
        segygen.write(path, fmt=fmt, order=order, rev=rev, traces=[vals] * 3, headers=HEADERS)
        j = inspect(path)
        if not ok(j is not None, f"{name}: read"):
            continue
        ok(j["format_code"] == fmt and j["byte_order"] == order and j["traces"] == 3
           and j["bytes_per_sample"] == segygen.FORMATS[fmt][0],
           f"{name}: format, byte order, trace count, sample size detected",
           f"{j['format_code']} {j['byte_order']} {j['traces']}")
        got = samples(j)
        ok(all(np.array_equal(g, want) for g in got),
           f"{name}: samples equal the stored values as float32", f"{got[0]} vs {want}")
        if fmt in (5, 9) and order == "big":
            check_headers(j, name)

# 2. pair-swapped byte order (rev 2 constant 0x02010403, SEG-Y rev 2.0 (2017), byte-order constant, bytes 3297-3300)
for fmt in (1, 2, 3, 5):
    path = os.path.join(WORK, f"pairs_{fmt}.sgy")
    segygen.write(path, fmt=fmt, order="pairs", rev=2, traces=[VALUES[fmt]] * 3, headers=HEADERS)
    j = inspect(path)
    if ok(j is not None, f"format {fmt} pair-swapped: read"):
        ok(j["byte_order"] == "pairs" and all(np.array_equal(g, expected(fmt, VALUES[fmt]))
                                              for g in samples(j)),
           f"format {fmt} pair-swapped: samples equal the stored values")
        check_headers(j, f"format {fmt} pair-swapped")

# 3. byte-order override: an unflagged little-endian file whose format code is
#    unreadable both ways can still be read when the user says so
path = os.path.join(WORK, "override.sgy")
segygen.write(path, fmt=5, order="little", rev=1, traces=[[1.0, 2.0]] * 2, raw_format=0)
j = inspect(path, "--byte-order", "little", "--format", "5")
ok(j is not None and samples(j)[1].tolist() == [1.0, 2.0],
   "--byte-order little --format 5 reads a file with no usable format code")

# 4. extended textual headers: fixed count and the -1 variable form (SEG-Y rev 1 (2002), binary file header)
trs = [[float(k) for k in range(8)]] * 2
recs = [segygen.stanza_record(["((SEG: Location Data ver 1.0))", "INVENTED"], "ebcdic")] * 2
path = os.path.join(WORK, "ext2.sgy")
segygen.write(path, rev=1, ext_text=2, ext_records=recs, traces=trs)
j = inspect(path)
ok(j is not None and j["extended_textual_headers"] == 2 and j["first_trace_byte"] == 10000
   and j["traces"] == 2 and samples(j)[1].tolist() == trs[1],
   "2 extended textual headers: first trace at 3600 + 2 * 3200")
recs = [segygen.stanza_record(["((SEG: Processing ver 1.0))"]),
        segygen.stanza_record(["MORE TEXT"]), segygen.stanza_record(["((SEG: EndText))"])]
path = os.path.join(WORK, "extvar.sgy")
segygen.write(path, rev=1, ext_text=-1, ext_records=recs, traces=trs)
j = inspect(path)
ok(j is not None and j["extended_textual_headers"] == 3 and j["first_trace_byte"] == 3600 + 9600,
   "variable extended textual headers end at the ((SEG: EndText)) record")

# 5. rev 2: first-trace offset, trace header extensions, data trailers (SEG-Y rev 2.0 (2017): binary file header, trace header extension 1)
path = os.path.join(WORK, "rev2_offset.sgy")
segygen.write(path, rev=2, first_offset=5000, traces=trs)
j = inspect(path)
ok(j is not None and j["first_trace_byte"] == 5000 and j["traces"] == 2,
   "rev 2: bytes 3521-3528 give the first trace offset")
path = os.path.join(WORK, "rev2_ext.sgy")
segygen.write(path, rev=2, ext_headers=1, traces=[[1.5] * 9] * 3, trace_samples=0, bin_samples=0)
j = inspect(path)
ok(j is not None and j["trace_header_extensions"] == 1 and j["traces"] == 3
   and j["samples_per_trace"] == 9 and samples(j)[2].tolist() == [1.5] * 9,
   "rev 2: one trace header extension, samples from extension bytes 137-140")
path = os.path.join(WORK, "rev2_ext_var.sgy")
segygen.write(path, rev=2, fixed=0, ext_headers=2, ext_blocks=[1, 2, 1],
              traces=[[1.0] * 5, [2.0] * 7, [3.0] * 5])
j = inspect(path)
ok(j is not None and j["traces"] == 3 and [len(s) for s in samples(j)] == [5, 7, 5]
   and samples(j)[1][0] == 2.0 and samples(j)[2][4] == 3.0,
   "rev 2 variable-length: per-trace extension counts (extension bytes 157-158)")
path = os.path.join(WORK, "rev2_ext_fewer.sgy")
segygen.write(path, rev=2, fixed=0, ext_headers=3, ext_blocks=[1, 1],
              traces=[[1.0] * 5, [2.0] * 5])
j = inspect(path)
ok(j is not None and j["traces"] == 2 and j["trace_header_extensions"] == 1
   and samples(j)[1].tolist() == [2.0] * 5,
   "rev 2: every trace with fewer extensions than the maximum (3507-3510)")
path = os.path.join(WORK, "rev2_count.sgy")
raw = bytearray(segygen.write(path, rev=2, traces=trs))
raw[3512:3520] = (5).to_bytes(8, "big")
open(path, "wb").write(raw)
p = run("inspect", "--quiet", path, check=False)
ok(p.returncode == 65 and "declares 5 traces (bytes 3513-3520), the file holds 2 (truncated)"
   in p.stderr, "rev 2: a file holding fewer traces than 3513-3520 declares is truncated (65)",
   p.stderr)
j = inspect(path, "--allow-partial")
ok(j is not None and j["traces"] == 2
   and any("declares 5 traces (bytes 3513-3520)" in a for a in j["anomalies"]),
   "rev 2: --allow-partial reads the traces present and reports the declared count")
raw[3512:3520] = (1).to_bytes(8, "big")
open(path, "wb").write(raw)
p = run("inspect", "--quiet", path, check=False)
ok(p.returncode == 65 and "272 bytes after the 1 traces the binary header declares" in p.stderr,
   "rev 2: bytes beyond the declared traces that are not trailer records: 65", p.stderr)
j = inspect(path, "--allow-partial")
ok(j is not None and j["traces"] == 1,
   "rev 2: --allow-partial reads only the declared traces (3513-3520)")
raw[3528:3532] = (-1).to_bytes(4, "big", signed=True)     # trailer count unknown
raw += segygen.stanza_record(["((INVENTED: Notes ver 1.0))"])
raw[3512:3520] = (2).to_bytes(8, "big")
open(path, "wb").write(raw)
j = inspect(path)
ok(j is not None and j["traces"] == 2 and j["data_trailer_records"] == 1
   and [s["name"] for s in j["stanzas"]] == ["INVENTED: Notes ver 1.0"],
   "rev 2: trailer count -1 (3529-3532): the record after the declared traces is a trailer",
   json.dumps(j and [j["traces"], j["data_trailer_records"], j["stanzas"]]))
path = os.path.join(WORK, "rev2_trailer.sgy")
segygen.write(path, rev=2, trailers=2, traces=trs)
j = inspect(path)
ok(j is not None and j["traces"] == 2 and j["trailing_bytes"] == 0,
   "rev 2: 2 data trailer records are not taken for traces")

# 6. textual header: ASCII detected; EBCDIC decoded as Python's cp037 does
line = "AREA: NORTH-7 (TEST) 1.5 MS, 25% / X=Y+Z 'Q' \"R\" #4 @5 _ ; ? < >"
for enc in ("ascii", "ebcdic"):
    path = os.path.join(WORK, f"text_{enc}.sgy")
    segygen.write(path, text=["INVENTED SURVEY CO", line], encoding=enc, traces=trs)
    j = inspect(path)
    ok(j is not None and j["text_encoding"] == enc
       and j["textual_header"][1] == ("C 2 " + line).rstrip(),
       f"{enc} textual header detected and decoded (SEG-Y rev 1 (2002), textual file header; Python codecs cp037)",
       j and j["textual_header"][1])

# 7. variable-length traces (fixed-length flag 0): lengths from bytes 115-116
path = os.path.join(WORK, "varlen.sgy")
vt = [[1.0] * 10, [2.0] * 14, [3.0] * 10]
segygen.write(path, rev=1, fixed=0, traces=vt)
j = inspect(path)
ok(j is not None and j["traces"] == 3 and not j["fixed_length"]
   and [len(s) for s in samples(j)] == [10, 14, 10] and samples(j)[1][0] == 2.0,
   "variable-length file walked by the trace headers' sample counts")

# 8. rev 0: bytes 3501-3506 not trusted (common practice with field SEG-Y files)
path = os.path.join(WORK, "rev0.sgy")
data = bytearray(segygen.write(path, rev=0, traces=trs))
data[3504:3506] = b"\x77\x77"
open(path, "wb").write(data)
j = inspect(path)
ok(j is not None and j["traces"] == 2 and j["extended_textual_headers"] == 0
   and j["revision"] == "0.0", "rev 0: garbage in 3505-3506 ignored")

# 9. sample count fallback: binary header 0, first trace header 8 (common practice with field SEG-Y files)
path = os.path.join(WORK, "fallback.sgy")
segygen.write(path, rev=1, traces=trs, bin_samples=0)
j = inspect(path)
ok(j is not None and j["samples_per_trace"] == 8
   and any("binary header samples per trace is 0" in a for a in j["anomalies"]),
   "zero samples in the binary header: the first trace header is used, with a warning")
done()
