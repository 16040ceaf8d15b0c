# test_cli.sh -- the front end's own behaviour: help, version, unknown names.
# Exit codes follow <sysexits.h> (BSD sysexits(3)): 64 = command-line usage error.
. "$TOP/tests/e2e/lib.sh"
expect_status 0 "tzero --help" -- "$TZERO" --help
expect_stdout "qualified" "--help carries the interpretation caution (project rule)"
expect_status 0 "tzero --version" -- "$TZERO" --version
expect_stdout "^tzero [0-9]+\.[0-9]+" "--version prints a version"
expect_status 64 "unknown subcommand" -- "$TZERO" frobnicate
expect_stderr "unknown subcommand 'frobnicate'" "unknown subcommand is named"
expect_status 64 "no subcommand" -- "$TZERO"
