#!/bin/sh
# part-stack.sh -- `tzero stack` throughput and memory on a ~300 MB IBM-format survey.
#
# Builds (with tzero synth) a 240-channel roll-along line of about 300 MB of
# IBM-float shots and one twice its size, then reports: stack throughput
# (traces/s, MB/s of input) for linear and sinc8 interpolation, the plain
# sequential read rate of the same files from a warm page cache (cat > /dev/null),
# their ratio, the 1- vs 2-thread speed-up, and peak resident memory (GNU time)
# against the section size. CPU seconds (user + sys) are printed too: on a
# shared machine they are steadier than wall time. Each figure is the fastest
# of $REPEAT (default 3) runs. Rates are for the whole command (header pass,
# data pass, section and report written); "data pass" is the stacking pass
# alone, from the QC report's throughput. The load average is printed first:
# other work on the machine slows the 2-thread runs most. Targets (issue #5): linear
# >= 1/2 and sinc8 >= 1/4 of the read rate; peak memory < 3 x section + 64 MB,
# not growing with shots.
# Data go to $OUT/stack (removed at the end). Timings are wall-clock: run on an
# otherwise idle machine.
set -eu
B=${B:-build}
OUT=${OUT:-bench/out}
TZ="$B/tzero"
D="$OUT/stack"
rm -rf "$D"
mkdir -p "$D"
TIME=/usr/bin/time
[ -x "$TIME" ] || TIME=""

now() { date +%s.%N; }
calc() { awk "BEGIN { printf \"$1\n\", $2 }"; }

make_line() { # dir shots shot-interval-m
  cat >"$1.layout.json" <<EOF
{ "description": "Corrowmere bench line (invented)", "receiver_interval_m": 5,
  "first_station_x_m": 500000, "first_station_y_m": 7000000, "azimuth_deg": 90,
  "source_interval_m": $3, "first_source_m": 0, "shot_count": $2, "spread": "split",
  "channels": 240, "channels_behind": 120, "near_offset_m": 5, "first_field_record": 1 }
EOF
  cat >"$1.model.json" <<EOF
{ "description": "bench layers (invented)",
  "layers": [ { "thickness_m": 200, "velocity_mps": 1800, "density_kgm3": 2000 },
              { "thickness_m": 400, "velocity_mps": 2400, "density_kgm3": 2200 },
              { "thickness_m": 600, "velocity_mps": 3000, "density_kgm3": 2350 },
              { "velocity_mps": 3600, "density_kgm3": 2500 } ] }
EOF
  "$TZ" synth --model "$1.model.json" --layout "$1.layout.json" --out "$1" --samples 1500 \
    --interval-ms 2 --format ibm --noise 0.01 --quiet
  cat >"$1.job.json" <<EOF
{ "name": "bench", "shots": ["$(basename "$1")/shot_*.sgy"],
  "geometry": { "layout": "$(basename "$1").layout.json" },
  "velocity": "$(basename "$1")/rms_velocity.csv",
  "output": { "section": "$(basename "$1").stack.sgy", "report": "$(basename "$1").qc.json" } }
EOF
}

# run_stack ARGS... -> "elapsed_s peak_rss_kB cpu_s data_pass_MB/s" of the fastest of
# $REPEAT runs into $D/last (best of several: the machine may be shared)
REPEAT=${REPEAT:-3}
run_stack() {
  best=""
  r=0
  while [ $r -lt "$REPEAT" ]; do
    r=$((r + 1))
    if [ -n "$TIME" ]; then
      "$TIME" -f "%e %M %U %S" -o "$D/time.txt" "$TZ" stack --quiet "$@"
      set -- "$@"
      line=$(tail -n 1 "$D/time.txt")
      el=$(echo "$line" | cut -d' ' -f1)
      rss=$(echo "$line" | cut -d' ' -f2)
      cpu=$(echo "$line" | awk '{ printf "%.2f", $3 + $4 }')
    else
      t0=$(now)
      "$TZ" stack --quiet "$@"
      el=$(calc "%.3f" "$(now) - $t0")
      rss=0
      cpu=0
    fi
    if [ -z "$best" ] || [ "$(calc "%d" "$el < $best")" = 1 ]; then
      best=$el
      pass=$("${PYTHON:-/usr/bin/python3}" -c "import json,sys; print(json.load(open(sys.argv[1]))['throughput']['input_mb_per_s'])" \
        "$REPORT" 2>/dev/null || echo 0)
      echo "$el $rss $cpu $pass" >"$D/last"
    fi
  done
}

