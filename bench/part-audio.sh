#!/bin/sh
# part-audio.sh -- `tzero audio` speed: one minute of 24-channel 44.1 kHz 16-bit audio
# (12 shot files of 5 s, band-limited noise) converted to 250 us SEG-Y with each of
# libsamplerate's three sinc converters (one thread; best also on two, files in
# parallel), given as seconds per hour of audio, plus the peak memory (GNU time),
# which does not depend on the number of files.
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
PYTHON=${PYTHON:-/usr/bin/python3}
mkdir -p "$OUT"
rm -rf "$OUT/audio_field" "$OUT/audio_sgy"
"$PYTHON" - "$OUT/audio_field" <<'PY'
import os, sys, wave
import numpy as np
d = sys.argv[1]
os.makedirs(d)
rng = np.random.default_rng(7)
for k in range(12):
    x = (rng.standard_normal((5 * 44100, 24)) * 3000).astype("<i2")
    with wave.open(os.path.join(d, f"shot_{k + 1}.wav"), "wb") as w:
        w.setnchannels(24); w.setsampwidth(2); w.setframerate(44100)
        w.writeframes(x.tobytes())
PY
mb=$(du -sm "$OUT/audio_field" | cut -f1)
for run in "best 1" "best 2" "medium 1" "fast 1"; do
  set -- $run
  q=$1
  rm -rf "$OUT/audio_sgy"
  s=$(date +%s%N)
  /usr/bin/time -f "%M" -o "$OUT/audio_mem" "$B/tzero" audio "$OUT/audio_field" \
    --out "$OUT/audio_sgy" --interval-us 250 --resampler "$q" --threads "$2" --quiet
  e=$(date +%s%N)
  echo "tzero audio --resampler $q --threads $2: 60 s of 24-channel 44.1 kHz audio ($mb MB, 12 files)" \
    "in $(awk "BEGIN { printf \"%.2f\", ($e - $s) / 1e9 }") s" \
    "= $(awk "BEGIN { printf \"%.0f\", ($e - $s) / 1e9 * 60 }") s per hour of audio," \
    "peak memory $(cat "$OUT/audio_mem") KB"
done
# A 2 s window: only the start of each file (plus the filter's reach) is decoded.
rm -rf "$OUT/audio_sgy"
s=$(date +%s%N)
"$B/tzero" audio "$OUT/audio_field" --out "$OUT/audio_sgy" --interval-us 250 \
  --quiet --length-ms 2000 --threads 1
e=$(date +%s%N)
echo "tzero audio --length-ms 2000 --resampler best --threads 1: $(awk "BEGIN { printf \"%.2f\", ($e - $s) / 1e9 }") s"
rm -rf "$OUT/audio_field" "$OUT/audio_sgy" "$OUT/audio_mem"
