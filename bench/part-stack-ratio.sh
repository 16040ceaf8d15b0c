#!/bin/sh
# part-stack-ratio.sh -- `tzero stack` against a plain read and a NumPy + segyio script, one run.
#
# A 120-shot x 240-channel x 1500-sample IBM-float line (about 170 MB, tzero synth).
# Prints, each the fastest of $REPEAT (default 3) runs, with the load average before
# and after (the machine may be shared: read the ratios, not the seconds):
#   x read rate  the plain read's time over tzero's (1 = as fast as `cat` of the shot
#                files from a warm page cache): for the whole command, the whole command
#                without its HTML QC page, and the data pass alone (the report's timing_s)
#   NumPy/tzero  bench/numpy_stack.py (the same linear-NMO, stretch-mute, live-fold stack
#                written with segyio and NumPy) over the whole command
#   peak RSS     GNU time -v "Maximum resident set size", against the section + 64 MB
# for linear and sinc8 interpolation and 1 and 2 threads; then a velocity rerun
# (`--reuse`, one of 20 control CMPs revised: about 5 % of the CMPs) against a full run,
# threads 1, 2, 4 and 8, and 2 and 4 concurrent runs of 2 threads. Cold-cache figures
# need `echo 3 > /proc/sys/vm/drop_caches` (root); without it they are skipped and that
# is said. Nothing here is asserted.
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/stack-ratio"
PY=${PYTHON:-/usr/bin/python3}
REPEAT=${REPEAT:-3}
rm -rf "$D"
mkdir -p "$D"
calc() { awk "BEGIN { printf \"$1\n\", $2 }"; }
now() { date +%s.%N; }
L="$D/line"
cat >"$L.layout.json" <<EOF2
{ "description": "Corrowmere bench line (invented)", "receiver_interval_m": 5,
  "first_station_x_m": 500000, "first_station_y_m": 7000000, "azimuth_deg": 90,
  "source_interval_m": 10, "first_source_m": 0, "shot_count": 120, "spread": "split",
  "channels": 240, "channels_behind": 120, "near_offset_m": 5, "first_field_record": 1 }
EOF2
cat >"$L.model.json" <<EOF2
{ "description": "bench layers (invented)",
  "layers": [ { "thickness_m": 200, "velocity_mps": 1800, "density_kgm3": 2000 },
              { "thickness_m": 400, "velocity_mps": 2400, "density_kgm3": 2200 },
              { "velocity_mps": 3600, "density_kgm3": 2500 } ] }
EOF2
"$TZ" synth --model "$L.model.json" --layout "$L.layout.json" --out "$L" --samples 1500 \
  --interval-ms 2 --format ibm --noise 0.01 --quiet
for h in page nopage; do
  extra=""
  [ $h = nopage ] && extra=', "html": false'
  cat >"$L.$h.json" <<EOF2
{ "name": "bench", "shots": ["line/shot_*.sgy"], "geometry": { "layout": "line.layout.json" },
  "velocity": "line/rms_velocity.csv",
  "output": { "section": "line.stack.sgy", "report": "line.qc.json"$extra } }
EOF2
done
sync
bytes=$(cat "$L"/shot_*.sgy | wc -c)
echo "line: 120 shots x 240 channels x 1500 samples (IBM), $(calc "%.0f" "$bytes / 1e6") MB"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"

# best "wall rss data_pass" of $REPEAT runs of a command into $D/best
best_of() {
  best=""
  r=0
  while [ $r -lt "$REPEAT" ]; do
    r=$((r + 1))
    rm -f "$D/line.qc.json"
    /usr/bin/time -v -o "$D/tv.txt" "$@" >/dev/null
    el=$(awk -F': ' '/Elapsed \(wall clock\)/ { n = split($2, p, ":"); s = 0;
         for (i = 1; i <= n; i++) s = s * 60 + p[i]; print s }' "$D/tv.txt")
    rss=$(awk -F': ' '/Maximum resident set size/ { print $2 }' "$D/tv.txt")
    dp=0
    [ -f "$D/line.qc.json" ] && dp=$("$PY" -c 'import json,sys; print(json.load(open(sys.argv[1]))["timing_s"]["data_pass"])' "$D/line.qc.json")
    if [ -z "$best" ] || [ "$(calc "%d" "$el < $best")" = 1 ]; then
      best=$el
      echo "$el $rss $dp" >"$D/best"
    fi
  done
}

cat "$L"/shot_*.sgy >/dev/null
rd=""
for r in 1 2 3 4 5; do
  t0=$(now); cat "$L"/shot_*.sgy >/dev/null; t=$(calc "%.4f" "$(now) - $t0")
  if [ -z "$rd" ] || [ "$(calc "%d" "$t < $rd")" = 1 ]; then rd=$t; fi
done
echo "  plain read (cat, warm cache, best of 5)  $rd s ($(calc "%.0f" "$bytes / 1e6 / $rd") MB/s)"
TZA=$(cd "$(dirname "$TZ")" && pwd)/$(basename "$TZ")
if [ -w /proc/sys/vm/drop_caches ]; then
  sync; echo 3 >/proc/sys/vm/drop_caches
  t0=$(now); cat "$L"/shot_*.sgy >/dev/null; crd=$(calc "%.4f" "$(now) - $t0")
  sync; echo 3 >/proc/sys/vm/drop_caches
  t0=$(now); (cd "$D" && "$TZA" stack --quiet --job line.page.json --threads 2 >/dev/null)
  cst=$(calc "%.4f" "$(now) - $t0")
  echo "  cold cache: read $crd s, stack linear 2 threads $cst s: stack / cold read $(calc "%.2f" "$cst / $crd")"
