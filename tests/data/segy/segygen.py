"""segygen -- a small, independent SEG-Y writer for tests (Python standard library).

Written from the SEG-Y rev 1 (2002) and rev 2.0 (2017) byte tables as given in
SEG-Y rev 1 (2002) and rev 2.0 (2017), not from tzero's code, so that tzero's reader is checked
against a second reading of the standard. It can write every sample format,
big- or little-endian or pair-swapped, rev 0/1/2 options (extended textual
headers, first-trace offset, trace header extensions, trailers), ASCII or
EBCDIC (cp037) textual headers, variable trace lengths and deliberate damage.
"""
import math
import struct

FORMATS = {  # code: (bytes per sample, struct code or None for 3-byte / IBM)
    1: (4, None), 2: (4, "i"), 3: (2, "h"), 5: (4, "f"), 6: (8, "d"), 7: (3, None),
    8: (1, "b"), 9: (8, "q"), 10: (4, "I"), 11: (2, "H"), 12: (8, "Q"), 15: (3, None),
    16: (1, "B"),
}


def ibm_word(v):
    """IEEE value -> IBM System/360 single (encoding after IBM System/360 Principles of Operation, hexadecimal floating point, rounded)."""
    if v == 0:
        return 0
    sign = 0x80000000 if v < 0 else 0
    m, e = math.frexp(abs(v))          # abs(v) = m * 2**e, 0.5 <= m < 1
    q = -((-e) // 4)                   # ceil(e / 4): F = m * 2**(e - 4q) in [1/16, 1)
    frac = round(m * 2.0 ** (e - 4 * q) * 2 ** 24)
    if frac >= 1 << 24:
        frac >>= 4
        q += 1
    return sign | (q + 64) << 24 | frac


def order_bytes(b, order):
    """Big-endian bytes of one value -> the file's byte order."""
    if order == "little":
        return b[::-1]
    if order == "pairs" and len(b) % 2 == 0:
        return b"".join(b[i + 1:i + 2] + b[i:i + 1] for i in range(0, len(b), 2))
    return b


def pack(code, v, order):
    return order_bytes(struct.pack(">" + code, v), order)


def sample_bytes(fmt, v, order):
    if fmt == 1:
        return order_bytes(struct.pack(">I", ibm_word(v)), order)
    if fmt in (7, 15):
        iv = int(v)
        if fmt == 7 and iv < 0:
            iv += 1 << 24
        return order_bytes(iv.to_bytes(3, "big"), order)
    code = FORMATS[fmt][1]
    return pack(code, v if code in "fd" else int(v), order)


def text_block(lines, encoding):
    cards = []
    for i in range(40):
        body = lines[i] if i < len(lines) else ""
        cards.append(f"C{i + 1:2d} {body}"[:80].ljust(80))
    raw = "".join(cards)
    return raw.encode("cp037" if encoding == "ebcdic" else "ascii")


# Trace header fields: name -> (1-based byte, struct code), SEG-Y rev 1 positions.
TRACE_FIELDS = {
    "line_seq": (1, "i"), "file_seq": (5, "i"), "field_record": (9, "i"), "channel": (13, "i"),
    "source_point": (17, "i"), "cmp": (21, "i"), "cmp_trace": (25, "i"), "kind": (29, "h"),
    "offset": (37, "i"), "receiver_elev": (41, "i"), "source_elev": (45, "i"),
    "elev_scalar": (69, "h"), "coord_scalar": (71, "h"), "source_x": (73, "i"),
    "source_y": (77, "i"), "receiver_x": (81, "i"), "receiver_y": (85, "i"),
    "coord_units": (89, "h"), "delay_ms": (109, "h"), "samples": (115, "H"),
    "interval_us": (117, "H"), "cmp_x": (181, "i"), "cmp_y": (185, "i"),
}


def trace_header(fields, order):
    h = bytearray(240)
    for name, v in fields.items():
        pos, code = TRACE_FIELDS[name]
        b = pack(code, v, order)
        h[pos - 1:pos - 1 + len(b)] = b
    return bytes(h)


def ext_block(i, k, ns, nblk, order):
    """Trace header extension block k (0-based) of trace i: extension 1 per SEG-Y
    rev 2.0 (2017) trace header extension 1, later blocks private bytes."""
    ext = bytearray(240)
    if k == 0:
        ext[0:8] = pack("Q", i + 1, order)            # extension 1-8: sequence in line
        ext[96:104] = pack("d", 1000.5 + i, order)    # 97-104: source X (f64)
        ext[136:140] = pack("I", ns, order)           # 137-140: samples in this trace
        ext[156:158] = pack("H", nblk, order)         # 157-158: blocks on this trace
        ext[232:240] = b"SEG00001"                    # 233-240: header name
    else:
        ext[0:4] = bytes([0xA5, k, i & 0xFF, 0x5A])    # private bytes
        ext[232:240] = f"INV{k:05d}".encode()
    return bytes(ext)


def rewrap(raw, rev=2, minor=1, ext_records=(), extensions=0):
    """A copy of a fixed-length big-endian SEG-Y file without extended textual
    records or extensions (as `tzero synth` writes), with `ext_records` inserted
    after the binary header (count at 3505-3506, whatever the revision) and
    `extensions` blocks after each trace header (rev 2: count at 3507-3508, the
    rev 2.1 layout). The traces' header and sample bytes are unchanged."""
    text, binh, body = raw[:3200], bytearray(raw[3200:3600]), raw[3600:]
    ns = struct.unpack(">H", bytes(binh[20:22]))[0]
    fmt = struct.unpack(">h", bytes(binh[24:26]))[0]
    tb = 240 + ns * FORMATS[fmt][0]
    assert len(body) % tb == 0
    ntr = len(body) // tb
    binh[300:302] = bytes([2, minor]) if rev == 2 else (b"\x01\x00" if rev == 1 else b"\0\0")
    if rev == 0:
        binh[302:304] = b"\0\0"                       # no fixed-length flag in rev 0
    binh[304:306] = struct.pack(">h", len(ext_records))
    if rev == 2:
        binh[96:100] = struct.pack(">I", 0x01020304)
        binh[306:308] = struct.pack(">H", extensions)
        binh[312:320] = struct.pack(">Q", ntr)
    out = bytearray(text + bytes(binh) + b"".join(ext_records))
    for i in range(ntr):
        tr = body[i * tb:(i + 1) * tb]
        out += tr[:240]
        for k in range(extensions):
            out += ext_block(i, k, ns, extensions, "big")
        out += tr[240:]
    return bytes(out)


def write(path, fmt=5, order="big", rev=1, traces=((0.0,),), headers=None, interval=2000,
          text=("INVENTED TEST LINE",), encoding="ebcdic", ext_text=0, ext_records=None,
          first_offset=0, ext_headers=0, trailers=0, fixed=1, bin_samples=None,
          trace_samples=None, constant=None, truncate=0, raw_format=None, ext_blocks=None,
          minor=0, ext_count_width=None, survey_type=0, declared=None, trailer_count=None):
    """Writes a SEG-Y file; returns its bytes. `traces` is a list of sample lists.

    rev 2 options: `minor` (3502), `ext_count_width` 4 (one 4-byte count of
    additional trace headers at 3507-3510, default for minor 0) or 2 (the rev
    2.1 layout: 2 bytes at 3507-3508, survey type `survey_type` at 3509-3510,
    default for minor 1), `declared` traces at 3513-3520, `trailer_count` to
    store at 3529-3532 instead of `trailers`. The extended textual header
    count `ext_text` is stored whatever the revision (writers do so in rev 0
    files too)."""
    binh = bytearray(400)

    def put(pos, code, v):
        b = pack(code, v, order)
        binh[pos - 3201:pos - 3201 + len(b)] = b

    ns0 = len(traces[0]) if traces else 0
    put(3217, "H", interval)
    put(3221, "H", ns0 if bin_samples is None else bin_samples)
    put(3225, "h", fmt if raw_format is None else raw_format)
    put(3229, "h", 1)
    put(3255, "h", 1)
    if rev == 1:
        binh[300:302] = b"\x01\x00"
    elif rev == 2:
        binh[300:302] = bytes([2, minor])
    if rev >= 1:
        put(3503, "h", fixed)
    if ext_text:
        put(3505, "h", ext_text)
    if rev >= 2:
        put(3297, "I", 0x01020304 if constant is None else constant)
        width = ext_count_width or (2 if minor >= 1 else 4)
        if width == 4:
            put(3507, "i", ext_headers)
        else:
            put(3507, "H", ext_headers)
            put(3509, "H", survey_type)
        put(3513, "Q", declared or 0)
        put(3521, "Q", first_offset)
        put(3529, "i", trailers if trailer_count is None else trailer_count)
    elif constant is not None:
        put(3297, "I", constant)
    out = bytearray(text_block(text, encoding) + bytes(binh))
    for rec in (ext_records or []):
        out += rec
    if first_offset:
        out += bytes(first_offset - len(out))
    for i, tr in enumerate(traces):
        f = {k: v for k, v in (headers[i] if headers else {}).items() if v is not None}
        f.setdefault("line_seq", i + 1)
        f.setdefault("samples", len(tr) if trace_samples is None else trace_samples)
        f.setdefault("interval_us", interval)
        out += trace_header(f, order)
        nblk = ext_blocks[i] if ext_blocks else ext_headers
        for k in range(nblk):
            out += ext_block(i, k, len(tr), nblk, order)
        for v in tr:
            out += sample_bytes(fmt, v, order)
    for k in range(trailers):
        out += stanza_record(["((INVENTED: Trailer Notes ver 1.0))", f"TRAILER {k + 1}"])
    if truncate:
        out = out[:-truncate]
    with open(path, "wb") as fp:
        fp.write(out)
    return bytes(out)


def stanza_record(lines, encoding="ascii"):
    """One 3200-byte extended textual header record (40 lines of 80 characters)."""
    raw = "".join(l[:80].ljust(80) for l in (list(lines) + [""] * 40)[:40])
    return raw.encode("cp037" if encoding == "ebcdic" else "ascii")
