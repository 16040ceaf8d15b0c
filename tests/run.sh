#!/bin/sh
# run.sh -- runs the unit suites (Check), the end-to-end scripts and the
# external cross-checks, and closes with one "N passed, N failed, N skipped" line.
#
# Protocol: Check suites report "Checks: N, Failures: F, Errors: E"; a suite
# binary that reports no check at all is a failure. Scripts print TAP-style
# "ok - ..." / "not ok - ..." lines. A check that could not run here (no AVX2,
# no chromium, ...) prints "ok - NAME # SKIP why" or "skip - NAME: why" and is
# counted as skipped, never as passed (in a Check suite the skip line is taken
# off the suite's passed count).
# Usage: tests/run.sh [unit|e2e|xcheck]...   (default: all three)
set -u
B=${B:-build}
PYTHON=${PYTHON:-/usr/bin/python3}
TZERO=$(cd "$(dirname "$B/tzero")" && pwd)/tzero
export TZERO PYTHON
TOP=$(cd "$(dirname "$0")/.." && pwd)
export TOP
WORK=$(mktemp -d "${TMPDIR:-/tmp}/tzero-tests.XXXXXX")
export WORK
trap 'rm -rf "$WORK"' EXIT INT TERM
what=${*:-unit e2e xcheck}
pass=0
fail=0
skip=0
broken=""

count_skips() { # file -> number of skip lines
  grep -cE '^ok .*# SKIP|^skip ' "$1" || true
}

count_tap() { # file -> adds to pass/fail/skip
  p=$(grep '^ok ' "$1" | grep -vc '# SKIP' || true)
  f=$(grep -c '^not ok ' "$1" || true)
  s=$(count_skips "$1")
  pass=$((pass + p))
  fail=$((fail + f))
  skip=$((skip + s))
}

run_one() { # label cmd...
  label=$1
  shift
  log="$WORK/log.$$"
  "$@" >"$log" 2>&1
  rc=$?
  case $label in
  unit)
    line=$(grep -E 'Checks: [0-9]+' "$log" | tail -n 1)
    n=$(echo "$line" | sed -E 's/.*Checks: ([0-9]+).*/\1/')
    f=$(echo "$line" | sed -E 's/.*Failures: ([0-9]+).*/\1/')
    e=$(echo "$line" | sed -E 's/.*Errors: ([0-9]+).*/\1/')
    n=${n:-0}; f=${f:-0}; e=${e:-0}
    s=$(count_skips "$log")
    [ "$s" -gt $((n - f - e)) ] && s=$((n - f - e))
    pass=$((pass + n - f - e - s))
    fail=$((fail + f + e))
    skip=$((skip + s))
    if [ "$n" -eq 0 ]; then   # a suite that ran nothing proves nothing
      echo "not ok - $(basename "$1"): no check ran" >>"$log"
      fail=$((fail + 1))
    fi
    ;;
  *) count_tap "$log" ;;
  esac
  if [ $rc -ne 0 ] || grep -q '^not ok \|Failures: [1-9]\|Errors: [1-9]' "$log"; then
    echo "---- FAILED: $*"
    grep -v '^ok ' "$log" | tail -n 60
    broken="$broken $(basename "$2" 2>/dev/null || basename "$1")"
    [ $rc -ne 0 ] && ! grep -q '^not ok \|Failures: [1-9]\|Errors: [1-9]' "$log" && fail=$((fail + 1))
  else
    echo "  pass: $*" | sed "s|$TOP/||g"
  fi
  rm -f "$log"
}

for w in $what; do
  case $w in
  unit)
    for t in "$B"/tests/check_*; do
      [ -x "$t" ] || continue
      case $t in *.d) continue ;; esac
      run_one unit "$t"
    done
    ;;
  e2e)
    for t in "$TOP"/tests/e2e/test_*.sh; do
      [ -f "$t" ] || continue
      run_one e2e sh "$t"
    done
    ;;
  xcheck)
    for t in "$TOP"/tests/xcheck/test_*.py; do
      [ -f "$t" ] || continue
      run_one xcheck "$PYTHON" "$t"
    done
    ;;
  esac
done

[ -n "$broken" ] && echo "failing:$broken"
echo "$pass passed, $fail failed, $skip skipped"
[ "$fail" -eq 0 ]
