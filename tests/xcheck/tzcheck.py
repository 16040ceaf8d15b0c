"""tzcheck -- helpers shared by the external cross-checks (TAP-style output).

Each cross-check compares tzero with something outside the project: a
published formula or worked example, or an independent library (segyio,
NumPy, SciPy from Debian). The source is named beside each check.
"""
import os
import subprocess
import sys
import tempfile

TZERO = os.environ.get("TZERO", os.path.join(os.path.dirname(__file__), "..", "..", "build", "tzero"))
WORK = tempfile.mkdtemp(dir=os.environ.get("WORK"))
# a fixed date for textual headers and histories (the reproducible-builds convention), so
# two runs of a check compare equal whatever the clock says
os.environ.setdefault("SOURCE_DATE_EPOCH", "1767225600")
failures = 0


def ok(cond, desc, detail=""):
    global failures
    if cond:
        print(f"ok - {desc}")
    else:
        failures += 1
        print(f"not ok - {desc}" + (f": {detail}" if detail else ""))
    return cond


def run(*args, check=True, **kw):
    """Runs tzero with args; returns CompletedProcess (text mode)."""
    p = subprocess.run([TZERO, *map(str, args)], capture_output=True, text=True, **kw)
    if check and p.returncode != 0:
        print(f"# tzero {' '.join(map(str, args))} -> {p.returncode}\n# {p.stderr.strip()}")
    return p


def done():
    sys.exit(1 if failures else 0)


def fast_size(n):
    """Smallest 2^a 3^b 5^c >= n (the FFT lengths tzero pads to)."""
    while True:
        m = n
        for p in (2, 3, 5):
            while m % p == 0:
                m //= p
        if m == 1:
            return n
        n += 1
