# test_batch.sh -- the batch recipes of docs/batch.md: GNU parallel (one machine, and the
# several-machine form with the local login ':'), the make(1) rerun recipe, the Slurm job
# array script, tzero stack --brief and --depfile.
# The survey is written with segyio by tests/xcheck/test_stack_segyio.py (independent of
# tzero). Sources: GNU parallel's manual (--joblog columns, --halt, --resume-failed,
# --sshlogin ':' for this machine); GNU make's manual (prerequisites judged by modification
# time; included makefiles); the dependency-file form compilers write with -MD -MP (common
# practice); Slurm's sbatch manual (SLURM_ARRAY_TASK_ID, SLURM_CPUS_PER_TASK).
. "$TOP/tests/e2e/lib.sh"
SL="$TOP/demo/batch/stack_line.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/jobs"
mkdir -p "$J"
# two lines on the same shots with their own velocity tables (absolute paths in the jobs)
V=$("$PYTHON" -c 'import json,sys,os; j=json.load(open(sys.argv[1])); print(os.path.join(os.path.dirname(sys.argv[1]), j["velocity"]))' "$D/line.json")
for n in a b; do
  cp "$V" "$D/v_$n.csv"
  "$PYTHON" - "$D/line.json" "$J/line_$n.job.json" "$D/v_$n.csv" <<'PY'
import json, os, sys
src, dst, vel = sys.argv[1:4]
j = json.load(open(src))
base = os.path.dirname(os.path.abspath(src))
j["shots"] = [os.path.join(base, p) for p in j["shots"]]
for k in ("layout", "table"):
    if isinstance(j.get("geometry"), dict) and k in j["geometry"]:
        j["geometry"][k] = os.path.join(base, j["geometry"][k])
j["velocity"] = vel
j.pop("output", None)
j["output"] = {"section": "unused.sgy"}
json.dump(j, open(dst, "w"), indent=1)
PY
done
export TZERO OUT="$D/out" THREADS=1
command -v parallel >/dev/null 2>&1 || { ok "GNU parallel recipe # SKIP no parallel"; exit 0; }

# --- stack --brief and --depfile
expect_status 0 "stack --brief" -- "$TZERO" stack --job "$J/line_a.job.json" --out "$T/a.sgy" \
  --report "$T/a.json" --brief --depfile "$T/a.d"
if [ "$(wc -l <"$T/out")" -eq 1 ]; then ok "--brief prints one line"; else notok "--brief prints $(wc -l <"$T/out") lines"; fi
expect_stdout "exit 0  CMPs [0-9]+-[0-9]+  fold [0-9]+/" "--brief names exit status, CMPs and fold"
expect_status 66 "stack --brief of a job with a missing velocity table" -- "$TZERO" stack \
  --job "$J/line_a.job.json" --velocity "$T/none.csv" --out "$T/x.sgy" --brief --json
"$PYTHON" -c 'import json,sys; o=json.loads(open(sys.argv[1]).read()); sys.exit(0 if o["exit_status"] == 66 and o["error"] else 1)' "$T/out" &&
  ok "--brief --json after a failure: one JSON object with the exit status and the reason" ||
  notok "--brief --json after a failure"
if grep -q "^$T/a.sgy $T/a.json:" "$T/a.d" && grep -q "v_a.csv \\\\$" "$T/a.d" &&
   grep -q "^$J/line_a.job.json:$" "$T/a.d"; then
  ok "--depfile: section and report depend on the job, the velocity table and the shots, with empty rules"
