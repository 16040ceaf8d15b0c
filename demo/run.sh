#!/bin/sh
# run.sh -- the demo: processes the bundled scenario line with what exists so far.
set -eu
B=${B:-build}
TZ="$B/tzero"
"$TZ" --version
"$TZ" --help