report_line() { # label traces bytes
  set -- "$1" "$2" "$3" $(cat "$D/last")
  printf '  %-24s %5.2f s (CPU %5.2f s) %7.0f traces/s %7.1f MB/s (data pass %6.0f MB/s)  peak RSS %5.1f MB\n' \
    "$1" "$4" "$6" "$(calc "%.0f" "$2 / $4")" "$(calc "%.1f" "$3 / 1e6 / $4")" "$7" \
    "$(calc "%.1f" "$5 / 1024")"
}

echo "load average before the runs: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"


# survey 2 has twice the shots over the same line (half the shot interval, twice
# the fold): the same section, so memory must not grow.
for size in 1 2; do
  shots=$((200 * size))
  L="$D/line$size"
  t0=$(now)
  make_line "$L" $shots $((10 / size))
  bytes=$(cat "$L"/shot_*.sgy | wc -c)
  traces=$((shots * 240))
  echo "survey $size: $shots shots (every $((10 / size)) m) x 240 channels x 1500 samples (IBM)," \
    "$(calc "%.0f" "$bytes / 1e6") MB," \
    "synthesised in $(calc "%.1f" "$(now) - $t0") s"
  sync   # let the synthesised files reach the disk so writeback does not disturb timings
  # warm the page cache, then time a plain sequential read
  cat "$L"/shot_*.sgy >/dev/null
  t0=$(now)
  cat "$L"/shot_*.sgy >/dev/null
  rd=$(calc "%.4f" "$(now) - $t0")
  read_mbs=$(calc "%.1f" "$bytes / 1e6 / $rd")
  echo "  plain read (cat, warm cache)   $rd s, $read_mbs MB/s"
  REPORT="$L.qc.json"
  run_stack --job "$L.job.json" --threads 1
  report_line "stack linear, 1 thread" $traces "$bytes"
  lin1=$(cut -d' ' -f1 "$D/last")
  run_stack --job "$L.job.json" --threads 2
  report_line "stack linear, 2 threads" $traces "$bytes"
  lin2=$(cut -d' ' -f1 "$D/last")
  rss2=$(cut -d' ' -f2 "$D/last")
  linpass=$(cut -d' ' -f4 "$D/last")
  run_stack --job "$L.job.json" --threads 1 --interpolation sinc8
  report_line "stack sinc8, 1 thread" $traces "$bytes"
  sinc1=$(cut -d' ' -f1 "$D/last")
  run_stack --job "$L.job.json" --threads 2 --interpolation sinc8
  report_line "stack sinc8, 2 threads" $traces "$bytes"
  sinc2=$(cut -d' ' -f1 "$D/last")
  sincpass=$(cut -d' ' -f4 "$D/last")
  ncmp=$("${PYTHON:-/usr/bin/python3}" -c "import json,sys; print(json.load(open(sys.argv[1]))['section']['cmps'])" \
    "$L.qc.json" 2>/dev/null || echo 0)
  sec_mb=$(calc "%.1f" "$ncmp * 1500 * 4 / 1048576")
  echo "  linear/read ratio (2 threads)  $(calc "%.2f" "($bytes / $lin2) / ($bytes / $rd)") (target >= 0.5);" \
    "data pass alone $(calc "%.2f" "$linpass / $read_mbs")"
  echo "  sinc8/read ratio (2 threads)   $(calc "%.2f" "($bytes / $sinc2) / ($bytes / $rd)") (target >= 0.25);" \
    "data pass alone $(calc "%.2f" "$sincpass / $read_mbs")"
  echo "  speed-up 1 -> 2 threads        linear $(calc "%.2f" "$lin1 / $lin2"), sinc8 $(calc "%.2f" "$sinc1 / $sinc2")"
  echo "  section $ncmp CMPs = $sec_mb MB; memory limit 3 x section + 64 MB = $(calc "%.1f" "3 * $sec_mb + 64") MB;" \
    "peak $(calc "%.1f" "$rss2 / 1024") MB"
  rm -rf "$L" "$L".*
done
rm -rf "$D"
