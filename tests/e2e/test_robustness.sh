# test_robustness.sh -- bad input of every kind against the rules of DEVELOPERS.md (conventions, bad input):
# a one-line message naming the file (and line, trace or byte where one applies),
# the <sysexits.h> status (BSD sysexits(3): 64 usage, 65 data, 66 no input,
# 73 cannot create, 74 I/O) and no output left behind, not even a hidden
# temporary file. Each case here was a defect once; the comment says how it failed.
# The survey is tiny and written by `tzero synth`; the defects are made with
# python3 byte edits (SEG-Y rev 1 (2002) byte positions).
. "$TOP/tests/e2e/lib.sh"
cd "$T" || exit 1
cat >model.json <<'JSON'
{"layers": [{"thickness_m": 50, "velocity_mps": 1500}, {"velocity_mps": 2200}]}
JSON
cat >layout.json <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 4, "channels": 8}
JSON
"$TZERO" synth --model model.json --layout layout.json --out sv --record-ms 200 \
  --interval-ms 2 --rms-table vel.csv --quiet || { notok "synth survey"; exit 1; }
cat >job.json <<'JSON'
{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "output": {"section": "out.sgy"}}
JSON
# no_leftovers DESC: nothing but the inputs in $T (no output, no .NAME.tmp-*)
no_leftovers() {
  extra=$(ls -A | grep -Ev '^(model\.json|layout\.json|sv|vel\.csv|job\.json|in|out|err)$' | tr '\n' ' ')
  if [ -z "$extra" ]; then ok "$1: no output left"; else notok "$1: left $extra"; fi
}
mkdir in

# --- a folder given where a file is expected was an I/O error (74, "read failed:
# Is a directory"): fopen() opens folders on Linux, the read fails. It is a
# missing input (66). Common practice (sysexits(3): EX_NOINPUT).
expect_status 66 "velocity table that is a folder" -- "$TZERO" velocity check sv
expect_stderr "sv: is a folder" "message names the folder"
expect_status 66 "job file that is a folder" -- "$TZERO" stack --job sv --out x.sgy
expect_status 66 "geometry table that is a folder" -- "$TZERO" geometry --table sv sv/shot_000001.sgy
expect_status 66 "layout that is a folder" -- "$TZERO" geometry --layout sv sv/shot_000001.sgy
# an endless input (a device) was read without limit into memory; it is now
# refused before any read as not a regular file (66)
expect_status 66 "table from an endless device is refused" -- \
  "$TZERO" velocity check /dev/zero
expect_stderr "/dev/zero: not a regular file" "message names the device"
no_leftovers "folders and devices as inputs"

# --- a successful velocity load left its path in the error record, so a later
# failure (here: a CMP range too long for one section) was reported under the
# velocity file's name.
cat >range.json <<'JSON'
{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "selection": {"cmp_first": 1, "cmp_last": 999999999},
 "output": {"section": "x.sgy"}}
JSON
expect_status 65 "CMP range too long for one section" -- "$TZERO" stack --job range.json --quiet
if grep -q 'vel\.csv' "$T/err"; then notok "error is not blamed on the velocity table"
else ok "error is not blamed on the velocity table"; fi
rm -f range.json
no_leftovers "CMP range"

# --- a job naming a velocity table that does not exist yet was refused by every
# command (66), which broke the usual first run: semblance writes that table.
# Commands that do not read it accept the job; stack and nmo still need it.
cat >first.json <<'JSON'
{"shots": ["sv/*.sgy"], "velocity": "later.csv", "output": {"section": "x.sgy"}}
JSON
expect_status 0 "semblance with the job's velocity table not written yet" -- \
  "$TZERO" semblance --job first.json --cmps 8 --min-fold 2 --out later.csv --quiet
[ -s later.csv ] && ok "semblance wrote the table the job names" || notok "no later.csv"
rm -f later.csv
expect_status 0 "cvs with the job's velocity table not written yet" -- \
  "$TZERO" cvs --job first.json --cmps 6-10 --velocities 1500,2000 --out cvs.sgy --quiet
rm -f cvs.sgy
expect_status 0 "geometry with the job's velocity table not written yet" -- \
  "$TZERO" geometry --job first.json --quiet
expect_status 66 "stack still needs the velocity table" -- "$TZERO" stack --job first.json --quiet
expect_stderr "first\.json: .*\\\$\.velocity: cannot open '.*later\.csv'" "message names the job, key and file"
expect_status 66 "nmo still needs the velocity table" -- "$TZERO" nmo --job first.json --cmps 8 \
  --out g.sgy --quiet
