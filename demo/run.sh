#!/bin/sh
# run.sh -- the demo: the invented Tarrowvane valley scenario (demo/tarrowvane/).
#
# Three lines: TV-GW-01, a shallow groundwater line (48-channel split spread, 2 m
# stations) for the (invented) Brindlecote Water Co-operative, and TV-DX-04, a deeper
# exploration-style line (120-channel trailing spread, 12.5 m stations) with a
# dipping interface for the (invented) Quarrendine Exploration, taken through
# velocity analysis (semblance picks), stacking and comparison; and TV-RT-07, a line
# across the rough terrain of the Tarrowvane escarpment for the (invented) Harrowell
# Aggregates Trust, stacked with and without elevation statics. Steps run one
# after another; outputs go to demo/out/ (ignored by git).
set -eu
B=${B:-build}
TZ="$B/tzero"
D=demo/tarrowvane
O=demo/out
rm -rf "$O"
mkdir -p "$O"
"$TZ" --version

echo
echo "== TV-GW-01: synthesise 59 shots (one skipped shot point) from the layered model"
"$TZ" synth --model "$D/model_groundwater.json" --layout "$D/layout_gw01.json" --out "$O/gw01" \
  --record-ms 200 --interval-ms 0.25 --peak-hz 110 --noise 0.05 --seed 11 \
  --noise-train-amplitude 3 --noise-train-velocity 220 --noise-train-hz 30 --line-name TV-GW-01

echo
echo "== TV-GW-01: geometry from the trace headers (line fitted through the midpoints)"
"$TZ" geometry "$O"/gw01/shot_*.sgy | sed -n '1,12p'

echo
echo "== TV-GW-01: geometry from the job file (layout), predicted against actual fold"
"$TZ" geometry --job "$D/gw01.job.json" --fold-table "$O/gw01_fold.csv" | sed -n '1,7p'
echo "fold table: $O/gw01_fold.csv ($(($(wc -l <"$O/gw01_fold.csv") - 1)) CMPs)"

echo
echo "== TV-DX-04: synthesise with bare headers (no geometry, as field data often arrive)"
"$TZ" synth --model "$D/model_deep.json" --layout "$D/layout_dx04.json" --out "$O/dx04_field" \
  --record-ms 2000 --interval-ms 2 --peak-hz 28 --noise 0.01 --seed 4 --bare-headers \
  --line-name TV-DX-04

echo
echo "== TV-DX-04: apply the layout, write shots with geometry headers, show fold"
"$TZ" geometry --layout "$D/layout_dx04.json" --write "$O/dx04" "$O"/dx04_field/shot_*.sgy |
  sed -n '1,7p'
"$TZ" geometry --json "$O"/dx04/shot_*.sgy >"$O/dx04_geometry.json"
echo "geometry summary from the written headers: $O/dx04_geometry.json"

echo
echo "== TV-GW-01: stack with the model's exact RMS velocities (job file $D/gw01.job.json)"
"$TZ" stack --job "$D/gw01.job.json"
echo "outputs: $O/gw01_stack.sgy (stacked section), $O/gw01_qc.json (QC report)"
echo "         tzero report $O/gw01_qc.json --cmp 140   (one CMP in detail)"
echo "what the client receives with the section: its textual header, the navigation file"
echo "$O/gw01_nav.csv, the processing history $O/gw01_history.md and the velocities"
"$TZ" inspect "$O/gw01_stack.sgy" | grep -E 'client|CRS|polarity' | head -n 3
sed -n '1,3p' "$O/gw01_nav.csv"
"$TZ" velocity --job "$D/gw01.job.json" --export "$O/gw01_velocity_export.csv"

