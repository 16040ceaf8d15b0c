#!/bin/sh
# run.sh -- the demo: processes the bundled scenario line with what exists so far.
set -eu
B=${B:-build}
TZ="$B/tzero"
"$TZ" --version
"$TZ" --help

# --- stack: synthesise the scenario line, stack it with the model's exact RMS
# velocities (job file demo/ashvale/job_av_gw_01.json), print the QC summary.
mkdir -p demo/out
"$TZ" synth --model demo/ashvale/model_shallow.json --layout demo/ashvale/layout_groundwater.json \
  --out demo/out/shots --line-name "AV-GW-01" --quiet
"$TZ" stack --job demo/ashvale/job_av_gw_01.json
echo "outputs: demo/out/av_gw_01_stack.sgy (stacked section), demo/out/av_gw_01_qc.json (QC report)"
echo "         tzero report demo/out/av_gw_01_qc.json --cmp 140   (one CMP in detail)"
