"""test_segy_layouts -- every file-structure layout of SEG-Y rev 0, 1, 2.0 and 2.1,
read by tzero and compared with the layout computed from the byte tables and
with the independent segyio library (Debian python3-segyio) wherever segyio
reads the file.

The files come from tests/data/segy/layout_cases.py: extended textual header
count 0 / 2 / -1 with ((SEG: EndText)) / -1 without it (SEG-Y rev 1 (2002),
binary header 3505-3506; read whatever the revision: writers fill it in rev 0
files too), 0-3 additional trace headers (SEG-Y rev 2.0 (2017): a 2-byte count
at 3507-3508 in the rev 2.1 layout, one 4-byte count at 3507-3510 before it),
the first-trace offset (3521-3528) given or not, data trailer records
(3529-3532), both byte orders. Expected values: the trace count, the first
trace byte and each sample as written (IBM values by the defining formula
(-1)^S * F/2^24 * 16^(E-64), exact for these multiples of 1/4).

Then every readable file cut short by 7 bytes, and by half its last trace, must
stop with exit 65 naming a byte offset (never a crash, never exit 0 with a
wrong read).
"""
import json
import os
import re
import sys

import numpy as np

from tzcheck import WORK, done, ok, run

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "data", "segy"))
import layout_cases  # noqa: E402

try:
    import segyio
except ImportError:   # pragma: no cover - the Debian package is a test dependency
    segyio = None


def tzero(path, *extra):
    p = run("inspect", "--json", "--samples", "all", *extra, path, check=False)
    return p, (json.loads(p.stdout)["files"][0] if p.returncode == 0 else None)


def segyio_read(path, order):
    """(trace count, samples) as segyio reads the file, or None if it refuses."""
    if segyio is None:
        return None
    try:
        with segyio.open(path, ignore_geometry=True, endian=order) as f:
            return f.tracecount, [np.array(f.trace[i], dtype=np.float32)
                                  for i in range(f.tracecount)]
    except Exception:   # noqa: BLE001 - any refusal means "segyio cannot read it"
        return None


files = layout_cases.write_all(os.path.join(WORK, "layouts"))
agree = tried = 0
bad_cases = []
for path, want in files:
    name = os.path.basename(path)
    p, j = tzero(path)
    if not want["readable"]:
        # -1 without the end stanza: 65 naming it (SEG-Y rev 1: the variable
        # count ends with the ((SEG: EndText)) stanza)
        good = p.returncode == 65 and "((SEG: EndText))" in p.stderr and "byte " in p.stderr
        if not good:
            bad_cases.append(f"{name}: exit {p.returncode} {p.stderr.strip()}")
        continue
    if j is None:
        bad_cases.append(f"{name}: exit {p.returncode} {p.stderr.strip()}")
        continue
    got = [np.array(t["values"], dtype=np.float32) for t in j["trace_samples"]]
    wantv = [np.array(v, dtype=np.float32) for v in want["values"]]
    checks = {
        "traces": j["traces"] == want["traces"],
        "first trace byte": j["first_trace_byte"] == want["first"],
        "extensions": j["trace_header_extensions"] == want["extensions"],
        "samples": len(got) == len(wantv) and all(np.array_equal(a, b) for a, b in zip(got, wantv)),
        "format": j["format_code"] == want["fmt"] and j["byte_order"] == want["order"],
        "trailers": j.get("data_trailer_records", 0) == want["trailer_records"],
    }
    if want["ext"] in ("two", "var_end") and not (want["rev"] == 2 and want["first"] != 3600 + 3200 * want["ext_records"]):
        checks["extended records"] = j["extended_textual_headers"] == want["ext_records"]
    if want["rev"] == 0 and want["ext_records"]:
        checks["rev 0 anomaly"] = any("revision 0 file with" in a for a in j["anomalies"])
    if want["ext"] == "two":
        checks["stanzas listed"] = [s["name"] for s in j.get("stanzas", [])][:2] == [
            "INVENTED: Field Notes ver 1.0", "INVENTED: Trace Header Layout ver 1.0"]
        checks["layout stanza said"] = any("header layout stanza" in a for a in j["anomalies"])
    if want["rev"] == 2:
        # big-endian 4-byte count k: bytes 3507-3508 alone read 0, which cannot
        # account for the extension bytes; little-endian, both readings give k
        four = want["minor"] == 0 and want["order"] == "big" and want["extensions"] > 0
        checks["extension count reading said"] = (
            j.get("trace_header_extensions_from") == ("3507-3510" if four else "3507-3508")
            and any("read from bytes 3507-3510" in a for a in j["anomalies"]) == four)
    failed = [k for k, v in checks.items() if not v]
    if failed:
        bad_cases.append(f"{name}: {', '.join(failed)}")
    # segyio, where it reads the file as the byte tables lay it out
    s = segyio_read(path, want["order"])
    tried += 1
    if s is not None and s[0] == want["traces"] and all(
            np.array_equal(a, b) for a, b in zip(s[1], wantv)):
        agree += 1
        if not (j["traces"] == s[0] and all(np.array_equal(a, b) for a, b in zip(got, s[1]))):
            bad_cases.append(f"{name}: differs from segyio")