expect_stderr "\\\$\.velocity: cannot open" "nmo message names the key"
rm -f first.json
no_leftovers "velocity table not written yet"

# --- an output naming an input replaced it: outputs are renamed into place, so
# `stack --out sv/shot_000001.sgy` destroyed a shot record (exit 0) and
# `--report job.json` the job. Refused as "cannot create output" (73).
cp sv/shot_000001.sgy in/keep.sgy
cp job.json in/job.json
cp vel.csv in/vel.csv
expect_status 73 "stack section onto a shot file" -- "$TZERO" stack --job job.json \
  --out sv/shot_000001.sgy --quiet
expect_stderr "would overwrite the input .*shot_000001\.sgy" "message names the input"
cmp -s sv/shot_000001.sgy in/keep.sgy && ok "the shot file is intact" || notok "shot file changed"
expect_status 73 "stack section onto the velocity table" -- "$TZERO" stack --job job.json \
  --out vel.csv --quiet
expect_status 73 "stack report onto the job file" -- "$TZERO" stack --job job.json \
  --out x.sgy --report job.json --quiet
expect_status 73 "stack report and section the same file" -- "$TZERO" stack --job job.json \
  --out x.sgy --report x.sgy --quiet
expect_status 73 "nmo gathers onto a shot file" -- "$TZERO" nmo --job job.json --cmps 8 \
  --out sv/shot_000002.sgy --quiet
expect_status 73 "cvs panels onto a shot file" -- "$TZERO" cvs --job job.json --cmps 6-10 \
  --velocities 1500 --out sv/shot_000002.sgy --quiet
expect_status 73 "semblance table onto the job file" -- "$TZERO" semblance --job job.json \
  --cmps 8 --out job.json --quiet
expect_status 73 "velocity intervals onto its input" -- "$TZERO" velocity intervals vel.csv \
  --out vel.csv
expect_status 73 "geometry --write into the shot folder" -- "$TZERO" geometry --write sv \
  sv/shot_000001.sgy --quiet
expect_status 73 "compare --csv onto a compared file" -- "$TZERO" compare sv/shot_000001.sgy \
  sv/shot_000002.sgy --csv sv/shot_000001.sgy --quiet
expect_status 73 "geometry --fold-table onto a shot file" -- "$TZERO" geometry \
  --fold-table sv/shot_000001.sgy sv/shot_000001.sgy sv/shot_000002.sgy --quiet
cp layout.json in/layout.json
expect_status 73 "synth --rms-table onto its layout" -- "$TZERO" synth --model model.json \
  --layout layout.json --out sv2 --rms-table layout.json --quiet
cmp -s sv/shot_000001.sgy in/keep.sgy && cmp -s job.json in/job.json && cmp -s vel.csv in/vel.csv &&
  cmp -s layout.json in/layout.json && ok "every input is intact" || notok "an input changed"
# semblance writing the velocity table its job names is the usual revision loop
expect_status 0 "semblance may rewrite the job's velocity table" -- "$TZERO" semblance \
  --job job.json --cmps 8 --min-fold 2 --out vel.csv --quiet
cp in/vel.csv vel.csv
no_leftovers "outputs onto inputs"

# --- layout and geometry-table distances had no bounds: a receiver interval of
# 1e-300 m or a station at 1e300 m reached the SEG-Y writer, which failed with
# "invalid argument" (64) naming a hidden temporary folder; a table coordinate of
# 1e300 m passed and failed later without naming the table. Now the file and key
# (or line and column) are named, status 65.
bad_layout() { # desc json-extra
  printf '{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 2, "channels": 4%s}' \
    "$2" >badlay.json
  expect_status 65 "layout: $1" -- "$TZERO" synth --model model.json --layout badlay.json \
    --out bsv --quiet
  expect_stderr "^tzero synth: badlay\.json: " "layout: $1: message names the layout"
}
bad_layout "station 0 at 1e300 m" ', "first_station_x_m": 1e300'
bad_layout "receiver interval 1e-300 m" ', "receiver_interval_m": 1e-300'
bad_layout "near offset 1e12 m" ', "near_offset_m": 1e12'
bad_layout "station elevation 1e300 m" ', "station_elevations_m": [0, 1e300]'
bad_layout "negative channels_behind" ', "spread": "split", "channels_behind": -1'
rm -f badlay.json
{ echo "field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m"
  for c in 1 2 3 4 5 6 7 8; do echo "1,$c,0,0,1e300,0"; done; } >badtab.csv
