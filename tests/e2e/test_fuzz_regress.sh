# test_fuzz_regress.sh -- replays, without libFuzzer, every input that once
# crashed a fuzz target (tests/data/fuzz-regress/NAME/) and the committed seeds
# (tests/data/fuzz-seeds/NAME/), through the target's own entry point linked
# with tests/fuzz/replay.c: a fixed crash stays fixed. Under `make sanitize`
# the replay runs with ASan and UBSan, as the fuzzing did. Consistency check.
. "$TOP/tests/e2e/lib.sh"
BDIR=$(dirname "$TZERO")
n=0
for src in "$TOP"/tests/fuzz/fuzz_*.c; do
  name=$(basename "$src" .c)
  name=${name#fuzz_}
  bin="$BDIR/fuzz/replay_$name"
  if [ ! -x "$bin" ]; then notok "replay driver for $name is built"; continue; fi
  (cd "$T" && "$bin" "$TOP/tests/data/fuzz-regress/$name" "$TOP/tests/data/fuzz-seeds/$name") \
    >"$T/replay.out" 2>"$T/replay.err"
  rc=$?
  k=$(grep -c '^ok - ' "$T/replay.out")
  if [ "$rc" -eq 0 ]; then ok "$name: $k saved inputs replayed without a fault"; else
    notok "$name: replay failed (exit $rc)"; tail -n 15 "$T/replay.err" | sed 's/^/#   /'; fi
  n=$((n + 1))
done
[ "$n" -ge 9 ] && ok "every parser has a fuzz target ($n)" || notok "only $n fuzz targets"
