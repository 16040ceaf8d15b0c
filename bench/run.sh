#!/bin/sh
# run.sh -- `make bench`: speed and memory figures (never asserted by tests).
set -eu
B=${B:-build}
echo "bench: nothing to measure yet"
