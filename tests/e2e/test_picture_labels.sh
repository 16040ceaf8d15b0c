# test_picture_labels.sh -- what a panel's axis and title say: constant-velocity
# panels are labelled by velocity, a shot record by its record number, gathers
# side by side get a long tick at each boundary. Files are written by segyio
# (Debian python3-segyio) with the header fields of SEG-Y rev 1 (field record
# 9-12, channel 13-16, CMP 21-24, offset 37-40); the SVG is read as text.
. "$TOP/tests/e2e/lib.sh"
"$PYTHON" - "$T" <<'PY'
import sys
import numpy as np
import segyio
T = sys.argv[1]
def write(name, heads):
    spec = segyio.spec()
    spec.format, spec.samples, spec.tracecount = 5, list(range(50)), len(heads)
    with segyio.create(f"{T}/{name}.sgy", spec) as f:
        f.bin.update({segyio.BinField.Interval: 2000, segyio.BinField.Samples: 50})
        for i, (rec, chan, cmp, off) in enumerate(heads):
            f.header[i] = {segyio.TraceField.FieldRecord: rec, segyio.TraceField.TraceNumber: chan,
                           segyio.TraceField.CDP: cmp, segyio.TraceField.offset: off,
                           segyio.TraceField.TRACE_SAMPLE_COUNT: 50,
                           segyio.TraceField.TRACE_SAMPLE_INTERVAL: 2000}
            f.trace[i] = np.sin(np.arange(50) * 0.3 + i).astype(np.float32)
# tzero cvs layout: panel number in 9-12, its velocity in 37-40, CMPs 100-104 per panel
write("cvs", [(p + 1, 0, 100 + c, v) for p, v in enumerate((1500, 1800, 2100)) for c in range(5)])
# one shot record: record 7, channels 1-12, split-spread offsets, no CMPs yet
write("shot", [(7, c + 1, 0, -30 + 5 * c + (5 if c >= 6 else 0)) for c in range(12)])
# two CMP gathers side by side (as tzero nmo writes them): traces from several records
write("gathers", [(r + 1, 1, cmp, 10 * (r + 1)) for cmp in (10, 20) for r in range(6)])
PY
for f in cvs shot gathers; do
  expect_status 0 "$f draws as SVG" -- "$TZERO" picture "$T/$f.sgy" --out "$T/$f.svg"
done
texts() { grep -o '<text[^>]*>[^<]*</text>' "$T/$1.svg" | sed 's/<[^>]*>//g'; }
# boundary ticks: vertical two-point lines three tick lengths long (15 px) above the plot
long_ticks() {
  "$PYTHON" -c 'import re,sys
s=open(sys.argv[1]).read()
print(sum(1 for a in re.findall(r"points=\"([0-9.]+),([0-9.]+) ([0-9.]+),([0-9.]+)\"", s)
          if a[0] == a[2] and abs(float(a[1]) - float(a[3])) == 15))' "$T/$1.svg"
}
if texts cvs | grep -qx "Velocity" && texts cvs | grep -qx "1800 m/s" && ! texts cvs | grep -q "Offset"; then
  ok "constant-velocity panels: axis labelled by velocity, each panel its velocity"
else notok "cvs axis: $(texts cvs | tr '\n' '|')"; fi
texts cvs | grep -q "3 constant-velocity panels 1500-2100 m/s, CMP 100-104" \
  && ok "cvs title names the panels" || notok "cvs title: $(texts cvs | grep sgy)"
n=$(long_ticks cvs)
[ "$n" -eq 2 ] && ok "cvs: a tick at each of the 2 panel boundaries" || notok "cvs: $n boundary ticks"
texts shot | grep -q "shot.sgy, record 7, 12 channels" && ! texts shot | grep -q "CMP 0" \
  && ok "shot record titled by its record, not CMP 0-0" || notok "shot title: $(texts shot | grep sgy)"
texts shot | grep -qx "Offset (m)" && ok "shot record: offset axis" || notok "shot axis"
n=$(long_ticks shot)
[ "$n" -eq 0 ] && ok "one record: no boundary tick" || notok "shot: $n boundary ticks"
texts gathers | grep -q "2 gathers, CMP 10-20" && ok "gathers titled by count and CMPs" \
  || notok "gathers title: $(texts gathers | grep sgy)"
n=$(long_ticks gathers)
[ "$n" -eq 1 ] && ok "gathers side by side: a tick at the boundary" || notok "gathers: $n boundary ticks"
