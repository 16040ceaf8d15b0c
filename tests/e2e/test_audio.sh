# test_audio.sh -- `tzero audio`: bad inputs, exit statuses, no output left; the workflow
# record -> tzero audio -> tzero geometry --layout --write -> SEG-Y with geometry.
# Exit statuses are BSD sysexits(3): 64 usage, 65 data, 66 no input, 73 cannot create.
# Sources: sysexits(3) and the man pages (exit statuses; a failed run leaves no output that looks complete);
# the RIFF/WAVE layout (a 44-byte header for PCM) for the truncated file; common
# practice for the rest. WAV files are written with Python's standard wave module.
. "$TOP/tests/e2e/lib.sh"
mkdir "$T/field"
"$PYTHON" - "$T/field" <<'PY'
import sys, wave, math, struct
for k, name in enumerate(["shot_1.wav", "shot_2.wav"]):
    with wave.open(f"{sys.argv[1]}/{name}", "wb") as w:
        w.setnchannels(6); w.setsampwidth(2); w.setframerate(8000)
        fr = bytearray()
        for i in range(4000):   # 0.5 s; channel c: 20 * (c + 1) Hz
            for c in range(6):
                fr += struct.pack("<h", int(8000 * math.sin(2 * math.pi * 20 * (c + 1) * i / 8000)))
        w.writeframes(bytes(fr))
PY
good="$T/field/shot_1.wav"

expect_status 0 "--help" -- "$TZERO" audio --help
expect_stdout "qualified" "--help ends with the caution"
expect_stdout "interval-us" "--help lists --interval-us"
expect_status 0 "tzero help audio" -- "$TZERO" help audio

expect_status 0 "converts a folder" -- "$TZERO" audio "$T/field" --out "$T/sgy" --first-record 11
expect_stdout "shot_2.wav: 6 ch at 8000 Hz, 0.500 s" "summary: channels, rate, duration"
expect_stdout "sgy/shot_2.sgy: field record 12, 6 traces x 2000 samples at 250 us" \
  "summary: output path, record, traces, samples, interval"
# 3600 + 6 traces x (240 + 2000 x 4) bytes (SEG-Y rev 1 (2002), file structure: 3600 + traces x (240 + samples x bytes))
sz=$(wc -c <"$T/sgy/shot_1.sgy")
[ "$sz" -eq $((3600 + 6 * (240 + 2000 * 4))) ] && ok "file size" || notok "file size $sz"
ls -a "$T/sgy" | grep -q '^\.tzero' && notok "no hidden folder left" || ok "no hidden folder left"
# Same bytes for any thread count (DEVELOPERS.md, threads: bitwise-identical output).
cp "$good" "$T/field/shot_3.wav"
cp "$good" "$T/field/shot_4.wav"
expect_status 0 "one thread" -- "$TZERO" audio "$T/field" --out "$T/t1" --threads 1 --quiet
expect_status 0 "three threads" -- "$TZERO" audio "$T/field" --out "$T/t3" --threads 3 --quiet
same=1
for f in shot_1 shot_2 shot_3 shot_4; do cmp -s "$T/t1/$f.sgy" "$T/t3/$f.sgy" || same=0; done
[ $same -eq 1 ] && ok "files identical for 1 and 3 threads" || notok "files differ by thread count"
rm "$T/field/shot_3.wav" "$T/field/shot_4.wav"
expect_status 0 "--json" -- "$TZERO" audio "$good" --out "$T/sgyj" --json
expect_stdout '"format":[[:space:]]*"tzero-audio/1"' "JSON summary has its format tag"
expect_status 0 "--quiet" -- "$TZERO" audio "$good" --out "$T/sgyj" --quiet
if [ -s "$T/out" ]; then notok "--quiet prints nothing"; else ok "--quiet prints nothing"; fi

# The workflow of docs/audio-input.md: geometry from a layout, written into the headers.
cat >"$T/layout.json" <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 2, "channels": 6,
 "first_field_record": 11, "near_offset_m": 5}
JSON
expect_status 0 "geometry --layout --write on the converted shots" -- "$TZERO" geometry \
  --layout "$T/layout.json" --write "$T/geo" --json "$T/sgy/shot_1.sgy" "$T/sgy/shot_2.sgy"
