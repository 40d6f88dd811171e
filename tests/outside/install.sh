#!/bin/sh
# SPDX-License-Identifier: GPL-3.0-or-later
# The bundle as a DAW would see it: installed, exporting one symbol, listed
# by lilv's lv2ls from the install folder, removed by uninstall.
. "$(dirname "$0")/../lib.sh"

# Only lv2_descriptor is exported (LV2 core: the one symbol a host looks up).
exported=$(nm -D --defined-only "$BUILD/vernier.lv2/vernier.so" |
  awk '$2 ~ /^[TDBRW]$/ {print $3}' | tr '\n' ' ')
if [ "$exported" = "lv2_descriptor " ]; then
  pass "the shared object exports lv2_descriptor only"
else
  fail "the shared object exports lv2_descriptor only" "exports: $exported"
fi

make -s -C "$SRCDIR" install PREFIX="$T/prefix" LV2DIR="$T/lv2" \
  >"$T/install.log" 2>&1
check "make install PREFIX=... LV2DIR=..." test -x "$T/prefix/bin/vernier"
check "man page installed" test -f "$T/prefix/share/man/man1/vernier.1"
listed=$(LV2_PATH="$T/lv2" lv2ls 2>/dev/null | grep -c '^urn:vernier:')
if [ "$listed" -ge 4 ]; then
  pass "lv2ls lists our plugins from LV2DIR"
else
  fail "lv2ls lists our plugins from LV2DIR" "found $listed"
fi
make -s -C "$SRCDIR" install DESTDIR="$T/stage" PREFIX=/usr \
  >>"$T/install.log" 2>&1
check "DESTDIR staging" test -f "$T/stage/usr/lib/lv2/vernier.lv2/manifest.ttl"
make -s -C "$SRCDIR" uninstall PREFIX="$T/prefix" LV2DIR="$T/lv2" \
  >>"$T/install.log" 2>&1
if [ -e "$T/prefix/bin/vernier" ] || [ -e "$T/lv2/vernier.lv2" ]; then
  fail "make uninstall removes host and bundle" "left behind"
else
  pass "make uninstall removes host and bundle"
fi
