#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The real-time safety host (tests/rt/rt_host.c) over every plugin of the
# plain bundle: each "ok NAME" / "FAIL NAME" line it prints is one check.
# Not under ASan, which replaces malloc itself: the host counts malloc,
# mutex and system calls inside run() with its own interposed functions.
# VERNIER_RT_SEED and VERNIER_RT_SEEDS choose the sessions' seeds.
. "$(dirname "$0")/../lib.sh"

bin="$BUILD/rt/rt_host"
if [ ! -x "$bin" ]; then
  fail rt_host "$bin is missing: make $BUILD/rt/rt_host"
  exit 0
fi
"$bin" "$BUILD/vernier.lv2" >"$T/rt.log" 2>&1
rc=$?
cat "$T/rt.log"
sed -n 's/^ok \([a-z-]*\).*/\1/p' "$T/rt.log" >"$T/ok"
sed -n 's/^FAIL \([a-z-]*\): \(.*\)/\1 \2/p' "$T/rt.log" >"$T/failed"
while read -r name; do pass "$name"; done <"$T/ok"
while read -r name why; do fail "$name" "$why"; done <"$T/failed"
if [ "$rc" -ne 0 ] && [ ! -s "$T/failed" ]; then
  fail rt_host "exit $rc with no failed check named"
fi
if [ ! -s "$T/ok" ] && [ ! -s "$T/failed" ]; then
  fail rt_host "no check ran"
fi
