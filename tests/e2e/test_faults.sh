# test_faults.sh -- fault injection against the guarantees of docs/robustness.md:
# signals (SIGINT, SIGTERM, SIGHUP, SIGKILL), file-size limits, named pipes as
# inputs, one output reached by two spellings, one shot file reached by two,
# patterns that would walk the whole file system, stale temporaries.
# Exit statuses: BSD sysexits(3) (65 data, 66 no input, 73 cannot create,
# 74 I/O); 128 + N for a run ended by signal N is the shell's convention
# (POSIX.1-2017, Shell Command Language 2.8.2). Each case failed before the
# behaviour it checks was built; the comment says how.
. "$TOP/tests/e2e/lib.sh"
cd "$T" || exit 1
cat >model.json <<'JSON'
{"layers": [{"thickness_m": 50, "velocity_mps": 1500}, {"thickness_m": 80, "velocity_mps": 1900}, {"velocity_mps": 2200}]}
JSON
cat >layout.json <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 4, "channels": 8}
JSON
"$TZERO" synth --model model.json --layout layout.json --out sv --record-ms 200 \
  --interval-ms 2 --rms-table vel.csv --quiet || { notok "synth survey"; exit 1; }
cat >job.json <<'JSON'
{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "output": {"section": "out.sgy", "report": "qc.json"}}
JSON
# no_tmp DESC [DIR]: no temporary of ours (".NAME.tmp-XXXXXX") anywhere below DIR
no_tmp() {
  left=$(find "${2:-.}" -name '.*.tmp-*' | tr '\n' ' ')
  if [ -z "$left" ]; then ok "$1: no temporary left"; else notok "$1: left $left"; fi
}
traces_read() { "$PYTHON" -c "import json; print(json.load(open('$1'))['traces']['read'])"; }

# --- signals. A run stopped by SIGINT, SIGTERM or SIGHUP left its hidden
# temporaries (synth: whole survey folders). Each run here is caught while its
# temporary exists (SIGSTOP), sent the signal, resumed (SIGCONT); it must exit
# 128 + N and leave nothing. Python starts it with the default dispositions (a
# shell's background job would have SIGINT ignored, POSIX 2.11).
sigrun() { # desc signal want-exit watch-glob -- cmd...
  desc=$1 sig=$2 want=$3 watch=$4; shift 5
  "$PYTHON" - "$desc" "$sig" "$want" "$watch" "$@" <<'PY'
import glob, os, signal, subprocess, sys, time
desc, sig, want, watch, cmd = sys.argv[1], sys.argv[2], int(sys.argv[3]), sys.argv[4], sys.argv[5:]
def dflt():
    for s in (signal.SIGINT, signal.SIGTERM, signal.SIGHUP):
        signal.signal(s, signal.SIG_DFL)
for attempt in range(5):
    p = subprocess.Popen(cmd, preexec_fn=dflt, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    seen = False
    deadline = time.time() + 60
    while p.poll() is None and time.time() < deadline:
        if glob.glob(watch, recursive=True):
            p.send_signal(signal.SIGSTOP)
            seen = bool(glob.glob(watch, recursive=True))
            if seen:
                break
            p.send_signal(signal.SIGCONT)
    if not seen:
        p.wait()
        continue   # finished before its temporary was seen: try again
    p.send_signal(getattr(signal, sig))
    p.send_signal(signal.SIGCONT)
    rc = p.wait()
    err = p.stderr.read().decode()
    print(("ok - " if rc == want else "not ok - ") + f"{desc}: exit {rc}" +
          ("" if rc == want else f", expected {want}; stderr {err!r}"))
    print(("ok - " if "stopped by " + sig in err else "not ok - ") + f"{desc}: says it was stopped")
    break
else:
    print(f"not ok - {desc}: the temporary {watch} was never seen")
PY
}
cat >big.json <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 60, "channels": 48}
JSON
sigrun "synth stopped by SIGTERM" SIGTERM 143 '.bigsv.tmp-*' -- \
  "$TZERO" synth --model model.json --layout big.json --out bigsv --record-ms 2000 --interval-ms 1
