#!/bin/sh
# batch.sh -- the demo's lines as a batch: GNU parallel runs every job side by side,
# the joblog and tzero's exit statuses say which lines failed, then one velocity file
# is revised and the make(1) recipe restacks only that line (docs/batch.md).
# Run after demo/run.sh (it needs the demo's shot files and velocity tables).
set -eu
B=${B:-build}
TZERO=$(cd "$(dirname "$B/tzero")" && pwd)/tzero
export TZERO
D=demo/tarrowvane
O=demo/out/batch
[ -f demo/out/gw01_stack.sgy ] || B=$B demo/run.sh >/dev/null
rm -rf "$O"
mkdir -p "$O"

# runs side by side x threads per run = the machine's cores (no oversubscription)
cores=$(nproc 2>/dev/null || echo 2)
nlines=$(ls "$D"/*.job.json | wc -l)
runs=$(( nlines < cores ? nlines : cores ))
THREADS=$(( cores / runs ))
[ "$THREADS" -ge 1 ] || THREADS=1
export THREADS
export OUT=$O

echo "== GNU parallel: $nlines lines, $runs at a time, $THREADS thread(s) each"
ls "$D"/*.job.json | parallel --will-cite --joblog "$O/joblog.txt" --halt soon,fail=1 \
  -j "$runs" sh demo/batch/stack_line.sh {} | tee "$O/results.txt"
echo "joblog: $O/joblog.txt (column 7 is each line's exit status)"
awk 'NR > 1 && $7 != 0 { bad = bad " " $NF } END { print bad ? "failed:" bad : "every line stacked" }' \
  "$O/joblog.txt"

echo
echo "== the QC gate on every line (demo/tarrowvane/limits.json)"
if [ -f "$D/limits.json" ]; then
  "$TZERO" report --check "$D/limits.json" "$O"/*_qc.json || echo "(a line broke a limit: see above)"
fi

echo
echo "== make: nothing changed, nothing restacked"
make --no-print-directory -f demo/batch/lines.mk -j "$runs" JOBDIR="$D" OUT="$O" \
  TZERO="$TZERO" THREADS="$THREADS"

echo
echo "== revise TV-GW-01's velocity table (+3 % after 100 ms), then make restacks that line only"
V=demo/out/gw01/rms_velocity.csv
cp "$O/gw01_stack.sgy" "$O/gw01_before_revision.sgy"
awk -F, 'BEGIN { OFS = "," } /^[0-9]/ && $2 + 0 > 100 { $3 = sprintf("%.1f", $3 * 1.03) } { print }' \
  "$V" >"$V.new" && mv "$V.new" "$V"
make --no-print-directory -f demo/batch/lines.mk -j "$runs" JOBDIR="$D" OUT="$O" \
  TZERO="$TZERO" THREADS="$THREADS"
"$TZERO" compare "$O/gw01_before_revision.sgy" "$O/gw01_stack.sgy" | sed -n '1,4p'
echo
echo "batch outputs in $O/: one section, QC report and dependency file per line,"
echo "  joblog.txt (GNU parallel), results.txt (one line per run)"
