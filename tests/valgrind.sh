#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# `make check-valgrind`: the suite once more under valgrind memcheck, beside
# the ASan/UBSan run of `make check`. Arguments: the cmocka tests built
# without sanitizers ($BUILD/plain-tests/test_*). Each runs under valgrind;
# then shell suites run with VERNIER_VALGRIND set, which makes tests/lib.sh
# run the plain host ($BUILD/vernier, plain bundle) through the wrapper
# written below. Every valgrind run logs to $BUILD/valgrind/logs/; a run with
# any error (exit 97, or "ERROR SUMMARY" above 0 in its log, which also
# catches runs whose exit code no check looks at) is a failure.
#
# Which suites: all of them (VALGRIND_FULL=1, make check-valgrind-full) took
# 26.5 min on the 2-core CI machine (595 valgrind runs), too long for every CI
# run. The default (make check-valgrind, in .ci/run) is the unit tests and the
# subset in VALGRIND_SUITES, a few minutes, chosen so that every plugin and
# every sub-command but demo still runs under valgrind (demo's measure and
# process paths run in host/measure_plugins; its own run under valgrind takes
# 2-4 min alone, left to the full run): host/broken_bundles (list,
# describe, process and their error paths), host/process (process: formats,
# channels, chains, options), host/measure_plugins (measure against the
# polarity, rotate, all-pass and delay plugins), outside/lv2 (process with
# gain, polarity, rotate, all-pass and delay, mono and stereo) and
# outside/strip (describe and process with the strip). Left to the full run:
# the option and error suites, which repeat the same code paths on bad
# input, and the long reference comparisons. Ends like tests/run.sh:
# "total: N passed, N failed, N skipped", non-zero when anything failed.
set -u
BUILD=${BUILD:-build}
export BUILD
BUILD_ABS=$(cd "$BUILD" && pwd)
SRCDIR=$(cd "$(dirname "$0")/.." && pwd)
VG=$BUILD_ABS/valgrind
LOGS=$VG/logs

: "${VALGRIND_SUITES:=host/broken_bundles host/process host/measure_plugins \
outside/lv2 outside/strip}"

# --errors-for-leak-kinds=definite: a block lilv, serd or FFTW keep until
# exit ("still reachable") is not an error; a block nothing points to is.
VALGRIND="valgrind --error-exitcode=97 --leak-check=full \
--errors-for-leak-kinds=definite --show-leak-kinds=definite --num-callers=30"
if [ -f "$SRCDIR/tests/valgrind.supp" ]; then
  VALGRIND="$VALGRIND --suppressions=$SRCDIR/tests/valgrind.supp"
fi

rm -rf "$VG"
mkdir -p "$LOGS"
chmod 1777 "$LOGS" # the suites also run the host as user nobody
cat >"$VG/vernier" <<EOF
#!/bin/sh
# Written by tests/valgrind.sh: the plain host under valgrind memcheck.
exec $VALGRIND --log-file=$LOGS/vernier.%p.log "$BUILD_ABS/vernier" "\$@"
EOF
chmod 755 "$VG/vernier"

VERNIER_TEST_RESULTS=$(mktemp)
export VERNIER_TEST_RESULTS
trap 'rm -f "$VERNIER_TEST_RESULTS"' EXIT
started=$(date +%s)

for t in "$@"; do
  name=$(basename "$t")
  echo "== valgrind unit: $name"
  log=$(mktemp)
  $VALGRIND --log-file="$LOGS/unit.$name.log" "$t" >"$log" 2>&1
  rc=$?
  cat "$log"
  passed=$(sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' "$log")
  failed=$(sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' "$log")
  rm -f "$log"
  if [ "$rc" -eq 0 ] && [ -n "$passed" ] && [ -z "$failed" ]; then
    echo "pass valgrind-unit/$name ($passed tests)" >>"$VERNIER_TEST_RESULTS"
  else
    echo "fail valgrind-unit/$name: exit $rc, ${failed:-0} failed" \
      >>"$VERNIER_TEST_RESULTS"
  fi
done

if [ -n "${VALGRIND_FULL:-}" ]; then
  suites=$(cd "$SRCDIR/tests" && ls host/*.sh outside/*.sh | sed 's/\.sh$//')
else
  suites=$VALGRIND_SUITES
fi
for s in $suites; do
  echo "== valgrind $s"
  t0=$(date +%s)
  VERNIER_VALGRIND=$VG sh "$SRCDIR/tests/$s.sh" ||
    echo "fail $s: the suite itself exited non-zero" >>"$VERNIER_TEST_RESULTS"
  echo "   ($s: $(($(date +%s) - t0)) s)"
done

# Every log: a run with errors is a failure, named by its log file.
runs=0
bad=0
for f in "$LOGS"/*.log; do
  [ -f "$f" ] || continue
  runs=$((runs + 1))
  n=$(sed -n 's/.*ERROR SUMMARY: \([0-9]*\) errors.*/\1/p' "$f" | tail -n 1)
  if [ "${n:-0}" -gt 0 ]; then
    bad=$((bad + 1))
    echo "fail valgrind-log/$(basename "$f"): $n errors" >>"$VERNIER_TEST_RESULTS"
    echo "---- $f"
    head -n 60 "$f"
  fi
done
echo "valgrind: $runs runs, $bad with errors, $(($(date +%s) - started)) s; logs in $LOGS"
[ "$runs" -gt 0 ] && echo "pass valgrind-logs ($runs runs)" >>"$VERNIER_TEST_RESULTS"

p=$(grep -c '^pass' "$VERNIER_TEST_RESULTS")
f=$(grep -c '^fail' "$VERNIER_TEST_RESULTS")
k=$(grep -c '^skip' "$VERNIER_TEST_RESULTS")
if [ "$f" -gt 0 ]; then
  echo "failed checks:"
  grep '^fail' "$VERNIER_TEST_RESULTS" | sed 's/^fail /  /'
fi
echo "total: $p passed, $f failed, $k skipped"
[ "$f" -eq 0 ] && [ "$p" -gt 0 ]