no_tmp "synth stopped by SIGTERM"
[ -e bigsv ] && notok "no survey folder after SIGTERM" || ok "no survey folder after SIGTERM"
"$TZERO" synth --model model.json --layout big.json --out bigsv --record-ms 2000 --interval-ms 1 \
  --rms-table bigvel.csv --quiet
printf '{"shots": ["bigsv/*.sgy"], "velocity": "bigvel.csv", "moveout": {"interpolation": "sinc8"}, "output": {"section": "bout.sgy", "report": "bqc.json"}}' >bigjob.json
sigrun "stack stopped by SIGINT" SIGINT 130 '.bqc.json.tmp-*' -- \
  "$TZERO" stack --job bigjob.json --threads 1
no_tmp "stack stopped by SIGINT"
expect_no_file bout.sgy "no section after SIGINT"
expect_no_file bqc.json "no report after SIGINT"
sigrun "stack stopped by SIGHUP" SIGHUP 129 '.bqc.json.tmp-*' -- \
  "$TZERO" stack --job bigjob.json --threads 2
no_tmp "stack stopped by SIGHUP"
"$PYTHON" - <<'PY'
import math, struct, wave
for k in range(6):
    with wave.open(f"rec_{k + 1}.wav", "wb") as w:
        w.setnchannels(8); w.setsampwidth(2); w.setframerate(8000)
        fr = bytearray()
        for i in range(40000):
            fr += struct.pack("<h", int(8000 * math.sin(2 * math.pi * 30 * i / 8000))) * 8
        w.writeframes(bytes(fr))
PY
mkdir field && mv rec_*.wav field/
sigrun "audio stopped by SIGTERM" SIGTERM 143 'segy/.tzero-audio.tmp-*' -- \
  "$TZERO" audio field --out segy --threads 1
