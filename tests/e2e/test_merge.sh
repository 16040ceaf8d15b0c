# test_merge.sh -- `tzero merge`: a line stacked in parts and joined equals the whole-line stack.
# The survey is written with segyio by tests/xcheck/test_stack_segyio.py (independent of
# tzero; dead and auxiliary traces included). Checks: the joined section is bitwise equal to
# the whole-line section and the joined report equal to its report except timing and date
# (a consistency check of tzero with itself: each CMP depends on its own traces only, common
# practice of CMP stacking); parts that do not belong together are refused with exit 65
# (BSD sysexits(3): 65 data, 66 no input, 73 cannot create).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
O="$D/out"
mkdir -p "$O"

# report_equal A B DESC: equal except timing_s, throughput and created_utc (Python json)
report_equal() {
  "$PYTHON" - "$1" "$2" <<'PY' >"$T/diff" 2>&1
import json, sys
a, b = (json.load(open(p)) for p in sys.argv[1:3])
for r in (a, b):
    for k in ("timing_s", "throughput", "created_utc"):
        r.pop(k, None)
def diff(x, y, p="$"):
    if type(x) != type(y):
        return [p]
    if isinstance(x, dict):
        return [q for k in sorted(set(x) | set(y)) for q in
                (diff(x[k], y[k], p + "." + k) if k in x and k in y else [p + "." + k])]
    if isinstance(x, list):
        if len(x) != len(y):
            return [p]
        return [q for i, (u, v) in enumerate(zip(x, y)) for q in diff(u, v, "%s[%d]" % (p, i))]
    return [] if x == y else [p]
d = diff(a, b)
print("\n".join(d[:10]))
sys.exit(1 if d else 0)
PY
  if [ $? -eq 0 ]; then ok "$3"; else notok "$3"; sed 's/^/#   /' "$T/diff" | head -n 5; fi
}

# the whole line, for reference (its outputs then move aside, so the joined run writes
# the same paths the whole run wrote)
"$TZERO" stack --job "$J" --interpolation sinc8 --threads 2 --out "$O/line.sgy" \
  --report "$O/line_qc.json" --quiet || notok "whole-line stack"
mv "$O/line.sgy" "$O/whole.sgy"
mv "$O/line_qc.json" "$O/whole_qc.json"
range=$("$PYTHON" -c 'import json,sys; s=json.load(open(sys.argv[1]))["section"]; print(s["cmp_first"], s["cmp_last"])' "$O/whole_qc.json")
set -- $range
first=$1 last=$2

