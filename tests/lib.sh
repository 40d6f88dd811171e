# SPDX-License-Identifier: GPL-3.0-or-later
# Shared by the shell test suites (tests/host/*.sh, tests/outside/*.sh).
# Source it after setting BUILD (the build folder, default build).
#
#   pass NAME            record a passed check
#   fail NAME WHY        record a failed check (and print why)
#   skip NAME WHY        record a skipped check (and print why)
#   check NAME CMD...    pass if CMD exits 0, else fail
#   run_vernier ARGS...  run the sanitized host; sets RC, stdout in $T/out,
#                        stderr in $T/err
#   expect_rc NAME CODE  after run_vernier: pass if RC == CODE
#   expect_err NAME TEXT after run_vernier: pass if stderr contains TEXT
#
# Results go to $VERNIER_TEST_RESULTS (one "pass|fail|skip NAME" a line),
# which tests/run.sh counts. $T is a scratch folder removed at exit.

set -u
BUILD=${BUILD:-build}
BUILD=$(cd "$BUILD" && pwd)
PY=${PYTHON:-/usr/bin/python3} # Debian's python3, with numpy and scipy
SRCDIR=$(cd "$(dirname "$0")/../.." && pwd)
: "${VERNIER_TEST_RESULTS:=/dev/null}"

# The hosts under test, and the only place lilv may look for plugins.
VERNIER="$BUILD/asan/vernier"
VERNIER_PLAIN="$BUILD/vernier"
LV2_ASAN="$BUILD/asan/lv2:$BUILD/test-bundles"
LV2_PLAIN="$BUILD/lv2:$BUILD/test-bundles"
# VERNIER_VALGRIND=DIR (tests/valgrind.sh sets it): the plain host runs
# under valgrind memcheck instead, through DIR/vernier, a wrapper that logs
# each run to DIR/logs/; the runner counts the errors there, since not every
# check looks at the exit code. VERNIER_PLAIN (the outside suites' host) goes
# through it too. A plain host cannot load the sanitized bundle, so LV2_ASAN
# points at the plain one.
if [ -n "${VERNIER_VALGRIND:-}" ]; then
  VERNIER="$VERNIER_VALGRIND/vernier"
  VERNIER_PLAIN="$VERNIER"
  LV2_ASAN="$LV2_PLAIN"
fi
export LV2_PATH="$LV2_ASAN"
export ASAN_OPTIONS="${ASAN_OPTIONS:-detect_leaks=1:abort_on_error=0:exitcode=99}"
export UBSAN_OPTIONS="${UBSAN_OPTIONS:-print_stacktrace=1:halt_on_error=1:exitcode=98}"
export LSAN_OPTIONS="${LSAN_OPTIONS:-suppressions=$SRCDIR/tests/lsan.supp:print_suppressions=0}"

T=$(mktemp -d "${TMPDIR:-/tmp}/vernier-test.XXXXXX")
trap 'rm -rf "$T"' EXIT
SUITE=$(basename "$0" .sh)

pass() {
  echo "pass $SUITE/$1" >>"$VERNIER_TEST_RESULTS"
  echo "  ok    $1"
}
fail() {
  echo "fail $SUITE/$1" >>"$VERNIER_TEST_RESULTS"
  echo "  FAIL  $1: $2"
}
skip() {
  echo "skip $SUITE/$1" >>"$VERNIER_TEST_RESULTS"
  echo "  skip  $1: $2"
}
check() {
  name=$1
  shift
  if "$@" >"$T/check.log" 2>&1; then
    pass "$name"
  else
    fail "$name" "$(tail -n 5 "$T/check.log" | tr '\n' ' ')"
  fi
}
run_vernier() {
  "$VERNIER" "$@" >"$T/out" 2>"$T/err" </dev/null
  RC=$?
}
expect_rc() {
  if [ "$RC" -eq "$2" ]; then
    pass "$1"
  else
    fail "$1" "exit $RC, expected $2; stderr: $(head -c 400 "$T/err" | tr '\n' ' ')"
  fi
}
expect_err() {
  if grep -qF -- "$2" "$T/err"; then
    pass "$1"
  else
    fail "$1" "stderr lacks '$2': $(head -c 400 "$T/err" | tr '\n' ' ')"
  fi
}
