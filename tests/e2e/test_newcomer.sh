# test_newcomer.sh -- what a newcomer meets on the demo's groundwater line (issue
# items): the stack summary explains a top mute hidden by the stretch mute.
# The line is synthesised as demo/run.sh does (consistency checks of what the
# user reads; numbers are checked elsewhere).
. "$TOP/tests/e2e/lib.sh"
R="$T/repo"
mkdir -p "$R/demo/out"
cp -r "$TOP/demo/tarrowvane" "$R/demo/"
"$TZERO" synth --model "$R/demo/tarrowvane/model_groundwater.json" \
  --layout "$R/demo/tarrowvane/layout_gw01.json" --out "$R/demo/out/gw01" \
  --record-ms 200 --interval-ms 0.25 --peak-hz 110 --noise 0.05 --seed 11 \
  --line-name TV-GW-01 --quiet >/dev/null 2>&1 || notok "demo line synthesised"
J=demo/tarrowvane/gw01.job.json
run() { (cd "$R" && "$TZERO" "$@") >"$T/out" 2>"$T/err"; }

# a sample that both mutes remove counts as stretch-muted (docs/qc-report.md),
# so the job's top mute of 0-80 ms shows 0 %: the summary says why
run stack --job "$J"
if grep -q "top 0.00 %" "$T/out" && grep -q "top mute only 0.00 %: on most traces the stretch mute" "$T/out"; then
  ok "stack summary: a top mute hidden by the stretch mute is explained"
else notok "stack summary: no note on the hidden top mute"; sed 's/^/#   /' "$T/out" | grep -A3 '^#   mute'; fi
# without a top mute there is nothing to explain
sed 's/"mute": {[^}]*},//' "$R/$J" >"$R/demo/tarrowvane/nomute.job.json"
run stack --job demo/tarrowvane/nomute.job.json --out demo/out/nomute.sgy --report demo/out/nomute_qc.json
if grep -q "top mute only" "$T/out"; then notok "note printed without a top mute"
else ok "no note without a top mute"; fi
