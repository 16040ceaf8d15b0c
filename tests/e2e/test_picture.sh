# test_picture.sh -- `tzero picture` command line: help, bad inputs, no half-written PNG.
# Exit codes from <sysexits.h> (BSD sysexits(3)): 64 usage, 65 bad data, 66 no input,
# 73 cannot create. The PNG signature is from ISO/IEC 15948 (PNG), section 5.2.
# (Pixels, colours and clip percentiles: tests/xcheck/test_picture.py.)
. "$TOP/tests/e2e/lib.sh"
expect_status 0 "picture --help" -- "$TZERO" picture --help
expect_stdout "qualified" "--help carries the caution (project rule)"
expect_stdout "T1 ms" "--help gives the time unit"
expect_stdout "in pixels" "--help gives the size unit"
expect_status 0 "tzero help picture" -- "$TZERO" help picture

# a small section written by segyio (Debian python3-segyio), CMPs 1-10, 100 samples at 2 ms
"$PYTHON" - "$T/s.sgy" <<'EOF'
import sys
import numpy as np
import segyio
spec = segyio.spec()
spec.format, spec.samples, spec.tracecount = 5, list(range(100)), 10
with segyio.create(sys.argv[1], spec) as f:
    f.bin.update({segyio.BinField.Interval: 2000, segyio.BinField.Samples: 100})
    for i in range(10):
        f.header[i] = {segyio.TraceField.CDP: i + 1, segyio.TraceField.TRACE_SAMPLE_COUNT: 100,
                       segyio.TraceField.TRACE_SAMPLE_INTERVAL: 2000}
        f.trace[i] = np.sin(np.arange(100) * 0.2 + i).astype(np.float32)
EOF

expect_status 0 "a section draws" -- "$TZERO" picture "$T/s.sgy" --out "$T/ok.png"
expect_stdout "wrote .*ok.png \([0-9]+ x [0-9]+ px\)" "the summary names the file and size"
sig=$(od -An -tx1 -N8 "$T/ok.png" | tr -d ' \n')
if [ "$sig" = "89504e470d0a1a0a" ]; then ok "output starts with the PNG signature"; else
  notok "PNG signature: got $sig"; fi
expect_status 0 "--quiet prints nothing" -- "$TZERO" picture "$T/s.sgy" --out "$T/q.png" --quiet
if [ -s "$T/out" ]; then notok "--quiet printed output"; else ok "--quiet is quiet"; fi

expect_status 64 "no --out" -- "$TZERO" picture "$T/s.sgy"
expect_stderr "picture: --out FILE.png is required" "missing --out is explained"
expect_status 64 "two inputs" -- "$TZERO" picture "$T/s.sgy" "$T/s.sgy" --out "$T/x.png"
expect_status 66 "missing file" -- "$TZERO" picture "$T/none.sgy" --out "$T/x.png"
expect_stderr "none.sgy" "missing file is named"
expect_no_file "$T/x.png" "no PNG after a missing input"

printf 'not a seg-y file at all' >"$T/junk.sgy"
expect_status 65 "non-SEG-Y input" -- "$TZERO" picture "$T/junk.sgy" --out "$T/x.png"
expect_stderr "junk.sgy" "non-SEG-Y file is named"
expect_no_file "$T/x.png" "no PNG after a non-SEG-Y input"
head -c 5000 "$T/s.sgy" >"$T/cut.sgy"
expect_status 65 "truncated SEG-Y" -- "$TZERO" picture "$T/cut.sgy" --out "$T/x.png"
expect_stderr "cut.sgy" "truncated file is named"
expect_no_file "$T/x.png" "no PNG after a truncated input"

expect_status 64 "reversed CMP range" -- "$TZERO" picture "$T/s.sgy" --cmps 8-3 --out "$T/x.png"
expect_stderr "picture: --cmps: empty range '8-3'" "reversed range is named"
expect_status 64 "junk CMP range" -- "$TZERO" picture "$T/s.sgy" --cmps 3-x --out "$T/x.png"
expect_status 64 "time range without an end" -- "$TZERO" picture "$T/s.sgy" --time-ms 50 --out "$T/x.png"
expect_stderr "picture: --time-ms: expected T0-T1" "time range form is explained"
expect_status 64 "CMPs not in the file" -- "$TZERO" picture "$T/s.sgy" --cmps 50-60 --out "$T/x.png"
expect_stderr "no trace has a CMP in 50-60 \(the file has CMPs 1-10\)" "the file's CMP range is given"
expect_status 64 "time window past the traces" -- "$TZERO" picture "$T/s.sgy" --time-ms 500-900 --out "$T/x.png"
expect_stderr "traces cover 0-198 ms" "the file's time range is given"
expect_no_file "$T/x.png" "no PNG after a bad range"
expect_status 64 "percentile above 100" -- "$TZERO" picture "$T/s.sgy" --clip-percentile 120 --out "$T/x.png"
expect_status 64 "unknown style" -- "$TZERO" picture "$T/s.sgy" --style fancy --out "$T/x.png"
expect_status 64 "width beyond the cap" -- "$TZERO" picture "$T/s.sgy" --width 30000 --out "$T/x.png"
expect_stderr "picture: --width: 30000 px outside 1..20000" "size cap is named"
expect_status 64 "width below the minimum" -- "$TZERO" picture "$T/s.sgy" --width 50 --out "$T/x.png"
expect_stderr "width 50 px out of range" "minimum size is named"
expect_no_file "$T/x.png" "no PNG after a bad size"

expect_status 73 "output below a file, not a folder" -- "$TZERO" picture "$T/s.sgy" --out "$T/s.sgy/x.png"
expect_stderr "cannot create output: .*s\.sgy is not a folder" "uncreatable output is explained"
# missing folders of an output are created, as mkdir -p makes them (common practice)
expect_status 0 "picture in a missing folder" -- "$TZERO" picture "$T/s.sgy" --out "$T/no/such/dir/x.png"
[ -s "$T/no/such/dir/x.png" ] && ok "the folders were created" || notok "no PNG in the new folder"

expect_status 66 "missing QC report" -- "$TZERO" picture --fold "$T/none.json" --out "$T/f.png"
printf '{"format": "tzero-qc/1", "fold": {"nominal": 3}, "cmps": [{"cmp": 1, "fold": 2}]}' >"$T/qc.json"
expect_status 65 "QC report without live_fraction" -- "$TZERO" picture --fold "$T/qc.json" --out "$T/f.png"
expect_stderr 'qc.json: .*\$\.cmps\[0\]\.live_fraction: expected a number' "the JSON path is named"
printf '{"format": "tzero-qc/1", ' >"$T/cut.json"
expect_status 65 "truncated QC report" -- "$TZERO" picture --fold "$T/cut.json" --out "$T/f.png"
expect_no_file "$T/f.png" "no fold chart after a bad report"
expect_status 64 "--fold with a SEG-Y file too" -- "$TZERO" picture --fold "$T/qc.json" "$T/s.sgy" --out "$T/f.png"
printf '{"format": "tzero-qc/1", "fold": {"nominal": 3}, "cmps": [{"cmp": 1, "fold": 2, "live_fraction": 0.5}]}' >"$T/qc.json"
expect_status 0 "a fold chart draws" -- "$TZERO" picture --fold "$T/qc.json" --out "$T/f.png"
expect_stdout "fold chart" "the summary says fold chart"
