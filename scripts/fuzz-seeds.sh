#!/bin/sh
# fuzz-seeds.sh OUT -- seed inputs for the fuzz targets, one folder per target
# under OUT: the demo's layouts, models and jobs, and a small survey written by
# `tzero synth` (IBM and IEEE shot files, a stacked section, its QC report, the
# RMS velocity table) plus WAV records made
# with Python's standard wave module. The committed seeds of
# tests/data/fuzz-seeds/NAME/ are read by libFuzzer beside these.
set -u
OUT=$1
TZERO=${TZERO:-build/tzero}
TOP=$(cd "$(dirname "$0")/.." && pwd)
cd "$TOP" || exit 1
rm -rf "$OUT"
for t in segy job velocity layout model header_map geometry_table qc_report audio; do
  mkdir -p "$OUT/$t"
done
W=$(mktemp -d "${TMPDIR:-/tmp}/tzero-seeds.XXXXXX")
trap 'rm -rf "$W"' EXIT

cp demo/tarrowvane/layout_*.json "$OUT/layout/"
cp demo/tarrowvane/model_*.json "$OUT/model/"
cp demo/tarrowvane/*.job.json "$OUT/job/"

cat >"$W/model.json" <<'JSON'
{"layers": [{"thickness_m": 30, "velocity_mps": 1500}, {"thickness_m": 60, "velocity_mps": 2100}, {"velocity_mps": 2600}]}
JSON
cat >"$W/layout.json" <<'JSON'
{"receiver_interval_m": 5, "source_interval_m": 10, "shot_count": 3, "channels": 6}
JSON
cp "$W/model.json" "$OUT/model/small.json"
cp "$W/layout.json" "$OUT/layout/small.json"
for fmt in ibm ieee; do
  "$TZERO" synth --model "$W/model.json" --layout "$W/layout.json" --out "$W/sv_$fmt" \
    --record-ms 100 --interval-ms 4 --format "$fmt" --rms-table "$W/vel.csv" --quiet || exit 1
  cp "$W/sv_$fmt/shot_000001.sgy" "$OUT/segy/shot_$fmt.sgy"
done
cp "$W/vel.csv" "$OUT/velocity/synth_rms.csv"
printf '{"shots": ["%s/sv_ieee/*.sgy"], "velocity": "%s/vel.csv", "output": {"section": "%s/st.sgy", "report": "%s/qc.json"}}' \
  "$W" "$W" "$W" "$W" >"$W/job.json"
"$TZERO" stack --job "$W/job.json" --quiet || exit 1
cp "$W/st.sgy" "$OUT/segy/stack.sgy"
cp "$W/qc.json" "$OUT/qc_report/synth.json"
/usr/bin/python3 - "$OUT/audio" <<'PY' || exit 1
import math, struct, sys, wave
for name, width, ch in (("pcm16.wav", 2, 2), ("pcm8.wav", 1, 1), ("pcm24.wav", 3, 3)):
    with wave.open(f"{sys.argv[1]}/{name}", "wb") as w:
        w.setnchannels(ch); w.setsampwidth(width); w.setframerate(8000)
        fr = bytearray()
        for i in range(400):
            v = math.sin(2 * math.pi * 40 * i / 8000)
            for c in range(ch):
                if width == 1:
                    fr += struct.pack("<B", int(127 + 100 * v))
                elif width == 2:
                    fr += struct.pack("<h", int(12000 * v))
                else:
                    fr += struct.pack("<i", int(3000000 * v))[:3]
        w.writeframes(bytes(fr))
PY
exit 0
