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
# did-you-mean: the nearest name by Levenshtein edit distance (Levenshtein 1966)
expect_status 64 "misspelt subcommand" -- "$TZERO" stak
expect_stderr "unknown subcommand 'stak'; did you mean 'stack'\?" "misspelt subcommand: nearest suggested"
expect_status 64 "misspelt subcommand after help" -- "$TZERO" help semblence
expect_stderr "did you mean 'semblance'\?" "help SUBCOMMAND: nearest suggested"
expect_status 64 "misspelt option" -- "$TZERO" stack --jbo x.job.json
expect_stderr "unknown option '--jbo'; did you mean '--job'\?" "misspelt option: nearest suggested"
expect_status 64 "far-off option" -- "$TZERO" stack --zzzzzzzz
expect_stderr "unknown option '--zzzzzzzz'$" "far-off option: no suggestion"
expect_status 64 "option missing its value" -- "$TZERO" stack --job
expect_stderr "option '--job' needs a value" "missing value named"
# long options only in full: getopt_long(3) (glibc) would take an unambiguous
# prefix; we refuse it with the full name, and an ambiguous one lists the candidates
expect_status 64 "shortened option refused" -- "$TZERO" stack --stretch 30 --job x.json
expect_stderr "option '--stretch' is shortened; write it in full: '--stretch-limit'" "shortened option: full name given"
expect_status 64 "shortened option with =VALUE refused" -- "$TZERO" stack --job=x.json --stretch=30
expect_stderr "write it in full: '--stretch-limit'" "shortened --opt=VALUE: full name given"
expect_status 64 "shortened option of another subcommand" -- "$TZERO" semblance --supergath 2
expect_stderr "write it in full: '--supergather'" "semblance: shortened option named"
expect_status 64 "ambiguous option prefix" -- "$TZERO" synth --noise-train 3
expect_stderr "option '--noise-train' is ambiguous: it could be --noise-train-amplitude, --noise-train-velocity" "ambiguous prefix: candidates listed"
expect_status 64 "job file given without --job" -- "$TZERO" stack "$TOP/demo/tarrowvane/gw01.job.json"
expect_stderr "a job file is given with --job \(tzero stack --job .*gw01.job.json\)" "stray .json: --job suggested"
# a text file is not SEG-Y: 'l' is 0x6C in ASCII (ANSI X3.4), so bytes 3225-3226
# read 0x6C6C = 27756, outside the codes 1-16 of SEG-Y rev 2.0 (2017) 3225-3226
head -c 4000 /dev/zero | tr '\0' 'l' >"$T/text.sgy"
expect_status 65 "a file that is not SEG-Y" -- "$TZERO" inspect "$T/text.sgy"
expect_stderr "text.sgy: byte 3224: not a SEG-Y file\? the sample format code at byte 3225 is 27756" "not SEG-Y said so"
# a message that says what its status says is not followed by it again
expect_status 66 "missing input" -- "$TZERO" inspect "$T/none.sgy"
expect_stderr "none.sgy: cannot open: No such file" "missing input: no doubled wording"
if grep -q "cannot open (cannot open" "$T/err"; then notok "doubled wording"; else ok "no doubled wording"; fi
# the caution: in full on tzero --help; once, in one line, on every subcommand's page
"$TZERO" --help >"$T/top.txt"
grep -q "licensed practice govern any site work" "$T/top.txt" && ok "tzero --help: caution in full" \
  || notok "tzero --help: full caution missing"
for sub in $(sed -n 's/^  \([a-z]*\) .*/\1/p' "$T/top.txt" | sort -u) "statics refraction" "statics residual"; do
  # shellcheck disable=SC2086
  "$TZERO" $sub --help >"$T/page.txt" 2>&1
  n=$(grep -c "qualified geophysicist" "$T/page.txt")
  l=$(grep -c "govern.* site work" "$T/page.txt")
  if [ "$n" -eq 1 ] && [ "$l" -eq 1 ] && grep -qi "interpretation aid.*qualified geophysicist.*site work" "$T/page.txt"; then
    ok "$sub --help: the caution once, in one line"
  else notok "$sub --help: caution $n times, site work $l"; fi
done