expect_stdout '"binned":[[:space:]]*12' "all 12 traces binned"
expect_status 0 "inspect the result" -- "$TZERO" inspect "$T/geo/shot_2.sgy"
printf 'cmp,time_ms,velocity_mps\n1,0,1500\n1,400,1800\n' >"$T/velocity.csv"
cat >"$T/line.json" <<'JSON'
{"shots": ["geo/*.sgy"], "geometry": "headers", "velocity": "velocity.csv",
 "output": {"section": "stk/line_stack.sgy", "report": "stk/line_qc.json"}}
JSON
mkdir "$T/stk"
expect_status 0 "stack the converted, geometry-assigned shots" -- "$TZERO" stack \
  --job "$T/line.json" --json
expect_stdout '"read":[[:space:]]*12' "the stack reads all 12 traces"
[ -s "$T/stk/line_stack.sgy" ] && ok "stacked section written" || notok "no stacked section"

# Bad inputs: message naming the file, status, nothing written.
printf 'field notes, line 3: shots 1-40 recorded on the blue recorder\n' >"$T/notes.wav"
expect_status 65 "a text file named .wav" -- "$TZERO" audio "$T/notes.wav" --out "$T/o1"
expect_stderr "notes.wav: not an audio file that libsndfile can read" "message names the file"
expect_no_file "$T/o1" "no output folder left"
head -c 20 "$good" >"$T/short.wav"
expect_status 65 "a WAV cut inside its 44-byte header" -- "$TZERO" audio "$T/short.wav" \
  --out "$T/o2"
expect_stderr "short.wav: " "message names the truncated file"
expect_no_file "$T/o2" "no output folder left"
# one bad file among good ones: checked before anything is written
mkdir "$T/o3"
expect_status 65 "a bad file among good ones" -- "$TZERO" audio "$T/field" "$T/notes.wav" \
  --out "$T/o3"
n=$(ls -A "$T/o3" | wc -l)
[ "$n" -eq 0 ] && ok "nothing written when one file is bad" || notok "o3 holds $n entries"
mkdir "$T/empty"
expect_status 66 "an empty folder" -- "$TZERO" audio "$T/empty" --out "$T/o4"
expect_stderr "empty: no audio files in this folder" "message names the folder"
expect_status 66 "a missing file" -- "$TZERO" audio "$T/nope.wav" --out "$T/o4"
expect_stderr "nope.wav: cannot open" "message names the missing file"
printf 'x' >"$T/plainfile"
expect_status 73 "an output folder that cannot be created" -- "$TZERO" audio "$good" \
  --out "$T/plainfile/sub"
expect_stderr "plainfile/sub: cannot create the output folder" "message names the folder"
expect_status 73 "an output path that is a file" -- "$TZERO" audio "$good" --out "$T/plainfile"
expect_status 64 "a window beyond the file" -- "$TZERO" audio "$good" --out "$T/o5" \
  --start-ms 100 --length-ms 450
expect_stderr "shot_1.wav: the window 100.000 to 550.000 ms ends beyond the end of the file" \
  "message gives the window and the file"
expect_no_file "$T/o5" "no output folder left"
expect_status 64 "a channel the file lacks" -- "$TZERO" audio "$good" --out "$T/o5" \
  --channels 1-7
expect_stderr "channel 7 is asked for, but the file has 6 channels" "message names the channel"
expect_status 64 "a channel listed twice" -- "$TZERO" audio "$good" --out "$T/o5" \
  --channels 1,2,1
expect_status 64 "--interval-us 0" -- "$TZERO" audio "$good" --out "$T/o5" --interval-us 0
expect_stderr "[-]-interval-us: must be 1..65535" "message names the option"
expect_status 64 "missing --out" -- "$TZERO" audio "$good"
expect_status 64 "bad --resampler" -- "$TZERO" audio "$good" --out "$T/o5" --resampler cubic
expect_status 64 "--first-record with --record-table" -- "$TZERO" audio "$good" --out "$T/o5" \
  --first-record 3 --record-table "$T/x.csv"
printf 'file,field_record\nshot_1.wav,4\n' >"$T/rec.csv"
expect_status 65 "a record table without a row for a file" -- "$TZERO" audio "$T/field" \
  --out "$T/o5" --record-table "$T/rec.csv"
expect_stderr "rec.csv: no row for the input shot_2.wav" "message names the table and file"
printf 'file,field_record\nshot_1.wav,4\nshot_2.wav,4\n' >"$T/rec2.csv"
expect_status 64 "two files with one field record" -- "$TZERO" audio "$T/field" \
  --out "$T/o5" --record-table "$T/rec2.csv"
expect_no_file "$T/o5" "no output folder left after option errors"