else notok "--depfile content"; sed 's/^/#   /' "$T/a.d" | head -n 5; fi
nshots=$(ls "$D"/shots/*.sgy 2>/dev/null | wc -l)
ndep=$(grep -c '\.sgy:$' "$T/a.d")
if [ "$nshots" -gt 0 ] && [ "$ndep" -eq "$nshots" ]; then ok "--depfile lists every shot file ($nshots)"
else notok "--depfile lists $ndep shot files of $nshots"; fi

# --- GNU parallel on this machine: two lines, joblog, halt on failure, resume-failed
cp "$J/line_a.job.json" "$J/line_c.job.json"
"$PYTHON" - "$J/line_c.job.json" "$D/v_missing.csv" <<'PY'
import json, sys
j = json.load(open(sys.argv[1])); j["velocity"] = sys.argv[2]
json.dump(j, open(sys.argv[1], "w"))
PY
ls "$J"/*.job.json | parallel --will-cite --joblog "$T/joblog" -j 2 sh "$SL" {} >"$T/results" 2>"$T/perr"
st=$?
if [ "$st" -eq 1 ]; then ok "parallel reports one failed line (exit $st)"; else notok "parallel exit $st, expected 1"; fi
if awk 'NR > 1 && $7 != 0 { print $NF }' "$T/joblog" | grep -q "line_c.job.json" &&
   [ "$(awk 'NR > 1 && $7 == 0' "$T/joblog" | wc -l)" -eq 2 ] &&
   [ "$(awk 'NR > 1 && $7 == 66' "$T/joblog" | wc -l)" -eq 1 ]; then
  ok "the joblog names the failed line with tzero's exit status 66"
else notok "joblog"; sed 's/^/#   /' "$T/joblog"; fi
if [ "$(wc -l <"$T/results")" -eq 3 ] && grep -q "exit 66  failed" "$T/results"; then
  ok "one result line per run, the failed one included"; else notok "results"; sed 's/^/#   /' "$T/results"; fi
if cmp -s "$T/a.sgy" "$OUT/line_a_stack.sgy"; then ok "parallel's section equals a direct run"
else notok "parallel's section differs from a direct run"; fi
cp "$V" "$D/v_missing.csv"
ls "$J"/*.job.json | parallel --will-cite --resume-failed --joblog "$T/joblog" -j 2 sh "$SL" {} >"$T/results2" 2>&1
if [ $? -eq 0 ] && [ "$(wc -l <"$T/results2")" -eq 1 ] && grep -q "exit 0" "$T/results2"; then
  ok "--resume-failed reruns only the failed line"; else notok "--resume-failed"; sed 's/^/#   /' "$T/results2"; fi
rm -f "$J/line_c.job.json" "$D/v_missing.csv" "$OUT"/line_c*
ls "$J"/*.job.json | parallel --will-cite --halt soon,fail=1 --sshlogin : --joblog "$T/joblog_ssh" \
  --env THREADS --env OUT --env TZERO sh "$SL" {} >"$T/results3" 2>&1
if [ $? -eq 0 ] && [ "$(awk 'NR > 1 && $7 == 0' "$T/joblog_ssh" | wc -l)" -eq 2 ]; then
  ok "the several-machine form (--sshlogin :) runs every line"; else notok "--sshlogin :"; sed 's/^/#   /' "$T/results3"; fi

# --- make: nothing changed -> nothing restacked; one velocity table revised -> that line only
M="make --no-print-directory -f $TOP/demo/batch/lines.mk -j2 JOBDIR=$J OUT=$OUT TZERO=$TZERO"
$M >"$T/m1" 2>&1 || notok "make (first)"
$M >"$T/m2" 2>&1
if grep -q "Nothing to be done" "$T/m2" && ! grep -q "exit 0" "$T/m2"; then
  ok "make with nothing changed restacks nothing"; else notok "make restacked without a change"; sed 's/^/#   /' "$T/m2"; fi
sleep 1   # a newer modification time than the sections, on file systems with 1 s resolution
echo "# revised" >>"$D/v_b.csv"
$M >"$T/m3" 2>&1
if [ "$(grep -c "exit 0" "$T/m3")" -eq 1 ] && grep -q "exit 0" "$T/m3" && [ "$OUT/line_b_stack.sgy" -nt "$OUT/line_a_stack.sgy" ]; then
  ok "make after one velocity revision restacks that line only"; else notok "make after a revision"; sed 's/^/#   /' "$T/m3"; fi
sleep 1
touch "$(ls "$D"/shots/*.sgy | head -n 1)"
$M >"$T/m4" 2>&1
if [ "$(grep -c "exit 0" "$T/m4")" -eq 2 ]; then ok "make after a shot file changed restacks both lines that read it"
else notok "make after a shot file changed"; sed 's/^/#   /' "$T/m4"; fi

# --- Slurm job array: syntax, and each task runs the single-machine command for its row
if bash -n "$TOP/demo/batch/lines.sbatch"; then ok "lines.sbatch passes bash -n"; else notok "lines.sbatch syntax"; fi
printf '%s\n%s 1-40\n' "$J/line_a.job.json" "$J/line_b.job.json" >"$T/list"
good=1
k=0
while read -r job range; do
  want=$(DRY_RUN=1 THREADS=2 sh "$SL" "$job" ${range:+"$range"})
  got=$(SLURM_ARRAY_TASK_ID=$k SLURM_CPUS_PER_TASK=2 DRY_RUN=1 LIST="$T/list" HERE="$TOP/demo/batch" \
        bash "$TOP/demo/batch/lines.sbatch")
  [ -n "$want" ] && [ "$want" = "$got" ] || { good=0; echo "# task $k: '$got' != '$want'"; }
  k=$((k + 1))
done <"$T/list"
if [ $good -eq 1 ]; then ok "each Slurm task's command is the single-machine recipe's for its row (line and part)"
else notok "Slurm task commands differ from the single-machine recipe"; fi
if SLURM_ARRAY_TASK_ID=5 LIST="$T/list" HERE="$TOP/demo/batch" bash "$TOP/demo/batch/lines.sbatch" 2>/dev/null; then
  notok "a task beyond the list must fail"; else ok "a task beyond the list fails"; fi
