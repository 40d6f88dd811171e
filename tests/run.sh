#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# Runs every test: the cmocka unit tests given as arguments, then each shell
# suite in tests/host, tests/outside and tests/rt (or only the suites named
# in VERNIER_SUITES, as "outside/ardour host/process"). Ends with one line
# of totals and exits non-zero when anything failed.
set -u
BUILD=${BUILD:-build}
export BUILD
VERNIER_TEST_RESULTS=$(mktemp)
export VERNIER_TEST_RESULTS
trap 'rm -f "$VERNIER_TEST_RESULTS"' EXIT
status=0

for t in "$@"; do
  echo "== unit: $(basename "$t")"
  log=$(mktemp)
  ASAN_OPTIONS=detect_leaks=1 "$t" >"$log" 2>&1
  rc=$?
  cat "$log"
  passed=$(sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' "$log")
  failed=$(sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' "$log")
  i=0
  while [ "$i" -lt "${passed:-0}" ]; do
    echo "pass unit" >>"$VERNIER_TEST_RESULTS"
    i=$((i + 1))
  done
  i=0
  while [ "$i" -lt "${failed:-0}" ]; do
    echo "fail unit" >>"$VERNIER_TEST_RESULTS"
    i=$((i + 1))
  done
  if [ "$rc" -ne 0 ] && [ -z "$failed" ]; then
    echo "fail unit/$(basename "$t") exit $rc" >>"$VERNIER_TEST_RESULTS"
  fi
  rm -f "$log"
done

suites="tests/host/*.sh tests/outside/*.sh tests/rt/*.sh"
if [ -n "${VERNIER_SUITES:-}" ]; then
  suites=$(for n in $VERNIER_SUITES; do echo "tests/$n.sh"; done)
fi
for s in $suites; do
  if [ ! -f "$s" ]; then
    [ -z "${VERNIER_SUITES:-}" ] || echo "fail $s: no such suite" >>"$VERNIER_TEST_RESULTS"
    continue
  fi
  echo "== $(basename "$(dirname "$s")"): $(basename "$s" .sh)"
  sh "$s" || echo "fail $s: the suite itself exited non-zero" >>"$VERNIER_TEST_RESULTS"
done

p=$(grep -c '^pass' "$VERNIER_TEST_RESULTS")
f=$(grep -c '^fail' "$VERNIER_TEST_RESULTS")
k=$(grep -c '^skip' "$VERNIER_TEST_RESULTS")
if [ "$f" -gt 0 ]; then
  echo "failed checks:"
  grep '^fail' "$VERNIER_TEST_RESULTS" | sed 's/^fail /  /'
fi
echo "total: $p passed, $f failed, $k skipped"
[ "$f" -eq 0 ] && [ "$p" -gt 0 ] && [ "$status" -eq 0 ]