echo
echo "== TV-GW-01: pictures of the section (first 150 ms) and of the fold and mute coverage"
"$TZ" picture "$O/gw01_stack.sgy" --out "$O/gw01_stack.png" --time-ms 0-150
"$TZ" picture --fold "$O/gw01_qc.json" --out "$O/gw01_fold.png"
"$TZ" picture --fold "$O/gw01_qc.json" --out "$O/gw01_fold.svg" --quiet
"$TZ" picture "$O/gw01_stack.sgy" --out "$O/gw01_stack.pdf" --time-ms 0-150 --quiet
# the figures of docs/pictures.md are these pictures, refreshed by every demo run
mkdir -p docs/img
cp "$O/gw01_stack.png" "$O/gw01_fold.png" docs/img/

echo
echo "== TV-GW-01: post-stack conditioning of the stack (tzero condition, steps $D/gw01_poststack.json):"
echo "   a time-variant band-pass (two windows cross-faded over 70-100 ms) and f-x prediction"
"$TZ" condition "$O/gw01_stack.sgy" --steps "$D/gw01_poststack.json" --out "$O/gw01_stack_cond.sgy"
"$TZ" picture "$O/gw01_stack_cond.sgy" --out "$O/gw01_stack_cond.png" --time-ms 0-150

echo
echo "== TV-DX-04: velocity analysis (semblance on 5-CMP supergathers, automatic picks)"
"$TZ" semblance --job "$D/dx04.job.json" --cmps 60-260:40 --supergather 2 \
  --velocity-min 1500 --velocity-max 3500 --velocity-step 20 \
  --out "$O/dx04_velocity.csv" --panels "$O/dx04_panels.sgy" --quiet
echo "picked velocity table: $O/dx04_velocity.csv (model's exact RMS velocities: $O/dx04_field/rms_velocity.csv)"
"$TZ" velocity check "$O/dx04_velocity.csv" --job "$D/dx04.job.json" | tail -n 1
"$TZ" picture --velocity-field "$O/dx04_velocity.csv" --job "$D/dx04.job.json" \
  --out "$O/dx04_velocity_field.png"

echo
echo "== TV-DX-04: stack with the picked velocities (spherical divergence gain, band-pass, sinc8 NMO;"
echo "   post-stack: a time-variant band-pass and f-x prediction, and trace balancing after migration)"
"$TZ" stack --job "$D/dx04.job.json" | sed -n '1,6p'
echo "velocities with the section's coordinates every 20 CMPs, Dix interval velocities:"
"$TZ" velocity --job "$D/dx04.job.json" --export "$O/dx04_velocity_export.csv" --every 20

echo
echo "== TV-DX-04: rerun with the model's velocities, then compare the two sections"
"$TZ" stack --job "$D/dx04.job.json" --velocity "$O/dx04_field/rms_velocity.csv" \
  --out "$O/dx04_stack_model.sgy" --report "$O/dx04_qc_model.json" --quiet
"$TZ" compare "$O/dx04_stack_model.sgy" "$O/dx04_stack.sgy" --csv "$O/dx04_compare.csv" \
  --html "$O/dx04_compare.html" | tail -n 4
"$TZ" picture "$O/dx04_stack.sgy" --out "$O/dx04_stack.png"
"$TZ" picture "$O/dx04_panels.sgy" --out "$O/dx04_panels.png" --colour-map semblance

echo
echo "== TV-DX-04: time migration (the job's Kirchhoff, written by tzero stack beside the stack;"
echo "   and phase shift by tzero migrate): the fault's edge diffractions near CMP 180 and the"
echo "   diffractor near CMP 240 (700 ms) collapse, the 6 degree interface moves updip"
"$TZ" migrate "$O/dx04_stack.sgy" --velocity "$O/dx04_velocity.csv" --out "$O/dx04_migrated_ps.sgy"
"$TZ" picture "$O/dx04_migrated.sgy" --out "$O/dx04_migrated.png"
"$TZ" picture "$O/dx04_migrated_ps.sgy" --out "$O/dx04_migrated_ps.png"
echo "stack and migrated sections side by side: $O/dx04_stack.png, $O/dx04_migrated.png (Kirchhoff),"
echo "  $O/dx04_migrated_ps.png (phase shift)"


