# test_fit.sh -- `tzero fit`: output, and bad picks files.
# Exit codes from <sysexits.h> (BSD sysexits(3)): 64 usage, 65 data, 66 no input.
. "$TOP/tests/e2e/lib.sh"
# computed from Green 1938 (check value 22 of docs/references.md): picks from t0 = 1 s, v = 2000 m/s.
printf 'offset_m,time_ms\n0,1000\n500,1030.776406\n1000,1118.033989\n1500,1250\n2000,1414.213562\n' >"$T/p.csv"
expect_status 0 "fit of exact picks" -- "$TZERO" fit "$T/p.csv"
expect_stdout "^t0: 1000.000 ms" "t0 = 1000 ms (computed from Green 1938; check value 22 of docs/references.md)"
expect_stdout "^velocity: 2000.00 m/s" "v = 2000 m/s (computed from Green 1938; check value 22 of docs/references.md)"
expect_stdout "^R\^2: 1.000000" "R^2 = 1 for exact picks"
expect_status 0 "fit --quiet" -- "$TZERO" fit --quiet "$T/p.csv"
expect_stdout "^1000.000 2000.00$" "--quiet prints t0 and v"
expect_status 0 "fit --help" -- "$TZERO" fit --help
expect_stdout "qualified" "--help carries the caution (project rule)"
printf 'offset_m,time_ms\n0,1000\n500,x\n' >"$T/bad.csv"
expect_status 65 "non-numeric time" -- "$TZERO" fit "$T/bad.csv"
expect_stderr "bad.csv: line 3: column time_ms" "error names file, line and column"
printf 'offset_m,time_ms\n0,1200\n1000,1000\n' >"$T/fall.csv"
expect_status 65 "times falling with offset" -- "$TZERO" fit "$T/fall.csv"
expect_stderr "fall.csv: .*not positive" "no real velocity is explained"
expect_status 66 "missing file" -- "$TZERO" fit "$T/none.csv"
expect_stderr "none.csv" "missing file is named"
expect_status 64 "no file" -- "$TZERO" fit
expect_status 64 "unknown option" -- "$TZERO" fit --frobnicate "$T/p.csv"
