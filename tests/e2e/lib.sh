# lib.sh -- helpers for end-to-end scripts (sourced). Prints TAP-style lines.
# $TZERO is the binary under test; $WORK a scratch folder removed afterwards.
set -u
: "${TZERO:?}" "${WORK:?}"
T=$(mktemp -d "$WORK/e2e.XXXXXX")
# a fixed date for the textual headers and histories (reproducible-builds convention),
# so that outputs of two runs compare equal whatever the clock says
: "${SOURCE_DATE_EPOCH:=1767225600}"
export SOURCE_DATE_EPOCH
ok() { echo "ok - $*"; }
notok() { echo "not ok - $*"; }
# expect_status CODE DESC -- cmd...   runs cmd, checks its exit status
expect_status() {
  want=$1; desc=$2; shift 3
  "$@" >"$T/out" 2>"$T/err"
  got=$?
  if [ "$got" -eq "$want" ]; then ok "$desc (exit $got)"; else
    notok "$desc: exit $got, expected $want"; sed 's/^/#   /' "$T/err" | head -n 5; fi
}
# expect_stderr PATTERN DESC   checks the last command's stderr (grep -E)
expect_stderr() {
  if grep -Eq "$1" "$T/err"; then ok "$2"; else
    notok "$2: stderr lacks /$1/"; sed 's/^/#   /' "$T/err" | head -n 5; fi
}
expect_stdout() {
  if grep -Eq "$1" "$T/out"; then ok "$2"; else
    notok "$2: stdout lacks /$1/"; sed 's/^/#   /' "$T/out" | head -n 5; fi
}
expect_no_file() {
  if [ -e "$1" ]; then notok "$2: $1 exists"; else ok "$2"; fi
}