echo
echo "== TV-RT-07: a third line across the rough terrain of the Tarrowvane escarpment (60 m of"
echo "   relief, a weathering layer 4-9 m thick, shots 6 m deep with uphole times)"
"$TZ" synth --model "$D/model_escarpment.json" --layout "$D/layout_rt07.json" --out "$O/rt07" \
  --record-ms 1200 --interval-ms 2 --peak-hz 30 --noise 0.02 --seed 7 --no-direct \
  --line-name TV-RT-07 | tail -n 1
"$TZ" statics elevation --job "$D/rt07.job.json" --out "$O/rt07_elevation_statics.csv"

echo
echo "== TV-RT-07: stacked without statics, then with elevation and uphole statics to a 120 m datum"
"$TZ" stack --job "$D/rt07_nostatics.job.json" --quiet
"$TZ" stack --job "$D/rt07.job.json" | grep -E '^(edits|statics|fold) '
"$TZ" compare "$O/rt07_stack.sgy" "$O/rt07_stack_nostatics.sgy" | tail -n 2
"$TZ" picture "$O/rt07_stack.sgy" --out "$O/rt07_stack.png" --time-ms 0-1000
"$TZ" picture "$O/rt07_stack_nostatics.sgy" --out "$O/rt07_stack_nostatics.png" --time-ms 0-1000
"$TZ" picture --statics "$O/rt07_qc.json" --out "$O/rt07_statics.png"
# the top mute follows the ground: 5 controls along the line (the first-break time at
# each control CMP plus 30 ms), drawn over a record where it cuts (moved back to field
# time by each trace's static)
"$TZ" picture "$O/rt07/shot_007040.sgy" --job "$D/rt07.job.json" --show-mutes --time-ms 0-600 \
  --title "TV-RT-07 record 7040 and the top mute from 5 controls (field time)" \
  --out "$O/rt07_record_mutes.png" --quiet

echo
echo "== TV-RT-07: the velocity loop: first breaks and refraction statics, a first velocity"
echo "   pass, residual statics, a second velocity pass, the final stack"
"$TZ" firstbreaks --job "$D/rt07_nostatics.job.json" --out "$O/rt07_picks.csv"
"$TZ" picture "$O/rt07/shot_007040.sgy" --picks "$O/rt07_picks.csv" --time-ms 0-500 \
  --title "TV-RT-07 record 7040 and its first-break picks" --out "$O/rt07_record_picks.png" --quiet
# no direct wave on this line: the picks from 20 m on are all the weathering's head wave;
# the deeper refractor takes over beyond 400 m
"$TZ" statics refraction --job "$D/rt07_nostatics.job.json" --picks "$O/rt07_picks.csv" \
  --out "$O/rt07_refraction.csv" --datum-m 120 --replacement-velocity 2100 \
  --weathering-velocity 680 --offset-min-m 20 --offset-max-m 400
"$TZ" semblance --job "$D/rt07_refraction.job.json" --cmps 40-380:40 --supergather 2 \
  --out "$O/rt07_velocity1.csv" --quiet
"$TZ" stack --job "$D/rt07_refraction.job.json" --quiet
"$TZ" picture "$O/rt07_stack_refraction.sgy" --out "$O/rt07_stack_refraction.png" --time-ms 0-1000 \
  --title "TV-RT-07: refraction statics, first velocities" --quiet
"$TZ" statics residual --job "$D/rt07_refraction.job.json" --out "$O/rt07_residual.csv" \
  --window-ms 250,1100 --iterations 3
"$TZ" semblance --job "$D/rt07_final.job.json" --cmps 40-380:40 --supergather 2 \
  --out "$O/rt07_velocity2.csv" --quiet
"$TZ" stack --job "$D/rt07_final.job.json" --quiet
"$TZ" velocity --job "$D/rt07_final.job.json" --export "$O/rt07_final_velocity_export.csv"
echo "TV-RT-07 deliverables: $O/rt07_stack_final.sgy, $O/rt07_final_nav.csv,"
echo "  $O/rt07_final_history.md, $O/rt07_final_velocity_export.csv"
"$TZ" picture "$O/rt07_stack_final.sgy" --out "$O/rt07_stack_final.png" --time-ms 0-1000 \
  --title "TV-RT-07: refraction and residual statics, second velocities" --quiet
