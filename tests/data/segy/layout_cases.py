"""layout_cases -- SEG-Y files in every file-structure layout the reader must handle.

Every combination of revision 0, 1, 2.0 and 2.1; extended textual header count
0, positive (2 records), -1 with the ((SEG: EndText)) stanza (3 records) and -1
without it; 0 to 3 additional trace headers; the first-trace offset given or
not; data trailer records or none; big- and little-endian. Trace header
extensions, the first-trace offset and trailers exist from rev 2 on (SEG-Y rev
2.0, 2017), so rev 0 and rev 1 vary the textual count and byte order only.

Each case comes with the layout computed here from the byte tables (where the
first trace starts, how long a trace is, how many traces there are and what
their samples are), so that tests compare the reader with this arithmetic and
not with itself. Written with segygen (Python struct and codecs only).

Usage: layout_cases.py DIR writes every file into DIR (small: 4-17 KB each);
layout_cases.py --seeds DIR keeps only a spread of them, the fuzzing seeds in
tests/data/fuzz-seeds/segy/.
"""
import itertools
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import segygen  # noqa: E402

REVS = ((0, 0), (1, 0), (2, 0), (2, 1))
EXT_TEXT = ("none", "two", "var_end", "var_noend")
NS = 9                # samples per trace
NTR = 3               # traces per file


def _records(kind):
    """Extended textual header records for one EXT_TEXT kind (SEG-Y rev 1 (2002)
    section on extended textual headers: stanzas headed ((...)))."""
    if kind == "two":
        return 2, [segygen.stanza_record(["((INVENTED: Field Notes ver 1.0))", "TARROWVANE"]),
                   segygen.stanza_record(["((INVENTED: Trace Header Layout ver 1.0))", "(PRIVATE)"],
                                         "ebcdic")]
    if kind == "var_end":
        return -1, [segygen.stanza_record(["((SEG: Processing ver 1.0))"]),
                    segygen.stanza_record(["MORE NOTES"], "ebcdic"),
                    segygen.stanza_record(["((SEG: EndText))"])]
    if kind == "var_noend":
        return -1, [segygen.stanza_record(["((SEG: Processing ver 1.0))"]),
                    segygen.stanza_record(["NO END STANZA HERE"])]
    return 0, []


def cases():
    """Yields (name, write kwargs, expected layout dict)."""
    for (major, minor), ext, order in itertools.product(REVS, EXT_TEXT, ("big", "little")):
        rev2 = major == 2
        for hdrs, first, trl in itertools.product(range(4) if rev2 else (0,),
                                                  (0, 1) if rev2 else (0,),
                                                  (0, 2) if rev2 else (0,)):
            idx = len(name_list)
            fmt = (5, 1, 2, 3)[idx % 4]
            count, recs = _records(ext)
            traces = [[float((k * 7 + t * 3) % 23 - 11) * (1 if fmt in (2, 3) else 0.25)
                       for k in range(NS)] for t in range(NTR)]
            nrec = len(recs)
            first_byte = 3600 + 3200 * nrec
            # a given first-trace offset: 200 spare bytes after the records
            offset = first_byte + 200 if first else 0
            kw = dict(fmt=fmt, order=order, rev=major, minor=minor, traces=traces,
                      ext_text=count, ext_records=recs, ext_headers=hdrs, first_offset=offset,
                      trailers=trl, fixed=1 if major >= 1 else 0,
                      survey_type=1 if (rev2 and minor == 1 and hdrs == 0) else 0,
                      declared=NTR if (rev2 and hdrs % 2) else None,
                      headers=[{"field_record": 10 + t, "channel": t + 1} for t in range(NTR)])
            name = (f"r{major}{minor}_{ext}_x{hdrs}_{'off' if first else 'nooff'}_t{trl}_"
                    f"{order}_f{fmt}")
            readable = not (ext == "var_noend" and not offset)
            want = dict(readable=readable, traces=NTR, samples=NS, first=offset or first_byte,
                        extensions=hdrs, ext_records=nrec, trailer_records=trl, fmt=fmt,
                        values=traces, rev=major, minor=minor, order=order, ext=ext)
            name_list.append(name)
            yield name, kw, want


name_list = []


def trace_bytes(want):
    """Length of one trace: 240-byte header, 240 per extension, the samples."""
    return 240 * (1 + want["extensions"]) + want["samples"] * segygen.FORMATS[want["fmt"]][0]


def write_all(d):
    os.makedirs(d, exist_ok=True)
    out = []
    name_list.clear()
    for name, kw, want in cases():
        path = os.path.join(d, name + ".sgy")
        raw = segygen.write(path, **kw)
        if want["readable"]:
            # the layout computed from the byte tables accounts for every byte
            assert len(raw) == want["first"] + NTR * trace_bytes(want) + 3200 * want["trailer_records"], name
        out.append((path, want))
    return out


def is_seed(want, name):
    """A spread of the cases small enough to keep as fuzzing seeds
    (tests/data/fuzz-seeds/segy/): every revision and textual-count kind, both
    byte orders, 0-3 extensions, the first-trace offset given or not and
    trailers or none for rev 2.0 and 2.1."""
    i = EXT_TEXT.index(want["ext"])
    if want["order"] != ("big", "little")[(want["rev"] + want["minor"] + i) % 2]:
        return False
    if want["rev"] < 2:
        return True
    m = want["minor"]
    return (want["extensions"] == (i + 2 * m) % 4 and ("_off_" in name) == bool(i % 2)
            and want["trailer_records"] == (2 if (i + m) % 2 else 0))


if __name__ == "__main__":
    if sys.argv[1] == "--seeds":
        d = sys.argv[2]
        for path, want in write_all(d):
            if not is_seed(want, os.path.basename(path)):
                os.remove(path)
    else:
        write_all(sys.argv[1])
