# test_reader.sh -- the SEG-Y reader as every command sees it: files as other
# writers make them (extended textual headers in rev 0 and rev 2 files, rev 2.1
# trace header extensions) give the same stack, bit for bit, as the same traces
# without them; bad IBM samples are stacked as 0; sample intervals that are
# invalid in the file and the --interval-us / "interval_us" replacement.
# Byte positions: SEG-Y rev 1 (2002) and rev 2.0 (2017) binary and trace
# headers; files rewritten with tests/data/segy/segygen.py (Python struct).
# Exit statuses: BSD sysexits(3), 65 data error.
. "$TOP/tests/e2e/lib.sh"
cd "$T" || exit 1
cat >model.json <<'JSON'
{"layers": [{"thickness_m": 60, "velocity_mps": 1600}, {"thickness_m": 80, "velocity_mps": 2100}, {"velocity_mps": 2600}]}
JSON
cat >layout.json <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 5, "channels": 12}
JSON
mkdir -p a && "$TZERO" synth --model model.json --layout layout.json --out a/sv --record-ms 300 \
  --interval-ms 2 --noise 0.02 --rms-table a/vel.csv --quiet || { notok "synth survey"; exit 1; }
for d in b c ibm0 ibmbad; do mkdir -p $d/sv; cp a/vel.csv $d/; done
printf '{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "output": {"section": "out.sgy", "report": "out.json"}}' >job.json
for d in a b c ibm0 ibmbad; do cp job.json $d/job.json; done

SEGYGEN="$TOP/tests/data/segy" "$PYTHON" - <<'PY' || notok "rewriting the shot files"
import glob, os, struct, sys
sys.path.insert(0, os.environ["SEGYGEN"])
import segygen
recs = [segygen.stanza_record(["((INVENTED: Field Notes ver 1.0))", "TARROWVANE NORTH"]),
        segygen.stanza_record(["((INVENTED: Processing Notes ver 1.0))", "NONE"], "ebcdic")]
for p in sorted(glob.glob("a/sv/*.sgy")):
    raw = open(p, "rb").read()
    name = os.path.basename(p)
    # b: rev 2.1, two extended textual records, one trace header extension
    open("b/sv/" + name, "wb").write(segygen.rewrap(raw, rev=2, minor=1, ext_records=recs,
                                                     extensions=1))
    # c: rev 0 with the extended record count filled (as some writers do)
    open("c/sv/" + name, "wb").write(segygen.rewrap(raw, rev=0, ext_records=recs))
    # IBM words: 0x7FFFFFFF (beyond the float range, a bad sample) against 0
    ns = struct.unpack(">H", raw[3220:3222])[0]
    for d, word in (("ibm0", 0), ("ibmbad", 0x7FFFFFFF)):
        b = bytearray(raw)
        if name.endswith("02.sgy"):
            for t in (0, 5):
                off = 3600 + t * (240 + 4 * ns) + 240 + 4 * 60
                b[off:off + 4] = struct.pack(">I", word)
        open(d + "/sv/" + name, "wb").write(b)
PY
for d in a b c ibm0 ibmbad; do
  (cd $d && "$TZERO" stack --job job.json --quiet) || notok "stack in $d"
done
# Bit for bit: the traces after the 3600-byte file headers of the sections
same_traces() {
  [ -s "$1" ] && [ -s "$2" ] && [ "$(wc -c <"$1")" -gt 3600 ] &&
    { cmp -s "$1" "$2" || [ "$(tail -c +3601 "$1" | cksum)" = "$(tail -c +3601 "$2" | cksum)" ]; }
}
if same_traces a/out.sgy b/out.sgy; then
  ok "stack of rev 2.1 files with 2 extended textual records and 1 trace header extension equals the stack without them, bit for bit"
else notok "rev 2.1 files with extensions stack differently"; fi
if same_traces a/out.sgy c/out.sgy; then
  ok "stack of rev 0 files whose extended record count is filled equals the stack without the records, bit for bit"
else notok "rev 0 files with extended records stack differently"; fi
if same_traces ibm0/out.sgy ibmbad/out.sgy; then
  ok "IBM samples 0x7FFFFFFF are stacked as 0 (the section equals the one with those samples 0)"
else notok "IBM 0x7FFFFFFF samples changed the section"; fi
grep -Eq '"bad_samples":[[:space:]]*2' ibmbad/out.json && ok "the report counts the 2 IBM samples beyond the float range" ||
  notok "report lacks bad_samples 2"
