# test_readme.sh -- the README's walkthrough ("Processing a line", the first sh
# block) pastes and runs: its lines are extracted from README.md and run, with
# build/tzero replaced by the binary under test, on a copy of the demo's
# groundwater line synthesised as demo/run.sh does (consistency check: it
# proves the commands and paths are valid, not the numbers they print).
. "$TOP/tests/e2e/lib.sh"
R="$T/repo"
mkdir -p "$R/demo/out"
cp -r "$TOP/demo/tarrowvane" "$R/demo/"
"$TZERO" synth --model "$R/demo/tarrowvane/model_groundwater.json" \
  --layout "$R/demo/tarrowvane/layout_gw01.json" --out "$R/demo/out/gw01" \
  --record-ms 200 --interval-ms 0.25 --peak-hz 110 --noise 0.05 --seed 11 \
  --noise-train-amplitude 3 --noise-train-velocity 220 --noise-train-hz 30 \
  --line-name TV-GW-01 --quiet >/dev/null 2>&1 || notok "walkthrough: demo line synthesised"
awk '/^## Processing a line/{p=1} p&&/^```sh/{b=1;next} b&&/^```/{exit} b' "$TOP/README.md" \
  >"$T/walk.sh"
n=$(grep -c '^build/tzero ' "$T/walk.sh")
if [ "$n" -ge 6 ]; then ok "walkthrough has $n commands"; else notok "walkthrough: $n commands found"; fi
i=0
while IFS= read -r line; do
  case "$line" in build/tzero\ *) ;; *) continue ;; esac
  i=$((i + 1))
  cmd=${line#build/tzero }
  cmd=${cmd%%#*}
  expect_status 0 "README walkthrough line $i: tzero ${cmd%% *}" -- \
    sh -c "cd '$R' && eval \"\\\"\$0\\\" $cmd\"" "$TZERO"
done <"$T/walk.sh"
if [ -s "$R/demo/out/readme_gw01.png" ] && [ -s "$R/demo/out/gw01_stack.sgy" ]; then
  ok "walkthrough outputs are in demo/out"; else notok "walkthrough outputs missing"; fi
# every other sh block of "Processing a line" (the velocity revision, the QC
# gate) runs whole, as pasted, after the walkthrough
awk -v d="$T" '/^## Processing a line/{p=1;next} p&&/^## /{exit}
  p&&/^```sh/{b=1;n++;next} b&&/^```/{b=0;next} b&&n>1{print >(d "/block" n ".sh")}' "$TOP/README.md"
nb=0
for f in "$T"/block*.sh; do
  [ -e "$f" ] || continue
  nb=$((nb + 1))
  sed -i "s#^\\( *\\)build/tzero #\\1\"\$TZ\" #; s#\\([|&;] *\\)build/tzero #\\1\"\$TZ\" #g" "$f"
  expect_status 0 "README block $(basename "$f" .sh) runs as pasted" -- \
    sh -ec "cd '$R' && TZ='$TZERO' && . '$f'"
done
if [ "$nb" -ge 2 ]; then ok "README has $nb more runnable blocks"; else notok "README: $nb more blocks"; fi
if [ -s "$R/demo/out/readme_gw01_v2.sgy" ] && [ -e "$R/demo/out/failed.txt" ]; then
  ok "revision and gate outputs are in demo/out"; else notok "revision or gate outputs missing"; fi
# printed and recorded paths are tidy: the job's "../out/x" is demo/out/x
grep -q '"demo/out/gw01/shot_' "$R/demo/out/gw01_qc.json" && ! grep -q 'tarrowvane/\.\./' "$R/demo/out/gw01_qc.json" \
  && ok "report records demo/out paths, not demo/tarrowvane/../out" \
  || notok "report paths not tidied: $(grep -o '"[^"]*shot_0*1\.sgy"' "$R/demo/out/gw01_qc.json" | head -1)"
(cd "$R" && "$TZERO" inspect demo/out/gw01/ >"$T/insp.txt" 2>&1)
if grep -q '//' "$T/insp.txt"; then notok "inspect folder/: '//' printed"; else ok "inspect folder/: no '//' in paths"; fi