expect_status 65 "geometry table coordinate 1e300 m" -- "$TZERO" geometry --table badtab.csv \
  sv/shot_000001.sgy --quiet
expect_stderr "badtab\.csv: line 2: column receiver_x_m" "message names table, line and column"
rm -f badtab.csv
no_leftovers "layout and table distances"

# --- a QC report with a damaged figure (a string, null or a missing CMP key)
# was printed with "nan" in its place (exit 0), and `report --fold-csv` onto the
# report replaced it. The reader now names the key (65); the CSV is refused (73).
"$TZERO" stack --job job.json --out sec.sgy --report qc.json --quiet
damage() { # name python-statement
  "$PYTHON" -c "import json; r = json.load(open('qc.json')); $2; json.dump(r, open('$1', 'w'))"
}
damage bad1.json "r['cmps'][2]['fold'] = 'x'"
expect_status 65 "report with a string fold" -- "$TZERO" report bad1.json
expect_stderr 'bad1\.json: \$\.cmps\[2\]\.fold: expected a number' "message names the CMP entry"
damage bad2.json "r['fold']['mean'] = None"
expect_status 65 "report with a null mean fold" -- "$TZERO" report bad2.json
expect_stderr '\$\.fold\.mean' "message names the key"
damage bad3.json "r['cmps'][0] = {}"
expect_status 65 "report with an empty CMP entry" -- "$TZERO" report bad3.json --cmp 1
cp qc.json in/qc.json
expect_status 73 "fold CSV onto the report it reads" -- "$TZERO" report qc.json --fold-csv qc.json
cmp -s qc.json in/qc.json && ok "the report is intact" || notok "the report changed"
rm -f sec.sgy qc.json qc.html bad1.json bad2.json bad3.json
no_leftovers "damaged reports"

# --- a section size driven by the data had no cap: two shots 1000 km apart
# with 65535 samples asked for 1000002 CMPs x 65535 samples (1 TB of sums) and
# the run died "out of memory" (71) or, with overcommit, wrote a 262 GB file.
# Refused before allocating (65), naming the job.
printf '{"receiver_interval_m": 1, "source_interval_m": 500000, "shot_count": 2, "channels": 2}' \
  >far.json
"$TZERO" synth --model model.json --layout far.json --out far --samples 65535 --interval-ms 1 \
  --no-reflections --no-direct --no-head-wave --quiet
printf '{"shots": ["far/*.sgy"], "velocity": "vel.csv", "output": {"section": "x.sgy"}}' >farjob.json
expect_status 65 "section too large for memory is refused" -- "$TZERO" stack --job farjob.json --quiet
expect_stderr "farjob\.json: CMPs 1 to 1000002 x 65535 samples: a section of more than" \
  "message names the job and the size"
rm -rf far far.json farjob.json
no_leftovers "section size cap"

# --- a crooked-line file with a repeated node was "invalid argument" (64)
# without the file's name: it is bad data in that file (65, file and line).
printf 'x_m,y_m\n0,0\n20,0\n20,0\n40,5\n' >crooked.csv
expect_status 65 "crooked line with a repeated node" -- "$TZERO" geometry --crooked crooked.csv \
  sv/shot_000001.sgy --quiet
expect_stderr "crooked\.csv: line 4: node repeats" "message names file and line"
rm -f crooked.csv
no_leftovers "crooked line"

# --- the survey folder of `tzero synth` kept mkdtemp(3)'s mode 0700, so other
# users could not read a survey made for them; it now follows the umask as the
# files inside do (common practice).
(umask 022 && "$TZERO" synth --model model.json --layout layout.json --out modes --quiet)
m=$(stat -c %a modes 2>/dev/null)
[ "$m" = 755 ] && ok "survey folder mode follows the umask (755)" || notok "survey folder mode $m"
rm -rf modes
no_leftovers "survey folder mode"

# --- `stack --cmp-range 1-999999999` said only "expected FIRST-LAST" although
# the syntax was right; the message now gives the limit that was hit.
expect_status 64 "CMP range longer than a section may be" -- "$TZERO" stack --job job.json \
  --cmp-range 1-999999999 --out x.sgy --quiet
expect_stderr "more than [0-9]+ CMPs" "message gives the limit"
no_leftovers "long CMP range option"

# --- `picture SECTION --out SECTION` wrote the PNG over the section (exit 0).
"$TZERO" stack --job job.json --out sec.sgy --report qc.json --quiet
cp sec.sgy in/sec.sgy
expect_status 73 "picture onto the section it draws" -- "$TZERO" picture sec.sgy --out sec.sgy --quiet
expect_status 73 "fold picture onto the report it draws" -- "$TZERO" picture --fold qc.json \
  --out qc.json --quiet