"$PYTHON" -c 'import struct,sys; b=open(sys.argv[1],"rb").read(); sys.exit(any(abs(v)>1e30 for (v,) in struct.iter_unpack(">f", b[3600+240:3600+240+4*151])))' ibmbad/out.sgy &&
  ok "no huge value in the section's first trace" || notok "a huge value reached the section"

# The other commands read the same way: geometry, nmo, semblance, cvs
for d in a b c; do
  (cd $d && "$TZERO" geometry --job job.json >geom.txt 2>geom.err) || notok "geometry in $d"
done
[ -s a/geom.txt ] && cmp -s a/geom.txt b/geom.txt && cmp -s a/geom.txt c/geom.txt && ok "geometry prints the same for the three readings" ||
  notok "geometry differs between the readings"
for d in a b; do
  (cd $d && "$TZERO" nmo --job job.json --cmps 10-12 --out nmo.sgy --quiet &&
    "$TZERO" cvs --job job.json --cmps 10-12 --velocities 1800,2200 --out cvs.sgy --quiet &&
    "$TZERO" semblance --job job.json --cmps 10-12 --panels semb.sgy --quiet &&
    "$TZERO" semblance --job job.json --cmps 11 --supergather 2 --min-fold 1 --min-semblance 0.05 \
      --out semb.csv --quiet) || notok "nmo/cvs/semblance in $d"
done
same_traces a/nmo.sgy b/nmo.sgy && ok "nmo gathers equal, bit for bit" || notok "nmo gathers differ"
same_traces a/cvs.sgy b/cvs.sgy && ok "constant-velocity stacks equal, bit for bit" || notok "cvs differ"
same_traces a/semb.sgy b/semb.sgy && ok "semblance panels equal, bit for bit" || notok "semblance panels differ"
[ -s a/semb.csv ] && cmp -s a/semb.csv b/semb.csv && ok "semblance picks equal" || notok "semblance picks differ"