no_tmp "audio stopped by SIGTERM"
ls segy/*.sgy >/dev/null 2>&1 && notok "no converted file after SIGTERM" ||
  ok "no converted file after SIGTERM"
rm -rf segy

# --- SIGKILL cannot be caught: its temporary stays, unlocked, and the next run
# writing the same output removes it (the sweep); a live run's is never taken.
"$PYTHON" - <<'PY'
import glob, signal, subprocess, time
for attempt in range(5):   # until the kill lands while the temporary exists
    p = subprocess.Popen(["sh", "-c", 'exec "$TZERO" stack --job bigjob.json --threads 1 --quiet'])
    deadline = time.time() + 60
    while p.poll() is None and time.time() < deadline and not glob.glob(".bqc.json.tmp-*"):
        pass
    p.send_signal(signal.SIGKILL)
    p.wait()
    if glob.glob(".bqc.json.tmp-*"):
        break
PY
set -- .bqc.json.tmp-*
[ -e "$1" ] && ok "SIGKILL leaves its temporary" || notok "SIGKILL left no temporary to sweep"
expect_status 0 "the next run" -- "$TZERO" stack --job bigjob.json --quiet
no_tmp "the next run swept the killed run's temporary"
echo live >.bout.sgy.tmp-LiVe01
flock .bout.sgy.tmp-LiVe01 sleep 60 &
holder=$!
# wait until the holder has the lock (flock -n fails while it is held)
i=0
while flock -n .bout.sgy.tmp-LiVe01 true && [ $i -lt 200 ]; do sleep 0.05; i=$((i + 1)); done
expect_status 0 "a run beside another live run's temporary" -- "$TZERO" stack --job bigjob.json --quiet
[ -e .bout.sgy.tmp-LiVe01 ] && ok "a locked temporary is left alone" || notok "a live temporary was removed"
kill "$holder" 2>/dev/null
wait "$holder" 2>/dev/null
rm -f .bout.sgy.tmp-LiVe01
rm -rf bigsv bigvel.csv bigjob.json bout.sgy bqc.json big.json

# --- a file-size limit (ulimit -f) killed the run with SIGXFSZ, temporaries
# left; SIGXFSZ is ignored now, so the write fails with EFBIG (setrlimit(2)) and
# the run ends with 74 and the OS reason.
(ulimit -f 8 && "$TZERO" stack --job job.json --out lim.sgy --report lim.json --quiet) 2>"$T/err"
rc=$?
[ "$rc" -eq 74 ] && ok "section beyond the file-size limit (exit 74)" || notok "file-size limit: exit $rc"
expect_stderr "lim\.sgy: .*write failed .*: File too large" "message gives the OS reason"
expect_no_file lim.sgy "no section beyond the limit"
expect_no_file lim.json "no report when the section failed"
no_tmp "file-size limit"

# --- a named pipe as an input blocked forever in open(2); refused at once (66)
# everywhere an input is opened. `timeout` turns a hang into exit 124.
mkfifo pipe.sgy pipe.csv pipe.json pipe.wav
expect_status 66 "inspect of a named pipe" -- timeout 20 "$TZERO" inspect pipe.sgy
expect_stderr "pipe\.sgy: not a regular file" "message names the pipe"
expect_status 66 "velocity check of a named pipe" -- timeout 20 "$TZERO" velocity check pipe.csv
expect_status 66 "stack --job of a named pipe" -- timeout 20 "$TZERO" stack --job pipe.json
expect_status 66 "a velocity table that is a named pipe" -- timeout 20 "$TZERO" stack --job job.json \
  --velocity pipe.csv --quiet
expect_status 66 "audio of a named pipe" -- timeout 20 "$TZERO" audio pipe.wav --out a1
mkdir pipes && mkfifo pipes/shot_9.sgy pipes/rec.wav
cp sv/shot_000001.sgy pipes/
printf '{"shots": ["pipes/*.sgy"], "velocity": "vel.csv", "output": {"section": "p.sgy"}}' >pjob.json
expect_status 66 "a shot pattern matching a named pipe" -- timeout 20 "$TZERO" stack --job pjob.json --quiet
expect_stderr "shot_9\.sgy.* not a regular file" "message names the pipe"
expect_status 66 "audio of a folder holding a named pipe" -- timeout 20 "$TZERO" audio pipes --out a2
expect_no_file p.sgy "no section"
rm -rf pipes pipe.sgy pipe.csv pipe.json pipe.wav pjob.json a1 a2

# --- `stack --out x.sgy --report ./x.sgy` (x.sgy new) compared only existing
# inodes: exit 0, the report replaced the section. Paths are compared by folder
# identity and name (73).
expect_status 73 "report and section one new file by two spellings" -- "$TZERO" stack --job job.json \
  --out x.sgy --report ./x.sgy --quiet
expect_stderr "the report and the section are the same file" "message says why"
mkdir real && ln -s real linked
expect_status 73 "report and section one new file through a linked folder" -- "$TZERO" stack \
  --job job.json --out real/x.sgy --report linked/sub/../x.sgy --quiet
expect_no_file x.sgy "nothing written"
expect_no_file real/x.sgy "nothing written through the link"
expect_status 73 "semblance panels and table one file by two spellings" -- "$TZERO" semblance \
  --job job.json --cmps 8 --min-fold 2 --out sp.sgy --panels ./sp.sgy --quiet
expect_stderr "panels and --out are the same file" "semblance says why"
expect_no_file sp.sgy "no semblance output"
rm -rf real linked

# --- one shot file reached by two spellings (or through a linked folder) was
# stacked twice; it is used once (device and inode).
"$TZERO" stack --job job.json --out once.sgy --report once.json --quiet
ln -s sv svlink
printf '{"shots": ["sv/*.sgy", "./sv/shot_000001.sgy", "svlink/shot_00000[12].sgy"], "velocity": "vel.csv", "output": {"section": "twice.sgy", "report": "twice.json"}}' >twice.json.job
expect_status 0 "stack with a shot file given three ways" -- "$TZERO" stack --job twice.json.job --quiet
[ "$(traces_read twice.json)" = "$(traces_read once.json)" ] && ok "each file is read once" ||
  notok "traces read $(traces_read twice.json), expected $(traces_read once.json)"
cmp -s once.sgy twice.sgy && ok "the same section as with each file once" || notok "sections differ"
rm -f svlink once.sgy once.json twice.sgy twice.json twice.json.job

# --- a shot pattern like "//*/*///*/*/*" walked the whole file system (minutes,
# 500 MB of names). Expansion is bounded in wildcard levels and entries read.
printf '{"shots": ["//*/*///*/*/*"], "velocity": "vel.csv", "output": {"section": "g.sgy"}}' >wide.json
expect_status 65 "a pattern with too many wildcard levels" -- timeout 60 "$TZERO" stack --job wide.json --quiet
expect_stderr '\$\.shots\[0\]: pattern .* levels with wildcards, more than 4' "message names the key and the bound"
rm -f wide.json
# --- hostile text in inputs. A job name with a newline or an escape sequence
# was printed raw to the terminal (ECMA-48 control functions); every string
# from an input file is printed with its control characters escaped.
printf '{"name": "line 4\\n\\u001b[2Jcleared", "shots": ["sv/*.sgy"], "velocity": "vel.csv", "output": {"section": "n.sgy", "report": "n.json"}}' >named.json
expect_status 0 "stack with control characters in the job name" -- "$TZERO" stack --job named.json
if LC_ALL=C grep -q "$(printf '\033')" "$T/out"; then notok "an escape character reached the terminal"
else ok "no escape character reaches the terminal"; fi
expect_stdout '^line +line 4\\n\\e\[2Jcleared$' "the name is shown escaped on one line"
printf '{"shots": ["sv/*.sgy"], "velocity": "vel.csv", "bins": {"size_\\u001b[31m": 1}}' >badkey.json
expect_status 65 "an unknown key with an escape sequence" -- "$TZERO" stack --job badkey.json
if LC_ALL=C grep -q "$(printf '\033')" "$T/err"; then notok "an escape character reached stderr"
else ok "the unknown key is printed escaped"; fi
rm -f named.json badkey.json n.sgy n.json

