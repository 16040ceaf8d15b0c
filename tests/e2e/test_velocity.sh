# test_velocity.sh -- `tzero velocity check|intervals|at` end to end.
# Expected numbers: Dix (1955) worked examples, computed (check value 15 of docs/references.md: 3278.72 m/s,
# 1819.68 m) and #16 (imaginary); interpolation rules of docs/velocity-table.md worked by hand.
# Exit codes from <sysexits.h>: 65 data error, 64 usage, 66 no input, 73 cannot create.
. "$TOP/tests/e2e/lib.sh"

cat >"$T/v.csv" <<'EOF'
# Brackenmoor test line (invented)
cmp,time_ms,velocity_mps
120,1000,2000
120,1500,2500
240,1000,2500
240,1200,2000
EOF

expect_status 0 "check a valid table with warnings" -- "$TZERO" velocity check "$T/v.csv"
expect_stdout "3278\.7" "check prints the Dix interval velocity of §4 #15"
expect_stdout "1819\.7" "check prints the depth of §4 #15 (1819.68 m)"
expect_stdout "warning: .*line 6: .*imaginary" "check warns about the imaginary interval of §4 #16 with its line"
expect_stdout "inverts" "check warns about the RMS inversion"

expect_status 0 "check --json" -- "$TZERO" velocity check --json "$T/v.csv"
if "$PYTHON" - "$T/out" <<'EOF'
import json, sys
d = json.load(open(sys.argv[1]))
kinds = sorted(w["kind"] for w in d["warnings"])
iv = d["cmps"][0]["intervals"][1]
ok = d["control_cmps"] == 2 and "imaginary" in kinds and abs(iv["interval_velocity_mps"] - 3278.719) < 1e-2
ok = ok and d["cmps"][1]["intervals"][1]["interval_velocity_mps"] is None
sys.exit(0 if ok else 1)
EOF
then ok "check --json carries intervals and warnings as data"; else notok "check --json content"; fi

expect_status 0 "intervals to stdout" -- "$TZERO" velocity intervals "$T/v.csv"
expect_stdout "^120,1000,1500,2500\.00,3278\.72,1000\.00,1819\.68,0$" "intervals row of §4 #15"
expect_stdout "^240,1000,1200,2000\.00,,1250\.00,,1$" "imaginary interval has an empty velocity and the flag"
expect_status 0 "intervals --out" -- "$TZERO" velocity intervals "$T/v.csv" --out "$T/iv.csv"
if grep -q '^cmp,time_top_ms' "$T/iv.csv"; then ok "intervals --out wrote the file"; else notok "intervals --out"; fi

# at: CMP 180 is halfway between 120 and 240. At 1250 ms: f120 = 2250, f240 = 2000 (held
# after its last knot) -> 2125. At 0 ms both are held at the first knot: 2250.
expect_status 0 "at --cmp 180" -- "$TZERO" velocity at "$T/v.csv" --cmp 180 --dt-ms 250
expect_stdout "^1250,2125\.000$" "at interpolates in CMP at equal time"
expect_stdout "^0,2250\.000$" "at holds the first knot before it"
expect_status 0 "at --json" -- "$TZERO" velocity at "$T/v.csv" --cmp 100 --dt-ms 500 --length-ms 1000 --json
expect_stdout '"samples":[[:space:]]*3' "at --json reports the sample count"

# Invalid tables: each gives its message with the line number and exit 65.
bad() { # name expected-pattern  (table text on stdin)
  cat >"$T/$1.csv"
  expect_status 65 "invalid table: $1" -- "$TZERO" velocity check "$T/$1.csv"
  expect_stderr "$2" "$1: message names the file and line"
}
printf '120,0,1500\n' | bad missing_header "missing_header.csv: line 1: missing header"
printf 'cmp,time_ms,speed_mps\n120,0,1500\n' | bad unknown_column "line 1: unknown column 'speed_mps'"
printf 'cmp,time_ms,velocity_mps\n120,0,1500\n120,500,1800\n120,400,1900\n' | bad non_increasing "line 4: .*not after the previous"
printf 'cmp,time_ms,velocity_mps\n120,0,1500\n120,500,0\n' | bad non_positive "line 3: .*must be positive"
printf 'cmp,time_ms,velocity_mps\n120,0,1500\n120,0,1500\n' | bad duplicate "line 3: .*duplicate row"
printf 'cmp,time_ms,velocity_mps\n120,0,quick\n' | bad non_numeric "line 2: column velocity_mps: expected a number"
printf 'cmp,time_ms,velocity_mps\n120,0,1500\n240,0,1500\n120,800,2000\n' | bad regrouped "line 4: cmp 120 reappears"
printf '# nothing\n' | bad empty "empty velocity table"
printf 'cmp,time_ms,velocity_mps\n' | bad header_only "no rows"

expect_status 66 "missing file" -- "$TZERO" velocity check "$T/nonexistent.csv"
expect_status 64 "at without --cmp" -- "$TZERO" velocity at "$T/v.csv"
expect_status 64 "unknown action" -- "$TZERO" velocity frobnicate "$T/v.csv"
expect_status 64 "bad --dt-ms" -- "$TZERO" velocity at "$T/v.csv" --cmp 1 --dt-ms -4
expect_status 73 "--out below a file, not a folder" -- "$TZERO" velocity intervals "$T/v.csv" \
  --out "$T/v.csv/x.csv"
expect_no_file "$T/v.csv/x.csv" "no output after a failed create"
expect_status 65 "intervals of an invalid table" -- "$TZERO" velocity intervals "$T/duplicate.csv" --out "$T/dup_iv.csv"
expect_no_file "$T/dup_iv.csv" "no half-written output for an invalid table"
expect_status 0 "--help" -- "$TZERO" velocity --help
expect_stdout "qualified" "--help carries the caution (project rule)"
expect_stdout "ms" "--help gives units"
