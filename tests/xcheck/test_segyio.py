"""test_segyio -- files written by the independent segyio library (Debian
python3-segyio) are read by tzero identically: samples, sample count and
interval, and trace header values at the SEG-Y rev 1 byte positions.

The other direction (segyio reading files tzero writes) is in
tests/unit/check_segy.c (test_segyio_reads_ours), which calls segyio_dump.py.
Known segyio limits (its issue tracker, docs/references.md): it decodes the textual
header as EBCDIC only and needs little-endian declared, so we only give it
what it supports.
"""
import json
import os

import numpy as np
import segyio

from tzcheck import TZERO, WORK, done, ok, run

rng = np.random.default_rng(20261201)
FIELDS = "field_record,channel,source_point,cmp,offset,source_x,source_y,receiver_x," \
         "receiver_y,receiver_elev,coord_scalar,elev_scalar,kind,samples,interval_us," \
         "delay_ms,cmp_x,cmp_y,inline_no,crossline_no"


def tzero_json(path, *extra):
    p = run("inspect", "--json", "--samples", "all", "--headers", "1000", "--fields", FIELDS,
            *extra, path)
    if p.returncode != 0:
        return None
    return json.loads(p.stdout)["files"][0]


def check_from_array(fmt, name):
    """segyio.tools.from_array with IBM (1) or IEEE (5) samples."""
    data = (rng.standard_normal((7, 25)) * 1000).astype(np.float32)
    path = os.path.join(WORK, name)
    segyio.tools.from_array(path, data, format=fmt, dt=2000)
    with segyio.open(path, ignore_geometry=True) as f:
        ref = np.stack([f.trace[i] for i in range(f.tracecount)])
        hdr = [dict(f.header[i]) for i in range(f.tracecount)]
    j = tzero_json(path)
    if not ok(j is not None, f"{name}: tzero inspect reads the segyio file"):
        return
    ok(j["traces"] == 7 and j["samples_per_trace"] == 25 and j["sample_interval_us"] == 2000
       and j["format_code"] == fmt and j["byte_order"] == "big",
       f"{name}: traces, samples, interval, format and byte order as segyio wrote them",
       str({k: j[k] for k in ("traces", "samples_per_trace", "sample_interval_us",
                              "format_code", "byte_order")}))
    ours = np.array([t["values"] for t in j["trace_samples"]], dtype=np.float32)
    # IBM -> IEEE single is exact for in-range values (IBM System/360 Principles of Operation, hexadecimal floating point), so
    # both decodings must agree bit for bit, and IEEE samples trivially so.
    ok(np.array_equal(ours, ref), f"{name}: samples identical to segyio's decoding",
       f"max diff {np.max(np.abs(ours - ref)) if ours.shape == ref.shape else ours.shape}")
    if fmt == 5:
        ok(np.array_equal(ours, data), f"{name}: IEEE samples identical to the array written")
    else:
        rel = np.max(np.abs(ours - data) / np.maximum(np.abs(data), 1e-30))
        ok(rel <= 2 ** -20, f"{name}: IBM samples within IBM precision of the array "
           f"(IBM System/360 Principles of Operation, hexadecimal floating point)", f"rel {rel}")
    good = all(h["inline_no"] == hs[segyio.TraceField.INLINE_3D]
               and h["crossline_no"] == hs[segyio.TraceField.CROSSLINE_3D]
               and h["offset"] == hs[segyio.TraceField.offset]
               and h["samples"] == hs[segyio.TraceField.TRACE_SAMPLE_COUNT]
               and h["interval_us"] == hs[segyio.TraceField.TRACE_SAMPLE_INTERVAL]
               for h, hs in zip(j["headers"], hdr))
    ok(good and len(j["headers"]) == 7, f"{name}: inline, crossline, offset, samples, "
       "interval (bytes 189, 193, 37, 115, 117) as segyio reads them")