# --- a CSV table saved by a spreadsheet starts with a UTF-8 byte-order mark:
# "unknown column 'cmp' ... expected 'cmp'" (the mark was part of the name).
printf '\357\273\277cmp,time_ms,velocity_mps\r\n1,0,1500\r\n1,400,2000\r\n' >bom.csv
expect_status 0 "velocity table with a byte-order mark" -- "$TZERO" velocity check bom.csv
rm -f bom.csv

# --- control CMPs at the ends of the 64-bit range overflowed the interpolation:
# `velocity at --cmp -1` printed 1.38e22 m/s, and stack muted everything, exit 0.
printf 'cmp,time_ms,velocity_mps\n-9223372036854775808,0,1500\n9223372036854775807,0,2500\n' >huge.csv
expect_status 65 "control CMPs beyond +-1e9" -- "$TZERO" velocity at huge.csv --cmp -1
expect_stderr "huge\.csv: line 2: cmp -9223372036854775808 is outside -1000000000 to 1000000000" \
  "message names the file, line and limit"
expect_status 65 "stack with such a table" -- "$TZERO" stack --job job.json --velocity huge.csv --quiet
expect_no_file out.sgy "no section"
rm -f huge.csv

# --- out of memory exits 71 (sysexits(3) EX_OSERR), and signals 128 + N; no
# man page said so.
for m in "$TOP"/docs/tzero.1 "$TOP"/docs/tzero-*.1; do
  if grep -q '71' "$m" && grep -q '130' "$m" && grep -q '143' "$m"; then :; else
    notok "$(basename "$m") documents 71, 130 and 143 (add the EXIT STATUS paragraph the other pages share)"; continue; fi
  ok "$(basename "$m") documents 71, 130 and 143"