"$TZ" compare "$O/rt07_stack_final.sgy" "$O/rt07_stack_refraction.sgy" | tail -n 2

echo
echo "== Test panels on TV-RT-07: choosing the stretch limit (tzero gathers and stack --vary)"
"$TZ" gathers --job "$D/rt07_final.job.json" --through mute --sort cmp --select 120,200 \
  --vary moveout.stretch_limit_pct=30,50,80 --out "$O/rt07_panels_stretch_gathers.sgy"
"$TZ" picture "$O/rt07_panels_stretch_gathers.sgy" --out "$O/rt07_panels_stretch_gathers.png" \
  --time-ms 0-1000 --title "TV-RT-07 CMPs 120 and 200 after NMO and mutes, three stretch limits" \
  --quiet
"$TZ" stack --job "$D/rt07_final.job.json" --cmp-range 100-220 \
  --vary moveout.stretch_limit_pct=30,50,80 --out "$O/rt07_panels_stretch_stack.sgy"
"$TZ" picture "$O/rt07_panels_stretch_stack.sgy" --out "$O/rt07_panels_stretch_stack.png" \
  --time-ms 0-1000 --title "TV-RT-07 CMPs 100-220 stacked with three stretch limits" --quiet
"$TZ" gathers --job "$D/rt07_final.job.json" --through statics --sort shot --select 7040 \
  --out "$O/rt07_record7040_statics.sgy" --quiet
"$TZ" gathers --job "$D/rt07_final.job.json" --through mute --sort offset --select 0-60 \
  --one-per-cmp --out "$O/rt07_near_offset.sgy"
"$TZ" picture "$O/rt07_near_offset.sgy" --out "$O/rt07_near_offset.png" --time-ms 0-1000 \
  --title "TV-RT-07 near-offset section (0-60 m), statics, NMO and mutes applied" --quiet

echo
echo "== The QC gate: TV-DX-04 stacked again with --check against its job's limits ($D/limits.json)"
"$TZ" stack --job "$D/dx04.job.json" --check --quiet && echo "TV-DX-04 holds every limit (exit 0)"

echo
echo "== The QC gate: every line's report against the survey's limits"
"$TZ" report --check "$D/limits.json" "$O/gw01_qc.json" "$O/dx04_qc.json" "$O/rt07_qc.json"

echo
echo "== The QC gate: TV-GW-01 against stricter line limits (every full-fold CMP at nominal fold)"
echo "   the skipped shot point 133 shows as low fold; a broken limit answers with exit 1"
"$TZ" report --check "$D/limits_gw01_strict.json" "$O/gw01_qc.json" || echo "(exit $?)"

echo
echo "== TV-RT-07 re-shot with a long source: minimum-phase wavelet, a 40 ms reverberation"
echo "   (1/(1 + 0.5 z^P)) and dispersive ground roll (350-700 m/s, 8 Hz)"
"$TZ" synth --model "$D/model_escarpment.json" --layout "$D/layout_rt07.json" --out "$O/rt07s" \
  --record-ms 1200 --interval-ms 2 --peak-hz 30 --noise 0.002 --seed 8 --no-direct \
  --wavelet minimum-phase --reverb-period-ms 40 --reverb-coefficient 0.5 \
  --noise-train-amplitude 0.4 --noise-train-velocity 350 --noise-train-velocity-max 700 \
  --noise-train-hz 8 --line-name TV-RT-07 | tail -n 1
REC=7040
SHOT="$O/rt07s/shot_00$REC.sgy"
echo "record $REC: spectra as recorded, after deconvolution, after deconvolution and the f-k fan"
"$TZ" spectrum --job "$D/rt07_signal_raw.job.json" --records $REC --window 150:1150 --quiet \
  --out "$O/rt07s_spectrum_raw.csv"