else
  echo "  cold cache: not measured (/proc/sys/vm/drop_caches is not writable here)"
fi

best_of "$PY" bench/numpy_stack.py "$L/rms_velocity.csv" "$D/numpy.npy" "$L"/shot_*.sgy
np_s=$(cut -d' ' -f1 "$D/best")
np_rss=$(cut -d' ' -f2 "$D/best")
echo "  NumPy + segyio script                    $np_s s, peak RSS $(calc "%.1f" "$np_rss / 1024") MB"

for interp in linear sinc8; do
  for T in 1 2; do
    best_of sh -c "cd '$D' && '$TZA' stack --quiet --job line.page.json --threads $T --interpolation $interp"
    read el rss dp <"$D/best"
    best_of sh -c "cd '$D' && '$TZA' stack --quiet --job line.nopage.json --threads $T --interpolation $interp"
    read el2 rss2 dp2 <"$D/best"
    [ "$(calc "%d" "$dp2 < $dp")" = 1 ] && dp=$dp2
    sec_mb=$("$PY" -c 'import json,sys; s=json.load(open(sys.argv[1]))["section"]; print(s["cmps"] * s["samples"] * 4 / 2**20)' "$D/line.qc.json")
    printf '  %-6s %d thread(s)  whole %5.2f s: x read rate %5.2f (no QC page %5.2f s: %5.2f), data pass %5.2f s: %5.2f; NumPy/tzero %5.1f; peak RSS %5.1f MB (limit %5.1f)\n' \
      "$interp" "$T" "$el" "$(calc "%.3f" "$rd / $el")" "$el2" "$(calc "%.3f" "$rd / $el2")" \
      "$dp" "$(calc "%.3f" "$rd / $dp")" "$(calc "%.2f" "$np_s / $el")" \
      "$(calc "%.1f" "$rss / 1024")" "$(calc "%.1f" "$sec_mb + 64")"
  done
done

# a velocity rerun: 20 control CMPs, the last one revised (its interval: ~5 % of the CMPs)
"$PY" - "$D" <<'PY'
import json, sys
d = sys.argv[1]
r = json.load(open(f"{d}/line.qc.json"))
lo, hi = r["section"]["cmp_first"], r["section"]["cmp_last"]
ctl = [lo + round(i * (hi - lo) / 19) for i in range(20)]
def write(name, bump):
    with open(f"{d}/{name}", "w") as fp:
        fp.write("cmp,time_ms,velocity_mps\n")
        for i, c in enumerate(ctl):
            b = bump if i == 19 else 0
            fp.write(f"{c},0,1800\n{c},600,{2100 + 3 * i + b}\n{c},2000,{2900 + 2 * i + b}\n")
write("v1.csv", 0)
write("v2.csv", 60)
PY
(cd "$D" && "$TZA" stack --quiet --job line.nopage.json --threads 2 --velocity v1.csv --out v1.sgy --report v1.json)
best_of sh -c "cd '$D' && '$TZA' stack --quiet --job line.nopage.json --threads 2 --velocity v2.csv --out full.sgy --report line.qc.json"
full=$(cut -d' ' -f1 "$D/best")
rr=""
for r in 1 2 3; do
  cp "$D/v1.sgy" "$D/re.sgy"; cp "$D/v1.json" "$D/re.json"
  t0=$(now)
  (cd "$D" && "$TZA" stack --quiet --job line.nopage.json --threads 2 --velocity v2.csv --out re.sgy --report re.json --reuse re.sgy)
  t=$(calc "%.4f" "$(now) - $t0")
  if [ -z "$rr" ] || [ "$(calc "%d" "$t < $rr")" = 1 ]; then rr=$t; fi
done
same=differ
cmp -s "$D/re.sgy" "$D/full.sgy" && same="byte-identical"
pct=$("$PY" -c 'import json,sys; r=json.load(open(sys.argv[1]))["reuse"]; print("%.1f" % (100 * r["cmps_restacked"] / (r["cmps_restacked"] + r["cmps_carried"])))' "$D/re.json")
echo "  velocity rerun (--reuse, $pct % of CMPs restacked): $rr s vs full run $full s: $(calc "%.3f" "$rr / $full") x ($same)"

# threads on 2 cores, and concurrent runs
for T in 1 2 4 8; do
  best_of sh -c "cd '$D' && '$TZA' stack --quiet --job line.nopage.json --threads $T"
  read el rss dp <"$D/best"
  printf '  threads %d: whole %5.2f s, data pass %5.3f s\n' "$T" "$el" "$dp"
done
for n in 2 4; do
  mkdir -p "$D/c"
  t0=$(now)
  i=0
  while [ $i -lt $n ]; do
    i=$((i + 1))
    (cd "$D" && "$TZA" stack --quiet --job line.nopage.json --threads 2 --out "c/s$i.sgy" --report "c/r$i.json") &
  done
  wait
  t=$(calc "%.3f" "$(now) - $t0")
  echo "  $n concurrent runs of 2 threads: $t s for the group ($(calc "%.2f" "$t / $n") s per run)"
done
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"
rm -rf "$D"