done
# --- an input coordinate scalar of 32767 made coordinates beyond any map
# (3.3e7 m); the failure came late, naming the output header or the CMP span.
# Refused when the trace is read, naming the input file, trace and bytes.
"$PYTHON" - <<'PY'
import shutil, struct
b = bytearray(open('sv/shot_000002.sgy', 'rb').read())
ns = struct.unpack('>H', b[3220:3222])[0]
off = 3600 + 3 * (240 + 4 * ns)           # trace 4; bytes 71-72 coordinate scalar (SEG-Y rev 1)
b[off + 70:off + 72] = struct.pack('>h', 32767)
import os
os.makedirs('scal', exist_ok=True)
shutil.copy('sv/shot_000001.sgy', 'scal/shot_000001.sgy')
open('scal/shot_000002.sgy', 'wb').write(b)
PY
printf '{"shots": ["scal/*.sgy"], "velocity": "vel.csv", "output": {"section": "s.sgy"}}' >scal.json
expect_status 65 "stack of a trace with coordinate scalar 32767" -- "$TZERO" stack --job scal.json --quiet
expect_stderr "scal/shot_000002\.sgy: trace 4: .*source x 3\.2767e\+07 m \(bytes 73-76 with scalar 32767\)" \
  "message names the input file, trace and bytes"
expect_status 65 "geometry --write of that trace" -- "$TZERO" geometry --write scalout scal/shot_000002.sgy --quiet
expect_stderr "scal/shot_000002\.sgy: trace 4: " "geometry names the input file and trace"
expect_no_file scalout "no output folder"
rm -rf scal scal.json s.sgy

# --- a key given twice in a layout, earth model or header map was accepted
# (the layout took the last, the model the first); JSON nested 100000 deep was
# "not valid JSON". RFC 8259 section 4: names within an object SHOULD be unique.
printf '{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 4, "channels": 8, "channels": 12}' >twice_layout.json
expect_status 65 "layout with a key given twice" -- "$TZERO" synth --model model.json --layout twice_layout.json --out tw --quiet
expect_stderr "twice_layout\.json: .*channels.*given twice" "message names the layout and the key"
printf '{"layers": [{"thickness_m": 50, "velocity_mps": 1500, "velocity_mps": 1600}, {"velocity_mps": 2200}]}' >twice_model.json
expect_status 65 "earth model with a key given twice" -- "$TZERO" synth --model twice_model.json --layout layout.json --out tw --quiet
expect_stderr "twice_model\.json: .*velocity_mps.*given twice" "message names the model and the key"
printf '{"cmp": {"byte": 21, "width": 4}, "cmp": {"byte": 25, "width": 4}}' >twice_map.json
expect_status 65 "header map with a key given twice" -- "$TZERO" inspect --header-map twice_map.json sv/shot_000001.sgy
expect_stderr "twice_map\.json: .*cmp.*given twice" "message names the map and the key"
"$PYTHON" -c "print('[' * 100000 + ']' * 100000)" >deep.json
expect_status 65 "a job nested 100000 deep" -- "$TZERO" stack --job deep.json --quiet
expect_stderr "deep\.json: .*nested too deeply" "message says nested too deeply"
expect_status 65 "a layout nested 100000 deep" -- "$TZERO" synth --model model.json --layout deep.json --out tw --quiet
expect_stderr "nested too deeply" "layout: nested too deeply"
expect_no_file tw "no survey"
rm -f twice_layout.json twice_model.json twice_map.json deep.json
no_tmp "all faults"
