# test_synth.sh -- `tzero synth`: outputs, bad inputs, exit statuses, no half-written output.
# Exit statuses are BSD sysexits(3): 64 usage, 65 data, 66 no input, 73 cannot create.
# Sources: sysexits(3) and the man pages (exit statuses; a failed run leaves no output that looks complete);
# common practice for the rest.
. "$TOP/tests/e2e/lib.sh"
cat >"$T/model.json" <<'JSON'
{"layers": [{"thickness_m": 50, "velocity_mps": 1500}, {"velocity_mps": 2200}]}
JSON
cat >"$T/layout.json" <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 4, "channels": 12}
JSON
expect_status 0 "synth writes a survey" -- "$TZERO" synth --model "$T/model.json" \
  --layout "$T/layout.json" --out "$T/sv" --record-ms 200 --interval-ms 2
expect_stdout "wrote 4 shot files \(48 traces" "summary counts files and traces"
n=$(ls "$T/sv"/shot_*.sgy 2>/dev/null | wc -l)
[ "$n" -eq 4 ] && ok "four shot files" || notok "four shot files: got $n"
# 101 samples, 3600 + 12 * (240 + 404) bytes (SEG-Y rev 1 (2002), file structure: 3600 + traces x (240 + samples x bytes))
sz=$(wc -c <"$T/sv/shot_000001.sgy")
[ "$sz" -eq $((3600 + 12 * (240 + 101 * 4))) ] && ok "file size from --record-ms/--interval-ms" ||
  notok "file size $sz"
expect_status 0 "rerun into the existing folder" -- "$TZERO" synth --model "$T/model.json" \
  --layout "$T/layout.json" --out "$T/sv" --samples 51 --quiet
if [ -s "$T/out" ]; then notok "--quiet prints nothing"; else ok "--quiet prints nothing"; fi
ls -a "$T" | grep -q '\.sv\.tmp' && notok "no temporary folder left" || ok "no temporary folder left"
expect_status 0 "--help" -- "$TZERO" synth --help
expect_stdout "qualified" "--help ends with the caution"

expect_status 64 "missing --out" -- "$TZERO" synth --model "$T/model.json" --layout "$T/layout.json"
expect_status 64 "bad --samples" -- "$TZERO" synth --model "$T/model.json" --layout "$T/layout.json" \
  --out "$T/x" --samples 0
expect_stderr "[-]-samples: must be" "message names the option"
expect_status 64 "bad --format" -- "$TZERO" synth --model "$T/model.json" --layout "$T/layout.json" \
  --out "$T/x" --format vax
expect_status 66 "missing model file" -- "$TZERO" synth --model "$T/nope.json" \
  --layout "$T/layout.json" --out "$T/x"
expect_stderr "nope.json" "message names the missing file"
printf '{"layers": [{"thickness_m": 50, "velocity_mps": 1500}, {"velocity_mps": 2200, "thickness_m": 9}]}' \
  >"$T/bad.json"
expect_status 65 "half-space with a thickness" -- "$TZERO" synth --model "$T/bad.json" \
  --layout "$T/layout.json" --out "$T/x"
expect_stderr "bad.json: .*layers\[1\]\.thickness_m" "message names the file and key"
printf '{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 4, "channel": 12}' \
  >"$T/badlay.json"
expect_status 65 "layout with a misspelt key" -- "$TZERO" synth --model "$T/model.json" \
  --layout "$T/badlay.json" --out "$T/x"
expect_stderr "badlay.json" "message names the layout"
expect_no_file "$T/x" "no output after failures"
mkdir -p "$T/ro" && chmod 555 "$T/ro"
if [ "$(id -u)" -ne 0 ]; then
  expect_status 73 "unwritable parent folder" -- "$TZERO" synth --model "$T/model.json" \
    --layout "$T/layout.json" --out "$T/ro/sv"
  expect_no_file "$T/ro/sv" "nothing created in it"
fi
chmod 755 "$T/ro"