def check_create(endian, fmt):
    """segyio.create with a spec, explicit header values and scalars."""
    name = f"create_{endian}_{fmt}.sgy"
    path = os.path.join(WORK, name)
    spec = segyio.spec()
    spec.format = fmt
    spec.samples = list(range(40))
    spec.tracecount = 6
    spec.endian = endian
    data = (rng.standard_normal((6, 40)) * 50).astype(np.float32)
    TF = segyio.TraceField
    raw = []
    with segyio.create(path, spec) as f:
        f.bin.update({segyio.BinField.Interval: 1000, segyio.BinField.Samples: 40,
                      segyio.BinField.Format: fmt})
        for i in range(6):
            h = {TF.FieldRecord: 3000 + i // 3, TF.TraceNumber: i % 3 + 1,
                 TF.CDP: 100 + i, TF.offset: -150 + 60 * i,
                 TF.SourceGroupScalar: -100, TF.ElevationScalar: -10,
                 TF.SourceX: 41234567 + i, TF.SourceY: 612345678,
                 TF.GroupX: 41234567 + 2500 * i, TF.GroupY: 612345678 - 7,
                 TF.ReceiverGroupElevation: 1234 + i, TF.TRACE_SAMPLE_COUNT: 40,
                 TF.TRACE_SAMPLE_INTERVAL: 1000, TF.TraceIdentificationCode: 2 if i == 4 else 1,
                 TF.CDP_X: 41000000 + i, TF.CDP_Y: -5}
            f.header[i] = h
            f.trace[i] = data[i]
            raw.append(h)
    extra = ("--byte-order", "little") if endian == "little" else ()
    j = tzero_json(path, *extra)
    if not ok(j is not None, f"{name}: tzero reads it"):
        return
    ok(j["byte_order"] == endian, f"{name}: byte order {endian}", j["byte_order"])
    if endian == "little":     # no rev 2 constant: the plausibility test must find it alone
        auto = tzero_json(path)
        ok(auto is not None and auto["byte_order"] == "little",
           f"{name}: little-endian detected without the override (common practice with field SEG-Y files)")
    with segyio.open(path, ignore_geometry=True, endian=endian) as f:
        ref = np.stack([f.trace[i] for i in range(f.tracecount)])
    ours = np.array([t["values"] for t in j["trace_samples"]], dtype=np.float32)
    ok(np.array_equal(ours, ref), f"{name}: samples identical to segyio's")
    # Scalar rule (SEG-Y rev 1): negative divides. -100 on 73-88 and 181-188, -10 on 41.
    good = True
    for h, r in zip(j["headers"], raw):
        good &= h["field_record"] == r[TF.FieldRecord] and h["channel"] == r[TF.TraceNumber]
        good &= h["cmp"] == r[TF.CDP] and h["offset"] == r[TF.offset]
        good &= abs(h["source_x"] - r[TF.SourceX] / 100) < 1e-6
        good &= abs(h["receiver_x"] - r[TF.GroupX] / 100) < 1e-6
        good &= abs(h["receiver_y"] - r[TF.GroupY] / 100) < 1e-6
        good &= abs(h["receiver_elev"] - r[TF.ReceiverGroupElevation] / 10) < 1e-9
        good &= abs(h["cmp_x"] - r[TF.CDP_X] / 100) < 1e-6 and abs(h["cmp_y"] + 0.05) < 1e-9
        good &= h["kind"] == r[TF.TraceIdentificationCode]
    ok(good, f"{name}: header values with the coordinate and elevation scalars applied")
    ok(j["dead_traces"] == 1 and j["field_records"] == 2 and j["channels"] == 3,
       f"{name}: 1 dead trace, 2 field records, 3 channels",
       f"{j['dead_traces']} {j['field_records']} {j['channels']}")
    rms = float(np.sqrt(np.mean(ref.astype(np.float64) ** 2)))
    ok(abs(j["amplitude"]["rms"] - rms) <= 1e-9 * rms and j["amplitude"]["max"] == ref.max()
       and j["amplitude"]["min"] == ref.min(), f"{name}: amplitude min/max/RMS match NumPy")


check_from_array(1, "from_array_ibm.sgy")
check_from_array(5, "from_array_ieee.sgy")
for endian in ("big", "little"):
    for fmt in (1, 5):
        check_create(endian, fmt)
done()