for n in 3 7; do
  # n parts of about equal width; the first starts 3 CMPs before the line, the last ends
  # 2 after it (empty CMPs beyond the ends are allowed); thread counts alternate
  bounds=$("$PYTHON" -c '
import sys
f, l, n = (int(a) for a in sys.argv[1:4])
lo, hi = f - 3, l + 2
cuts = [lo + round(k * (hi - lo + 1) / n) for k in range(n + 1)]
print(" ".join("%d-%d" % (cuts[k], cuts[k + 1] - 1) for k in range(n)))' "$first" "$last" $n)
  k=0
  parts=""
  for r in $bounds; do
    k=$((k + 1))
    "$TZERO" stack --job "$J" --interpolation sinc8 --threads $((k % 2 + 1)) --cmp-range "$r" \
      --out "$O/p${n}_$k.sgy" --report "$O/p${n}_${k}_qc.json" --quiet ||
      notok "part $k of $n ($r)"
    parts="$O/p${n}_${k}_qc.json $parts"     # given in reverse order on purpose
  done
  # shellcheck disable=SC2086
  expect_status 0 "merge of $n parts" -- "$TZERO" merge $parts --out "$O/line.sgy" --report "$O/line_qc.json"
  expect_stdout "joined $n parts: CMPs $first-$last" "merge of $n parts names the line's CMP range"
  if cmp -s "$O/whole.sgy" "$O/line.sgy"; then ok "$n parts joined: section bitwise identical to the whole-line stack"
  else notok "$n parts joined: section differs from the whole-line stack"; fi
  report_equal "$O/whole_qc.json" "$O/line_qc.json" "$n parts joined: report equal to the whole-line report except timing"
  rm -f "$O/line.sgy" "$O/line_qc.json"
done

# --- refusals (parts of the 3-part split: p3_1, p3_2, p3_3)
expect_status 65 "an overlapping part is refused" -- "$TZERO" merge "$O/p3_1_qc.json" \
  "$O/p3_2_qc.json" "$O/p7_3_qc.json" "$O/p3_3_qc.json" --out "$O/x.sgy"
expect_stderr "overlap" "the refusal says the parts overlap"
expect_no_file "$O/x.sgy" "nothing written for overlapping parts"
expect_status 65 "a missing part is refused" -- "$TZERO" merge "$O/p3_1_qc.json" "$O/p3_3_qc.json" \
  --out "$O/x.sgy"
expect_stderr "CMPs [0-9]+-[0-9]+ are in no part" "the refusal names the CMPs in no part"
expect_status 65 "a line end in no part is refused" -- "$TZERO" merge "$O/p3_1_qc.json" \
  "$O/p3_2_qc.json" --out "$O/x.sgy"
expect_stderr "of the line .* are in no part" "the refusal names the line's uncovered end"
expect_status 65 "a whole-line report is not a part" -- "$TZERO" merge "$O/whole_qc.json" --out "$O/x.sgy"
expect_stderr "not a part of a line" "the refusal says it is not a part"
"$TZERO" stack --job "$J" --interpolation linear --cmp-range "$(
  "$PYTHON" -c 'import json,sys; s=json.load(open(sys.argv[1]))["parameters"]["selection"]; print("%d-%d" % (s["cmp_first"], s["cmp_last"]))' "$O/p3_3_qc.json")" \
  --out "$O/lin3.sgy" --report "$O/lin3_qc.json" --quiet
expect_status 65 "a part with other parameters is refused" -- "$TZERO" merge "$O/p3_1_qc.json" \
  "$O/p3_2_qc.json" "$O/lin3_qc.json" --out "$O/x.sgy"
expect_stderr "job differs at \\\$\\.parameters\\.moveout" "the refusal names the parameter that differs"
expect_status 73 "an output over a part is refused" -- "$TZERO" merge "$O/p3_1_qc.json" \
  "$O/p3_2_qc.json" "$O/p3_3_qc.json" --out "$O/p3_2.sgy"
expect_status 66 "a missing report" -- "$TZERO" merge "$O/nothing_qc.json" --out "$O/x.sgy"
echo '{"format": "something-else/2"}' >"$O/other.json"
expect_status 65 "a report of another format" -- "$TZERO" merge "$O/other.json" --out "$O/x.sgy"
# a velocity table revised after the parts were stacked
V=$("$PYTHON" -c 'import json,sys; print(json.load(open(sys.argv[1]))["parameters"]["velocity"])' "$O/p3_1_qc.json")
cp "$V" "$O/velocity.keep"
echo "# revised" >>"$V"
expect_status 65 "a velocity table changed since the parts were stacked" -- "$TZERO" merge \
  "$O/p3_1_qc.json" "$O/p3_2_qc.json" "$O/p3_3_qc.json" --out "$O/x.sgy"
expect_stderr "SHA-256" "the refusal names the velocity digest"
cp "$O/velocity.keep" "$V"
expect_no_file "$O/x.sgy" "nothing written by any refused merge"
expect_status 64 "merge without --out" -- "$TZERO" merge "$O/p3_1_qc.json"
expect_status 0 "merge --json" -- "$TZERO" merge "$O/p3_1_qc.json" "$O/p3_2_qc.json" \
  "$O/p3_3_qc.json" --out "$O/j.sgy" --json
expect_stdout '"parts":[[:space:]]*3' "--json gives the number of parts"
