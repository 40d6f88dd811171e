# SPDX-License-Identifier: GPL-3.0-or-later
# The libFuzzer targets of tests/fuzz (built by `make check-run` into
# build/fuzz with clang, ASan and UBSan): each replays its committed corpus
# and every input of tests/fuzz/regressions/<target>/ (inputs that once
# failed), then fuzzes for a bounded time from that corpus. A crash, a
# sanitizer report, a leak, a failed assertion or a time-out fails.
#
#   VERNIER_FUZZ_SECONDS  seconds of fuzzing per target (default 20)
#
# New inputs stay in a scratch folder; what fails is copied to
# build/fuzz/artifacts/ (add it to tests/fuzz/regressions/<target>/ once the
# fault is fixed). The figures ("N executions in S s") go to
# build/fuzz/stats.txt as well.
. "$(dirname "$0")/../lib.sh"

# The targets are sanitizer builds: nothing for valgrind to add.
if [ -n "${VERNIER_VALGRIND:-}" ]; then
  skip "fuzz targets" "sanitizer builds, not run under valgrind"
  exit 0
fi

SECONDS_EACH=${VERNIER_FUZZ_SECONDS:-20}
FUZZ=$BUILD/fuzz
ART=$FUZZ/artifacts
STATS=$FUZZ/stats.txt
# The plugins' descriptions and presets only (nothing is instantiated).
export LV2_PATH="$BUILD/lv2"
export ASAN_OPTIONS="detect_leaks=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
export LSAN_OPTIONS="suppressions=$SRCDIR/tests/fuzz/lsan.supp:print_suppressions=0"
# Common libFuzzer limits; -close_fd_mask=3 silences the targets' own
# stdout and stderr (the host's messages), not libFuzzer's report.
LIMITS="-timeout=10 -rss_limit_mb=1024 -close_fd_mask=3"

mkdir -p "$ART"
: >"$STATS"

for t in steps preset dsp; do
  bin=$FUZZ/fuzz_$t
  if [ ! -x "$bin" ]; then
    fail "$t: built" "missing $bin: make check-run builds it (make $bin)"
    continue
  fi
  corpus=$SRCDIR/tests/fuzz/corpus/$t
  n_corpus=$(ls "$corpus" | wc -l)

  # Replay: each regression input by name, then the corpus in one run.
  for f in "$SRCDIR"/tests/fuzz/regressions/$t/*; do
    [ -f "$f" ] || continue
    # shellcheck disable=SC2086
    check "$t: regression $(basename "$f")" "$bin" $LIMITS "$f"
  done
  # shellcheck disable=SC2086
  check "$t: replay of the corpus ($n_corpus inputs)" "$bin" $LIMITS "$corpus"/*

  # Fuzzing from the corpus; new inputs go to the scratch folder first.
  work=$T/work-$t
  mkdir -p "$work" "$T/art-$t"
  # shellcheck disable=SC2086
  "$bin" $LIMITS -max_total_time="$SECONDS_EACH" -print_final_stats=1 \
    -artifact_prefix="$T/art-$t/" "$work" "$corpus" >"$T/fuzz-$t.log" 2>&1
  rc=$?
  # libFuzzer's last words: "Done 172309 runs in 21 second(s)".
  runs=$(sed -n 's/^Done \([0-9]*\) runs in \([0-9]*\) second.*/\1/p' "$T/fuzz-$t.log")
  secs=$(sed -n 's/^Done \([0-9]*\) runs in \([0-9]*\) second.*/\2/p' "$T/fuzz-$t.log")
  found=$(ls "$T/art-$t" | wc -l)
  echo "  fuzz_$t: ${runs:-?} executions in ${secs:-?} s, corpus $n_corpus" \
    "committed + $(ls "$work" | wc -l) new, $found failing"
  echo "fuzz_$t ${runs:-0} executions ${secs:-0} s" >>"$STATS"
  if [ "$rc" -eq 0 ] && [ -n "$runs" ] && [ "$found" -eq 0 ]; then
    pass "$t: $SECONDS_EACH s of fuzzing, no fault"
  else
    cp "$T/art-$t"/* "$ART/" 2>/dev/null
    fail "$t: $SECONDS_EACH s of fuzzing, no fault" \
      "exit $rc; inputs in $ART: $(ls "$T/art-$t" | tr '\n' ' ')$(grep -m1 -E \
        'ERROR|fuzz_dsp:|fuzz_steps:|Assertion' "$T/fuzz-$t.log")"
  fi
done
