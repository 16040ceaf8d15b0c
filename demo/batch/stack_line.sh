#!/bin/sh
# stack_line.sh JOB [FIRST-LAST] -- the one tzero command every batch recipe runs for a
# line, or for a part of a line (a CMP range; parts are joined by `tzero merge`).
#
# GNU parallel (demo/batch.sh), the make(1) recipe (demo/batch/lines.mk) and the Slurm
# job array (demo/batch/lines.sbatch) all call this script, so a line is stacked the same
# way whichever engine runs it. Environment:
#   TZERO    the program (default: tzero on the PATH)
#   OUT      folder of the outputs (default: out); created when missing
#   THREADS  threads per run (default 1; runs x threads should not exceed the cores)
#   DRY_RUN  when set, print the command instead of running it
# Outputs: OUT/NAME_stack.sgy, OUT/NAME_qc.json, OUT/NAME.d (make dependencies), where
# NAME is the job file's name without .json / .job.json (and _part_FIRST-LAST for a part).
# The one-line result (tzero stack --brief) goes to stdout; the exit status is tzero's.
set -eu
[ $# -ge 1 ] && [ $# -le 2 ] || { echo "usage: stack_line.sh JOB [FIRST-LAST]" >&2; exit 64; }
job=$1
range=${2:-}
name=$(basename "$job" .json)
name=${name%.job}
out=${OUT:-out}
if [ -n "$range" ]; then
  name="${name}_part_$range"
  set -- --cmp-range "$range"
else
  set --
fi
if [ -n "${DRY_RUN:-}" ]; then
  echo "${TZERO:-tzero} stack --job $job --out $out/${name}_stack.sgy --report $out/${name}_qc.json --depfile $out/$name.d --threads ${THREADS:-1} --brief $*"
  exit 0
fi
exec "${TZERO:-tzero}" stack --job "$job" --out "$out/${name}_stack.sgy" \
  --report "$out/${name}_qc.json" --depfile "$out/$name.d" --threads "${THREADS:-1}" --brief "$@"
