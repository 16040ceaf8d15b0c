#!/bin/sh
# fuzz.sh -- `make fuzz`: builds the libFuzzer targets of tests/fuzz/ with clang
# (-fsanitize=fuzzer,address,undefined), seeds each from tests/data/fuzz-seeds/
# and from synth output, and runs each for FUZZ_SECONDS (one at a time: the
# machine's cores are shared). Inputs that crash, leak or hang are saved in
# tests/data/fuzz-regress/NAME/ (libFuzzer's crash-*, leak-*, timeout-*, oom-*);
# `make check` replays them from then on. libFuzzer: https://llvm.org/docs/LibFuzzer.html
#
# Environment (set by the Makefile): FUZZ_SECONDS, FUZZ_TARGETS, TZERO,
# PKG_CFLAGS, PKG_LIBS; FUZZ_CC (default clang), FUZZ_FLAGS (extra libFuzzer
# options).
set -u
FUZZ_CC=${FUZZ_CC:-clang}
FUZZ_SECONDS=${FUZZ_SECONDS:-60}
TOP=$(cd "$(dirname "$0")/.." && pwd)
cd "$TOP" || exit 1
FB=build/fuzz-clang

need() {
  echo "make fuzz: $1" >&2
  echo "make fuzz needs clang with libFuzzer and the sanitizer runtimes:" >&2
  echo "  apt-get install clang libclang-rt-dev   (Debian 12: clang libclang-rt-14-dev)" >&2
  exit 69
}
command -v "$FUZZ_CC" >/dev/null 2>&1 || need "$FUZZ_CC not found"
probe=$(mktemp -d "${TMPDIR:-/tmp}/tzero-fuzzprobe.XXXXXX")
printf '#include <stdint.h>\n#include <stddef.h>\nint LLVMFuzzerTestOneInput(const uint8_t *d, size_t n) { (void)d; (void)n; return 0; }\n' \
  >"$probe/p.c"
"$FUZZ_CC" -fsanitize=fuzzer,address,undefined "$probe/p.c" -o "$probe/p" 2>"$probe/err" ||
  { cat "$probe/err" >&2; rm -rf "$probe"; need "$FUZZ_CC cannot link -fsanitize=fuzzer,address,undefined"; }
rm -rf "$probe"

# The library, built by clang with coverage for libFuzzer and both sanitizers.
make --no-print-directory B="$FB" CC="$FUZZ_CC" SANITIZE=address,undefined OPT="-O1 -g" \
  WERROR= CFLAGS="-fsanitize=fuzzer-no-link" "$FB/libtzero.a" >"$FB.log" 2>&1 ||
  { tail -n 30 "$FB.log" >&2; echo "make fuzz: the library did not build with $FUZZ_CC" >&2; exit 70; }

SEEDS=build/fuzz-seeds
scripts/fuzz-seeds.sh "$SEEDS" || { echo "make fuzz: seeds could not be made" >&2; exit 70; }

status=0
for t in $FUZZ_TARGETS; do
  bin="$FB/fuzz_$t"
  "$FUZZ_CC" -D_GNU_SOURCE -Iinclude -Isrc $PKG_CFLAGS -O1 -g -fno-omit-frame-pointer \
    -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=all \
    "tests/fuzz/fuzz_$t.c" "$FB/libtzero.a" $PKG_LIBS -pthread -o "$bin" ||
    { echo "make fuzz: $t did not build" >&2; status=1; continue; }
  corpus="$FB/corpus/$t"
  regress="tests/data/fuzz-regress/$t"
  mkdir -p "$corpus" "$regress"
  case $t in segy | audio) maxlen=262144 ;; *) maxlen=65536 ;; esac
  echo "fuzz $t: ${FUZZ_SECONDS} s (seeds: $(ls "$SEEDS/$t" 2>/dev/null | wc -l), corpus: $(ls "$corpus" | wc -l))"
  before=$(ls "$regress" | wc -l)
  # Corpus first: new inputs are written there; the seed folders are read only.
  "$bin" -max_total_time="$FUZZ_SECONDS" -timeout=20 -rss_limit_mb=2048 -max_len=$maxlen \
    -print_final_stats=1 -artifact_prefix="$regress/" ${FUZZ_FLAGS:-} \
    "$corpus" $(for d in "$SEEDS/$t" "tests/data/fuzz-seeds/$t"; do [ -d "$d" ] && echo "$d"; done) \
    >"$FB/$t.log" 2>&1
  rc=$?
  grep -E '^stat::number_of_executed_units|^stat::peak_rss_mb' "$FB/$t.log" | sed "s/^/  /"
  after=$(ls "$regress" | wc -l)
  if [ "$rc" -ne 0 ] || [ "$after" -ne "$before" ]; then
    echo "fuzz $t: FOUND something (exit $rc); new inputs in $regress/:" >&2
    grep -E 'ERROR: |runtime error|SUMMARY' "$FB/$t.log" | head -n 5 >&2
    status=1
  else
    echo "fuzz $t: nothing found"
  fi
done
exit $status
