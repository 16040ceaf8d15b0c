# test_compare.sh -- `tzero compare` command line: usage, missing files, help.
# Exit codes from <sysexits.h> (BSD sysexits(3)): 64 usage, 66 no input.
# (Numerical checks: tests/unit/check_compare.c, tests/xcheck/test_compare_segyio.py,
# and the stack comparisons in tests/e2e/test_semblance.sh.)
. "$TOP/tests/e2e/lib.sh"
expect_status 0 "compare --help" -- "$TZERO" compare --help
expect_stdout "qualified" "--help carries the caution (project rule)"
expect_stdout "time-min MS" "--help gives units"
expect_status 64 "one file only" -- "$TZERO" compare "$T/a.sgy"
expect_stderr "expected two sections" "usage error explains"
expect_status 64 "bad number" -- "$TZERO" compare --max-lag ten "$T/a.sgy" "$T/b.sgy"
expect_stderr "max-lag: expected a number, got 'ten'" "bad number is named"
expect_status 64 "empty window" -- "$TZERO" compare --time-min 500 --time-max 400 "$T/a.sgy" "$T/b.sgy"
expect_status 66 "missing file" -- "$TZERO" compare "$T/a.sgy" "$T/b.sgy"
expect_stderr "a.sgy" "missing file is named"
printf 'not a seg-y file' >"$T/junk.sgy"
expect_status 65 "malformed file" -- "$TZERO" compare --csv "$T/out.csv" "$T/junk.sgy" "$T/junk.sgy"
expect_stderr "junk.sgy" "malformed file is named"
expect_no_file "$T/out.csv" "no CSV after a failed comparison"
