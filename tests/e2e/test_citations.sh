# test_citations.sh -- tests, sources and docs cite sources a reader can open.
# The team's working notes are not part of the repository; a check cites the
# standard, book, paper or library behind a value instead (docs/references.md).
. "$TOP/tests/e2e/lib.sh"
notes='(REFER''ENCE|DES''IGN|ST''YLE)[.]md'
hits=$(cd "$TOP" && grep -rnE "$notes" tests src include docs README.md 2>/dev/null | head -n 5)
if [ -z "$hits" ]; then ok "no citation of team notes in tests, src, include, docs, README.md"
else notok "citations of team notes (cite the published source instead):"; echo "$hits" | sed 's/^/#   /'; fi
[ -f "$TOP/docs/references.md" ] && ok "docs/references.md exists" || notok "docs/references.md is missing"