# inspect on a rev 2.1 file with an extension shows it
F=$(ls b/sv/*.sgy | head -n 1)
expect_status 0 "inspect a rev 2.1 file with extensions" -- "$TZERO" inspect --headers 2 "$F"
expect_stdout "^  revision: 2\.1 " "revision 2.1"
expect_stdout "1 header extensions per trace, count from bytes 3507-3508" "extension count and where it was read"
expect_stdout "^  stanza: \(\(INVENTED: Field Notes ver 1\.0\)\) in extended textual header record 1$" "stanza names listed"
expect_stdout "^  trace 2, extension 1 \(SEG00001\):$" "extension 1 of trace 2 shown"
expect_stdout "^    ext_source_x +97-104 +1001\.5$" "extension 1 field decoded (source X, f64 at 97-104)"
expect_stdout "^    header_blocks +157-158 +1$" "extension 1 block count (157-158)"
expect_status 0 "inspect --json --headers" -- "$TZERO" inspect --json --headers 1 "$F"
"$PYTHON" -c 'import json,sys; f=json.load(open(sys.argv[1]))["files"][0]; e=f["headers"][0]["extensions"][0]; sys.exit(not (e["name"]=="SEG00001" and e["fields"]["ext_line_seq"]==1 and e["fields"]["ext_samples"]==151 and f["trace_header_extensions_from"]=="3507-3508"))' "$T/out" &&
  ok "--json: extension 1 fields by name" || notok "--json extension fields"
F0=$(ls c/sv/*.sgy | head -n 1)
expect_status 0 "inspect a rev 0 file with extended records" -- "$TZERO" inspect "$F0"
expect_stdout "revision 0 file with 2 extended textual header records" "rev 0 reading reported as an anomaly"
expect_stdout "^  textual header: EBCDIC, 2 extended records$" "the 2 records skipped"

# Sample intervals negative as signed 16-bit values (SEG-Y rev 1: 3217-3218 and
# 117-118 are i16): invalid, never read as 63536 us.
"$PYTHON" - <<'PY'
import struct
raw = bytearray(open("a/sv/shot_000001.sgy", "rb").read())
ns = struct.unpack(">H", raw[3220:3222])[0]
raw[3216:3218] = struct.pack(">h", -2000)
open("neg_bin.sgy", "wb").write(raw)
for t in range(len(raw[3600:]) // (240 + 4 * ns)):
    off = 3600 + t * (240 + 4 * ns)
    raw[off + 116:off + 118] = struct.pack(">h", -2000)
open("neg_both.sgy", "wb").write(raw)
PY
expect_status 0 "binary interval -2000, trace headers valid" -- "$TZERO" inspect neg_bin.sgy
expect_stdout "^  sample interval: 2000 us \(first trace header 117-118\)$" "the trace header's interval used"
expect_stdout "sample interval 63536 us \(bytes 3217-3218\) is invalid \(-2000 as a signed 16-bit value\)" "the invalid value said"
expect_status 65 "binary and trace intervals both -2000" -- "$TZERO" inspect neg_both.sgy
expect_stderr "neg_both.sgy: trace 1: byte 3716: no valid sample interval: the binary header \(bytes 3217-3218\) gives 63536 \(invalid: -2000 as a signed 16-bit value\)" "65 naming the bytes and the value"
expect_status 0 "--interval-us gives it" -- "$TZERO" inspect --interval-us 2000 neg_both.sgy
expect_stdout "^  sample interval: 2000 us \(given\)$" "the given interval used"
expect_status 64 "--interval-us 0" -- "$TZERO" inspect --interval-us 0 neg_both.sgy
mkdir -p neg/sv && for f in a/sv/*.sgy; do cp "$f" neg/sv/; done
"$PYTHON" - <<'PY'
import glob, struct
for p in glob.glob("neg/sv/*.sgy"):
    raw = bytearray(open(p, "rb").read())
    ns = struct.unpack(">H", raw[3220:3222])[0]
    raw[3216:3218] = struct.pack(">h", -2000)
    for t in range(len(raw[3600:]) // (240 + 4 * ns)):
        off = 3600 + t * (240 + 4 * ns)
        raw[off + 116:off + 118] = struct.pack(">h", -2000)
    open(p, "wb").write(raw)
PY
cp a/vel.csv neg/ && cp job.json neg/job.json
expect_status 65 "stack of files without a valid interval" -- sh -c 'cd neg && "$TZERO" stack --job job.json --quiet'
expect_stderr "no valid sample interval" "stack names the missing interval"
printf '{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "interval_us": 2000, "output": {"section": "out.sgy"}}' >neg/job2.json
expect_status 0 "stack with the job key interval_us" -- sh -c 'cd neg && "$TZERO" stack --job job2.json --quiet'
same_traces a/out.sgy neg/out.sgy && ok "the stack with interval_us equals the original, bit for bit" ||
  notok "interval_us stack differs"
printf '{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "interval_us": -5}' >neg/job3.json
expect_status 65 "interval_us out of range" -- sh -c 'cd neg && "$TZERO" stack --job job3.json --out x.sgy'
expect_stderr '\$\.interval_us' "the job key is named"

# Format 4 (SEG-Y rev 0 fixed point with gain): refused, clearly
"$PYTHON" -c 'import sys; b=bytearray(open("a/sv/shot_000001.sgy","rb").read()); b[3224:3226]=(4).to_bytes(2,"big"); open("f4.sgy","wb").write(b)'
expect_status 65 "format 4" -- "$TZERO" inspect f4.sgy
expect_stderr "f4.sgy: byte 3224: unknown sample format code 4 \(bytes 3225-3226\): the obsolete 4-byte fixed point with gain" "format 4 message"

# Header maps with positions whose end overflows int, or numbers beyond int's
# range, crashed the decoder (segmentation fault); now 65 naming the field and
# the allowed range, through every door: inspect, geometry and a job.
for b in 2147483647 2147483646 2147483645 7.7e110; do
  printf '{"cmp": {"byte": %s, "width": 4}}' "$b" >map_$b.json
  expect_status 65 "inspect --header-map byte $b" -- "$TZERO" inspect --header-map map_$b.json a/sv/shot_000001.sgy
  expect_stderr "map_$b.json: header map: \\\$\.cmp\.byte: must be 1\.\.237 for width 4" "field and allowed range named ($b)"
  expect_status 65 "geometry --header-map byte $b" -- "$TZERO" geometry --header-map map_$b.json a/sv/shot_000001.sgy
  printf '{"shots": ["a/sv/*.sgy"], "velocity": "a/vel.csv", "header_map": "map_%s.json", "output": {"section": "never.sgy"}}' "$b" >mapjob.json
  expect_status 65 "job header_map byte $b" -- "$TZERO" stack --job mapjob.json --quiet
  expect_no_file never.sgy "no section written ($b)"
done

# A file of headers only: --samples all prints nothing and exits 0 (it was 64,
# "no such trace", found by mutating the layout seeds)
head -c 3600 a/sv/shot_000001.sgy >headers_only.sgy
expect_status 0 "--samples all of a file without traces" -- "$TZERO" inspect --quiet --samples all headers_only.sgy
expect_stdout "headers_only.sgy: 0 traces" "zero traces reported"