ok(not bad_cases, f"{len(files)} layouts (rev 0/1/2.0/2.1 x extended text x extensions x "
   "offset x trailers x byte order): trace counts, first trace byte and samples as the byte "
   "tables lay them out", "; ".join(bad_cases[:8]))
ok(agree > 0, f"segyio {getattr(segyio, '__version__', '?')} reads {agree} of {tried} "
   "readable layouts as the byte tables do, and tzero reads those identically")
print(f"# segyio read {agree} of {tried} layouts as laid out")

# Truncated copies: exit 65 with a byte offset, never a crash or a wrong read.
bad_cases = []
for path, want in files:
    if not want["readable"]:
        continue
    raw = open(path, "rb").read()
    tb = layout_cases.trace_bytes(want)
    for cut in (7, tb // 2):
        short = path + f".cut{cut}"
        open(short, "wb").write(raw[:-cut])
        p = run("inspect", "--quiet", short, check=False)
        if p.returncode >= 128 or p.returncode < 0:
            bad_cases.append(f"{os.path.basename(short)}: crashed ({p.returncode})")
        elif p.returncode == 0:
            # only acceptable if what was cut was trailer bytes, and then the
            # traces must all still be read right
            q, j = tzero(short)
            if not (want["trailer_records"] and j and j["traces"] == want["traces"] and
                    any("trailer" in a for a in j["anomalies"])):
                bad_cases.append(f"{os.path.basename(short)}: exit 0")
        elif p.returncode != 65 or not re.search(r"byte \d+", p.stderr):
            bad_cases.append(f"{os.path.basename(short)}: exit {p.returncode} {p.stderr.strip()}")
ok(not bad_cases, "every layout cut short: exit 65 naming the byte offset",
   "; ".join(bad_cases[:8]))

# The end stanza as writers spell it: blanks and letter case vary, records may be
# padded with NUL instead of blanks, in ASCII or EBCDIC (SEG-Y rev 1 (2002) names
# the stanza ((SEG: EndText)); the variants are common practice).
import segygen  # noqa: E402
bad_cases = []
trs = [[float(k) for k in range(6)]] * 2
for spelling in ("((SEG: EndText))", "((SEG:EndText))", "(( SEG: ENDTEXT ))", "((seg: endtext))"):
    for enc in ("ascii", "ebcdic"):
        for pad in (b" ", b"\0"):
            last = bytearray(segygen.stanza_record([spelling], enc))
            blank = b" " if enc == "ascii" else b"\x40"
            if pad == b"\0":
                last = last.replace(blank, b"\0")
            recs = [segygen.stanza_record(["((INVENTED: Notes ver 1.0))"], enc), bytes(last)]
            path = os.path.join(WORK, "endtext.sgy")
            segygen.write(path, rev=1, ext_text=-1, ext_records=recs, traces=trs)
            p, j = tzero(path)
            if not (j and j["extended_textual_headers"] == 2 and j["first_trace_byte"] == 10000
                    and j["traces"] == 2):
                bad_cases.append(f"{spelling} {enc} pad {pad!r}: {p.stderr.strip()}")
ok(not bad_cases, "the end stanza found in its spellings, encodings and paddings",
   "; ".join(bad_cases[:4]))

# The fuzzing seeds kept in tests/data/fuzz-seeds/segy are these files (consistency
# check: regenerate with layout_cases.py --seeds DIR when the generator changes).
seed_dir = os.path.join(os.path.dirname(__file__), "..", "data", "fuzz-seeds", "segy")
seeds = sorted(os.listdir(seed_dir)) if os.path.isdir(seed_dir) else []
made = {os.path.basename(p): p for p, w in files if layout_cases.is_seed(w, os.path.basename(p))}
ok(seeds and seeds == sorted(made) and all(
    open(os.path.join(seed_dir, n), "rb").read() == open(made[n], "rb").read() for n in seeds),
   f"the {len(seeds)} SEG-Y fuzzing seeds are the generator's files, byte for byte")
done()