for step in decon fk; do
  "$TZ" spectrum --job "$D/rt07_signal_$step.job.json" --records $REC --window 150:1150 \
    --conditioned --traces-out "$O/rt07s_record_$step.sgy" --quiet --out "$O/rt07s_spectrum_$step.csv"
done
"$TZ" picture --spectrum "$O/rt07s_spectrum_raw.csv,$O/rt07s_spectrum_decon.csv,$O/rt07s_spectrum_fk.csv" \
  --labels "as recorded,after deconvolution,after deconvolution and f-k" --max-hz 100 \
  --title "TV-RT-07 record $REC: amplitude spectra (150-1150 ms)" --out "$O/rt07s_spectra.png"
"$TZ" picture "$SHOT" --out "$O/rt07s_record_raw.png" --title "TV-RT-07 record $REC as recorded"
"$TZ" picture "$O/rt07s_record_decon.sgy" --out "$O/rt07s_record_decon.png" \
  --title "TV-RT-07 record $REC after statics and spiking deconvolution (120 ms, per record)"
"$TZ" picture "$O/rt07s_record_fk.sgy" --out "$O/rt07s_record_fk.png" \
  --title "TV-RT-07 record $REC after deconvolution and the f-k reject fan 0-800 m/s"
"$TZ" picture --fk-record $REC "$SHOT" --spacing 10 --fan 350,700 --max-hz 60 --out "$O/rt07s_fk_raw.png" \
  --title "TV-RT-07 record $REC: f-k spectrum as recorded (10 m: 350 m/s aliases above 17.5 Hz)"
"$TZ" picture --fk-record $REC "$O/rt07s_record_fk.sgy" --spacing 10 --fan 350,700 --max-hz 60 \
  --out "$O/rt07s_fk_after.png" --title "TV-RT-07 record $REC: f-k spectrum after the fan"
for step in raw decon fk; do
  "$TZ" stack --job "$D/rt07_signal_$step.job.json" --quiet
  "$TZ" picture "$O/rt07s_stack_$step.sgy" --out "$O/rt07s_stack_$step.png" --time-ms 0-1000 --quiet
done
"$TZ" compare "$O/rt07s_stack_fk.sgy" "$O/rt07s_stack_raw.sgy" | tail -n 1
echo
echo "== QC pages: each stack wrote its line's page beside its report; one survey page for all"
"$TZ" report --html "$O/index.html" "$O"/*_qc*.json
# the figures of docs/qc-report.md: the pages as a browser shows them (headless Chromium)
if B="$B" sh demo/screenshots.sh "$O" docs/img; then :; else
  echo "(no screenshots of the pages: chromium is not installed)"; fi

echo
echo "outputs in $O/: gw01_stack.sgy, gw01_qc.json, gw01_stack.png (.pdf), gw01_fold.png (.svg),"
echo "  dx04_velocity.csv, dx04_stack.sgy, dx04_qc.json, dx04_stack.png, dx04_panels.png, dx04_velocity_field.png,"
echo "  rt07_stack.png (with statics), rt07_stack_nostatics.png, rt07_statics.png,"
echo "  rt07_record_picks.png, rt07_stack_refraction.png, rt07_stack_final.png (velocity loop),"
echo "  rt07_elevation_statics.csv, rt07s_spectra.png, rt07s_record_{raw,decon,fk}.png,"
echo "  rt07s_fk_{raw,after}.png, rt07s_stack_{raw,decon,fk}.png (deconvolution and f-k),"
echo "  dx04_migrated.sgy (.png), dx04_migrated_ps.sgy (.png), gw01_stack_cond.sgy (.png);"
echo "  for the clients: {gw01,dx04,rt07,rt07_final}_nav.csv (navigation), *_history.md"
echo "  (processing histories), {gw01,dx04,rt07_final}_velocity_export.csv"
echo "A processed section is an interpretation aid: have it reviewed by a qualified geophysicist."
echo
echo "survey QC page (open it in a browser): $O/index.html"