cmp -s sec.sgy in/sec.sgy && ok "the section is intact" || notok "the section changed"
rm -f sec.sgy qc.json qc.html
no_leftovers "pictures onto inputs"

# --- an output path that is a folder failed only at the final rename ("cannot
# move output into place: Is a directory"), after all the work; now at creation.
mkdir outdir
expect_status 73 "section path that is a folder" -- "$TZERO" stack --job job.json --out outdir --quiet
expect_stderr "outdir: is a folder" "message names the folder"
expect_status 73 "velocity output that is a folder" -- "$TZERO" velocity intervals vel.csv --out outdir
[ -z "$(ls -A outdir)" ] && ok "nothing written into the folder" || notok "files in outdir"
rmdir outdir
no_leftovers "outputs that are folders"

# --- NaN and infinite samples in a shot file were replaced by 0 and stacked
# without a word; the report and summary now count them (issue: "NaN/Inf
# samples are counted and reported"). IEEE bit patterns from IEEE 754.
"$TZERO" synth --model model.json --layout layout.json --out nsv --format ieee --quiet
"$PYTHON" - <<'PY'
import struct
p = 'nsv/shot_000002.sgy'
b = bytearray(open(p, 'rb').read())
ns = struct.unpack('>H', b[3220:3222])[0]
for k, v in enumerate([float('nan'), float('inf'), float('-inf')]):
    off = 3600 + k * (240 + 4 * ns) + 240 + 4 * 10
    b[off:off + 4] = struct.pack('>f', v)
open(p, 'wb').write(b)
PY
printf '{"shots": ["nsv/*.sgy"], "velocity": "vel.csv", "output": {"section": "n.sgy", "report": "n.json"}}' >nj.json
expect_status 0 "stack with NaN and infinite samples" -- "$TZERO" stack --job nj.json
expect_stdout "^samples +3 NaN, infinite or out-of-range" "summary counts the bad samples"
grep -Eq '"bad_samples":[[:space:]]*3' n.json && ok "report counts the bad samples" ||
  notok "report lacks bad_samples 3"
rm -rf nsv nj.json n.sgy n.json n.html
no_leftovers "bad samples"

# --- geometry --write with two inputs of the same name (from two folders) kept
# only the second copy, silently; refused before anything is written (73).
mkdir -p two/a two/b
cp sv/shot_000001.sgy two/a/s.sgy
cp sv/shot_000002.sgy two/b/s.sgy
expect_status 73 "geometry --write with two inputs of one name" -- "$TZERO" geometry \
  --write copies two/a/s.sgy two/b/s.sgy --quiet
expect_stderr "two/a/s\.sgy and two/b/s\.sgy have the same name" "message names both inputs"
expect_no_file copies "no output folder"
rm -rf two
no_leftovers "same-named inputs"

# --- long traces with a fine velocity scan: semblance asked for a 60001 x 65535
# panel (16 GB) and died "out of memory" (71); cvs with 60001 velocities set out
# to write a 94 GB file. Both are refused before any work (64).
printf '{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 2, "channels": 4}' >long.json
"$TZERO" synth --model model.json --layout long.json --out long --samples 65535 --interval-ms 1 \
  --no-reflections --no-direct --no-head-wave --quiet
printf '{"shots": ["long/*.sgy"], "velocity": "vel.csv", "output": {"section": "x.sgy"}}' >longjob.json
expect_status 64 "semblance panel beyond the memory cap" -- "$TZERO" semblance --job longjob.json \
  --cmps 3 --velocity-min 1000 --velocity-max 4000 --velocity-step 0.05 --out x.csv --quiet
expect_stderr "60001 trial velocities x 65535 samples" "message gives the panel size"
expect_status 64 "cvs panels beyond the size cap" -- "$TZERO" cvs --job longjob.json --cmps 2-5 \
  --velocities 1000-4000:0.05 --out x.sgy --quiet
expect_stderr "60001 velocities x 4 CMPs x 65535 samples" "message gives the output size"
rm -rf long long.json longjob.json
no_leftovers "scan sizes"

