# test_fieldline.sh -- what a user sees on a field-style line (issue 17): split spread
# 24-gap-24 at 35 degrees, GPS scatter, a misfire, an unused record number, dead, all-zero
# and noisy traces, 0.5 ms sampling, written with segyio by tests/xcheck/fieldline.py
# (independent of tzero). Figures the generator made: receiver interval 5 m, source
# interval 10 m; the trace positions of its DEAD, ZERO and NOISY constants.
. "$TOP/tests/e2e/lib.sh"
D="$T/field"
PYTHONPATH="$TOP/tests/xcheck" "$PYTHON" -c 'import sys, fieldline; fieldline.write_shots(sys.argv[1]); fieldline.write_sps(sys.argv[1])' "$D" ||
  { notok "field line"; exit 1; }

# Geometry QC: the receiver interval, measured along the line, and the missing shots.
expect_status 0 "geometry on the field line" -- "$TZERO" geometry "$D"/shots/*.sgy
expect_stdout "receiver interval 5\.000 m; source interval 10\.000 m" \
  "receiver interval 5.000 m (not lengthened by the cross-line scatter)"
expect_stdout "measured: median along-line receiver step 5\.0[0-2][0-9]+ m" "the measured step is shown"
expect_stdout "^missing shots: 2 in 2 gaps" "missing shots counted"
expect_stdout "after record 11 \(source point 1047 .*before record 12 \(source point 1051.*seen in the source point, source position" \
  "the misfire is placed between records 11 and 12"
expect_stdout "after record 21 .*before record 23 .*seen in the record number$" \
  "the unused record number 22 is found"

# inspect names the all-zero and noisy traces.
expect_status 0 "inspect a record with a dead trace" -- "$TZERO" inspect "$D/shots/rec_005.sgy"
expect_stdout "trace 10: record 5 channel 10 \(coded dead\)" "the dead trace is named"
expect_status 0 "inspect a record with an all-zero live trace" -- "$TZERO" inspect "$D/shots/rec_008.sgy"
expect_stdout "all-zero traces: 1:" "all-zero traces counted"
expect_stdout "trace 30: record 8 channel 30$" "the all-zero trace is named"
expect_status 0 "inspect a record with a noisy trace" -- "$TZERO" inspect --json "$D/shots/rec_012.sgy"
if "$PYTHON" -c 'import json,sys; f=json.load(open(sys.argv[1]))["files"][0]; n=f["noisy"]; sys.exit(0 if f["noisy_traces"] == 1 and n[0]["channel"] == 40 and n[0]["rms_over_record_median"] > 10 else 1)' "$T/out"; then
  ok "the noisy trace is flagged with its RMS over the record's median"
else notok "noisy trace in inspect --json"; fi

# SPS revision 2.1 files (SEG Technical Standards Committee, 2006), written by
# fieldline.write_sps from the published column layout: what matched, what did not.
S="$D/line.s"; R="$D/line.r"; X="$D/line.x"
expect_status 0 "geometry --sps S,R,X" -- "$TZERO" geometry --sps "$S,$R,$X" "$D"/shots/*.sgy
expect_stdout "^geometry from SPS; 29 files, 1392 traces" "geometry from SPS"
expect_stdout "30 source points \(29 in matched relations\).* 58 relation records \(58 matched\): 1392 channels placed" \
  "what matched is printed"
expect_stdout "unmatched records: 4" "unmatched records counted"
expect_stdout "line.s line 14 \(source record\): source line 4711 point 1049.00 index 1: in no matched relation record" \
  "the misfired source point is listed with its file and line"
expect_stdout "line.r line [0-9]+ \(receiver record\): receiver line 9999 point 1.00" "a stray receiver point is listed"
expect_stdout "receiver interval 5\.000 m" "receiver interval from the SPS positions"

# Malformed records: exit 65 naming the file, the line and the column.
"$PYTHON" - "$D" <<'PY'
import sys
d = sys.argv[1]
s = open(f"{d}/line.s").read().split("\n")
s[3] = s[3][:46] + "51x074.6 " + s[3][55:]          # easting, columns 47-55
open(f"{d}/bad.s", "w").write("\n".join(s))
x0 = open(f"{d}/line.x").read().split("\n")
x = list(x0)
x[4] = x[4][:38] + "   48    1" + x[4][48:]          # from channel 48 to channel 1
open(f"{d}/bad.x", "w").write("\n".join(x))
r = open(f"{d}/line.r").read().split("\n")
open(f"{d}/dup.r", "w").write("\n".join(r + [r[5]]) + "\n")
open(f"{d}/short.x", "w").write("\n".join(l for l in x0 if not l.startswith("X T0001       1")))
PY
expect_status 65 "a malformed easting" -- "$TZERO" geometry --sps "$D/bad.s,$R,$X" "$D"/shots/*.sgy
expect_stderr "bad.s: line 4: columns 47-55 \(map grid easting\): '51x074.6' is not a number" \
  "the message names the file, line and columns"
expect_status 65 "channels running backwards" -- "$TZERO" geometry --sps "$S,$R,$D/bad.x" "$D"/shots/*.sgy
expect_stderr "bad.x: line 5: columns 39-49 \(from channel 48, to channel 1, channel increment 1\): the channels must run up" \
  "the relation record's columns are named"
expect_status 65 "a receiver point given twice" -- "$TZERO" geometry --sps "$S,$D/dup.r,$X" "$D"/shots/*.sgy
expect_stderr "dup.r: line [0-9]+: line 4711 point 1004.00 index 1 is already given on line 6" \
  "the duplicate names both lines"
expect_status 65 "the R file given as the S file" -- "$TZERO" geometry --sps "$R,$R,$X" "$D"/shots/*.sgy
expect_stderr "line.r: line 3: column 1 \(record identifier\): 'R' is not 'S'" "a wrong file is named"
expect_status 65 "a record with no relation" -- "$TZERO" geometry --sps "$S,$R,$D/short.x" "$D"/shots/*.sgy
expect_stderr "rec_001.sgy: trace 1: field record 1 channel 1: not in geometry table .*short.x" \
  "a trace without a relation record is named"
expect_status 64 "--sps with two files" -- "$TZERO" geometry --sps "$S,$R" "$D"/shots/*.sgy

# The job form, shared by tzero geometry and tzero stack.
printf 'cmp,time_ms,velocity_mps\n1,0,1800\n1,220,2000\n1,330,2300\n' > "$D/v.csv"
cat > "$D/job.json" <<'JOB'
{ "shots": ["shots/*.sgy"],
  "geometry": {"sps": {"source": "line.s", "receiver": "line.r", "relation": "line.x"}},
  "velocity": "v.csv",
  "output": {"section": "out/stack.sgy", "report": "out/qc.json"} }
JOB
expect_status 0 "geometry --job with an SPS geometry" -- "$TZERO" geometry --job "$D/job.json"
expect_stdout "^geometry from SPS" "the job's SPS files are used"
expect_status 0 "stack --job with an SPS geometry" -- "$TZERO" stack --quiet --job "$D/job.json"
if "$PYTHON" -c 'import json,sys; q=json.load(open(sys.argv[1])); g=q["geometry"]; sys.exit(0 if g["source"] == "sps" and g["receiver_interval_m"] == 5 else 1)' "$D/out/qc.json"; then
  ok "the QC report says the geometry came from SPS files"
else notok "QC report geometry source"; fi
if "$PYTHON" -c 'import json,sys; m=json.load(open(sys.argv[1]))["geometry"]["missing_shots"]; g=m["gaps"]; sys.exit(0 if m["count"] == 2 and g[0]["record_before"] == 11 and g[0]["in_source_positions"] and g[1]["record_after"] == 23 and g[1]["in_record_numbers"] else 1)' "$D/out/qc.json"; then
  ok "the QC report lists the missing shots and where they are"
else notok "QC report missing shots"; fi
sed 's/"relation": "line.x"/"relatoin": "line.x"/' "$D/job.json" > "$D/typo.json"
expect_status 65 "a misspelt SPS key" -- "$TZERO" stack --job "$D/typo.json"
expect_stderr "geometry.sps.*relatoin.*relation" "the nearest key is suggested"

# Crooked processing lines in the job, shared by stack, nmo, semblance, cvs and statics:
# a node file (bins.crooked: FILE, as tzero geometry --crooked reads) and an automatic
# line through the midpoints (bins.crooked: {"smoothing_m": M}). Stations at the default
# interval (the receiver interval, 5 m): the line starts at a midpoint, half a station from
# the receivers, and the station grid is anchored on the receivers so that two scattered
# receivers 4.9 m apart are two stations (tests/xcheck/test_fieldline_stations.py checks the
# numbers against NumPy).
B="$T/bent"
PYTHONPATH="$TOP/tests/xcheck" "$PYTHON" -c 'import sys, fieldline; fieldline.write_shots(sys.argv[1], bend=40.0)' "$B" ||
  { notok "bent line"; exit 1; }
printf 'cmp,time_ms,velocity_mps\n1,0,1800\n1,220,2000\n1,330,2300\n' > "$B/v.csv"
for form in auto nodes; do
  if [ $form = auto ]; then CR='{"smoothing_m": 100}'; else CR='"nodes.csv"'; fi
  cat > "$B/$form.json" <<JOB
{ "shots": ["shots/*.sgy"], "velocity": "v.csv",
  "bins": {"crooked": $CR},
  "statics": {"datum_m": 100, "replacement_velocity_mps": 2000},
  "output": {"section": "out/$form.sgy", "report": "out/$form.json"} }
JOB
  if [ $form = auto ]; then
    expect_status 0 "geometry --job, automatic crooked line" -- "$TZERO" geometry --json --job "$B/auto.json"
    "$PYTHON" -c 'import json,sys; n=json.load(open(sys.argv[1]))["line"]["nodes"]; print("x_m,y_m"); [print(f"{x!r},{y!r}") for x, y in n]' "$T/out" > "$B/nodes.csv"
  fi
  expect_status 0 "stack --job, crooked line ($form)" -- "$TZERO" stack --quiet --job "$B/$form.json"
  if "$PYTHON" -c 'import json,sys; l=json.load(open(sys.argv[1]))["geometry"]["line"]; sys.exit(0 if l["kind"] == "crooked" and l["nodes"] > 10 else 1)' "$B/out/$form.json"; then
    ok "the QC report names the crooked line ($form)"; else notok "QC report line kind ($form)"; fi
  expect_status 0 "nmo --job on the crooked line ($form)" -- "$TZERO" nmo --job "$B/$form.json" --cmps 90 --out "$B/out/nmo_$form.sgy"
  expect_status 0 "semblance --job on the crooked line ($form)" -- "$TZERO" semblance --job "$B/$form.json" --cmps 90 --out "$B/out/picks_$form.csv"
  expect_status 0 "cvs --job on the crooked line ($form)" -- "$TZERO" cvs --job "$B/$form.json" --cmps 80-100 --velocities 1800,2000 --out "$B/out/cvs_$form.sgy"
  expect_status 0 "statics elevation --job on the crooked line ($form)" -- "$TZERO" statics elevation --job "$B/$form.json" --out "$B/out/elev_$form.csv"
  expect_stdout "^stations +29 source, 109 receiver \(interval 5 m\)" \
    "one station per field station: the generator's 29 shot and 109 receiver stations ($form)"
done
# Refraction and residual statics on the scattered, bent line at the default interval.
expect_status 0 "firstbreaks --job on the crooked line" -- "$TZERO" firstbreaks --job "$B/auto.json" --out "$B/out/picks.csv" --quiet
expect_status 0 "statics refraction on the crooked line, 5 m stations" -- "$TZERO" statics refraction \
  --job "$B/auto.json" --picks "$B/out/picks.csv" --out "$B/out/refr.csv" --datum-m 100 --replacement-velocity 2000
expect_stdout "refr.csv: 138 stations" "29 source and 109 receiver stations in the refraction table"
expect_status 0 "statics residual on the crooked line, 5 m stations" -- "$TZERO" statics residual \
  --job "$B/auto.json" --out "$B/out/res.csv" --window-ms 80,380 --iterations 1
expect_stdout "29 sources and 109 receivers from" "residual statics for every field station"
if cmp -s "$B/out/auto.sgy" "$B/out/nodes.sgy"; then
  ok "the node file of the automatic line stacks the same section"
else notok "automatic line and its node file give different sections"; fi
sed 's/"bins": {"crooked"/"bins": {"azimuth_deg": 35, "origin_x_m": 0, "origin_y_m": 0, "crooked"/' "$B/auto.json" > "$B/both.json"
expect_status 65 "a crooked line and a straight one" -- "$TZERO" stack --job "$B/both.json"
expect_stderr "bins.crooked: a crooked line replaces origin_x_m" "the clash is named"

# Units: a line in feet (binary header bytes 3255-3256 = 2, SEG-Y rev 1) is processed
# in feet; a job or a file in the other unit is a clear error.
F="$T/feet"
PYTHONPATH="$TOP/tests/xcheck" "$PYTHON" -c 'import sys, fieldline; fieldline.write_shots(sys.argv[1], feet=True, x0=150000.0, y0=450000.0)' "$F" ||
  { notok "feet line"; exit 1; }
expect_status 0 "geometry on a line in feet" -- "$TZERO" geometry "$F"/shots/*.sgy
expect_stdout "^units: feet \(from the binary header\); lengths in ft, velocities in ft/s" "the unit is said"
expect_stdout "receiver interval 16\.4[0-9]+ ft" "the receiver interval in feet (5 m = 16.40 ft)"
expect_status 65 "geometry --units metres on files in feet" -- "$TZERO" geometry --units metres "$F"/shots/*.sgy
expect_stderr "rec_001.sgy: byte 3254: binary header bytes 3255-3256 give measurement system 2 \(feet\), but the line's units are set to metres" \
  "the clash names the file, the bytes and both units"
cp "$F/shots/rec_030.sgy" "$D/shots/rec_030.sgy"
expect_status 65 "one file in feet among files in metres" -- "$TZERO" geometry "$D"/shots/*.sgy
expect_stderr "rec_030.sgy: byte 3254: .*measurement system 2 \(feet\), but .*rec_001.sgy gives 1 \(metres\): the files mix units" \
  "mixed files are named"
rm -f "$D/shots/rec_030.sgy"

# A live trace whose header coordinates are refused is named in the first header pass
# (exit 65), not silently left out of the line's fit ("cannot fit ... 0 traces"):
# coordinate units 3 (degrees; SEG-Y rev 1 trace header bytes 89-90) on every trace.
A="$T/angles"
mkdir -p "$A" && cp -r "$D/shots" "$A/" && cp "$D/v.csv" "$A/"
"$PYTHON" - "$A" <<'PY'
import glob, sys
import segyio
for p in sorted(glob.glob(sys.argv[1] + "/shots/*.sgy")):
    with segyio.open(p, "r+", ignore_geometry=True) as f:
        for i in range(f.tracecount):
            f.header[i][segyio.TraceField.CoordinateUnits] = 3
PY
printf '{ "shots": ["shots/*.sgy"], "velocity": "v.csv", "statics": {"datum_m": 100, "replacement_velocity_mps": 2000},\n  "output": {"section": "out/s.sgy", "report": "out/q.json"} }\n' > "$A/job.json"
expect_status 65 "stack --job with coordinates in degrees" -- "$TZERO" stack --job "$A/job.json"
expect_stderr "rec_001.sgy: trace 1: byte 88: coordinate units 3 \(angles, not lengths\)" \
  "the first refused trace is named with its file, trace, byte and value"
expect_no_file "$A/out/s.sgy" "no section written"
expect_status 65 "statics elevation --job with coordinates in degrees" -- "$TZERO" statics elevation \
  --job "$A/job.json" --out "$A/e.csv"
expect_stderr "rec_001.sgy: trace 1: byte 88: coordinate units 3" "statics names the trace too"