# --- outputs are renamed into place, and the rename replaced whatever stood at
# the name: a symbolic link became a plain file (for root, `--out /dev/stdout`
# replaced the /dev/stdout link itself) and a named pipe was swapped for a file.
# Links are now written through to the file they name; devices, pipes and
# sockets are refused (73). Not tried on /dev here: the test must not touch it.
echo old >target.csv
ln -s target.csv link.csv
expect_status 0 "output through a symbolic link" -- "$TZERO" velocity intervals vel.csv --out link.csv
[ -L link.csv ] && ok "the link is still a link" || notok "the link was replaced"
grep -q '^cmp,' target.csv && ok "the file it names has the output" || notok "target not written"
mkfifo pipe
expect_status 73 "output onto a named pipe" -- "$TZERO" velocity intervals vel.csv --out pipe
expect_stderr "pipe: is a device, pipe or socket" "message names the pipe"
[ -p pipe ] && ok "the pipe is still a pipe" || notok "the pipe was replaced"
ln -s nowhere/x.csv dangling.csv
expect_status 73 "output through a link to nowhere" -- "$TZERO" velocity intervals vel.csv \
  --out dangling.csv
rm -f target.csv link.csv pipe dangling.csv
no_leftovers "links, pipes"

# --- an output that cannot be created (its path runs through a file that is not
# a folder) was found only when the result was written, after the whole data
# pass (stack, nmo) or the whole analysis (semblance); now a probe finds it
# first. Status 73, the file in the way named, no probe file left.
expect_status 73 "stack section below a file" -- "$TZERO" stack --job job.json \
  --out vel.csv/x.sgy --quiet
expect_stderr "vel\.csv/x\.sgy: cannot create output: vel\.csv is not a folder" \
  "message names the section and the file in the way"
expect_status 73 "nmo gathers below a file" -- "$TZERO" nmo --job job.json --cmps 8 \
  --out vel.csv/x.sgy --quiet
expect_status 73 "semblance table below a file" -- "$TZERO" semblance --job job.json \
  --cmps 8 --out vel.csv/deeper/x.csv --quiet
no_leftovers "outputs below a file"

# --- an output in a folder that does not exist was refused (73) after the
# run; missing folders of requested outputs are now created with the mode
# mkdir -p gives them (0777 less the umask; common practice).
(umask 022 && "$TZERO" stack --job job.json --out made/a/x.sgy --report made/b/qc.json --quiet)
[ -s made/a/x.sgy ] && [ -s made/b/qc.json ] && ok "stack creates the folders of its outputs" ||
  notok "stack outputs in new folders missing"
m=$(stat -c %a made/a 2>/dev/null)
[ "$m" = 755 ] && ok "a created folder's mode follows the umask (755)" || notok "created folder mode $m"
expect_status 0 "nmo gathers in a new folder" -- "$TZERO" nmo --job job.json --cmps 8 \
  --out made/c/g.sgy --quiet
expect_status 0 "semblance table in a new folder" -- "$TZERO" semblance --job job.json --min-fold 2 \
  --cmps 8 --out made/d/v.csv --quiet
expect_status 0 "cvs panels in a new folder" -- "$TZERO" cvs --job job.json --cmps 6-8 \
  --velocities 1500 --out made/e/c.sgy --quiet
expect_status 0 "picture in a new folder" -- "$TZERO" picture made/a/x.sgy --out made/f/p.png --quiet
expect_status 0 "report fold table in a new folder" -- "$TZERO" report made/b/qc.json \
  --fold-csv made/g/fold.csv
[ -s made/c/g.sgy ] && [ -s made/d/v.csv ] && [ -s made/e/c.sgy ] && [ -s made/f/p.png ] &&
  [ -s made/g/fold.csv ] && ok "every output is in its new folder" || notok "an output is missing"
rm -rf made
no_leftovers "outputs in missing folders"

# --- a conditioning step that the sample interval rules out (checked after the
# header pass) was reported without the job's name.
printf '{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "conditioning": [{"step": "bandpass", "corners_hz": [5, 10, 60, 300]}], "output": {"section": "x.sgy"}}' >cond.json
expect_status 65 "band-pass above Nyquist" -- "$TZERO" stack --job cond.json --quiet
expect_stderr "^tzero stack: cond\.json: .*Nyquist" "stack names the job"
expect_status 65 "band-pass above Nyquist (nmo)" -- "$TZERO" nmo --job cond.json --cmps 8 --out x.sgy
expect_stderr "^tzero nmo: cond\.json: " "nmo names the job"
expect_status 65 "band-pass above Nyquist (cvs)" -- "$TZERO" cvs --job cond.json --cmps 6-8 \
  --velocities 1500 --out x.sgy --quiet
expect_stderr "^tzero cvs: cond\.json: " "cvs names the job"
rm -f cond.json
no_leftovers "conditioning checked late"
